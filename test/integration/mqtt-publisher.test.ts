/**
 * MqttPublisher against a real mosquitto. Topics, QoS and retain flags, and the
 * payload fields are the output contract of shared/ARCHITECTURE.md ("Outputs").
 */
import mqtt, { type IPublishPacket, type MqttClient } from 'mqtt';
import { afterEach, describe, expect, test } from 'vitest';
import type { AlarmTransition, DisturbanceEvent } from '../../agent/core/detect/types.js';
import { resultToWire, type SequenceResult } from '../../agent/core/result.js';
import { MqttPublisher } from '../../agent/publish/mqtt-publisher.js';
import { MqttSource } from '../../agent/sources/mqtt/mqtt-source.js';
import { waitFor } from '../helpers/free-port.js';
import { Mosquitto, mosquittoAvailable } from '../helpers/mosquitto.js';
import { PipelineSink } from '../helpers/mqtt-pipeline.js';
import { FrameCollector } from '../helpers/mqtt-test-sink.js';
import { Teardown } from '../helpers/teardown.js';

interface Received {
  topic: string;
  text: string;
  retain: boolean;
  qos: number;
}

async function subscriber(url: string, filter: string, td: Teardown, extra: mqtt.IClientOptions = {}): Promise<{ client: MqttClient; got: Received[] }> {
  const client = await mqtt.connectAsync(url, { reconnectPeriod: 50, clientId: `test-sub-${Math.random().toString(16).slice(2, 10)}`, ...extra });
  td.add(() => client.endAsync(true));
  const got: Received[] = [];
  client.on('message', (topic, payload, packet: IPublishPacket) => got.push({ topic, text: payload.toString('utf8'), retain: packet.retain, qos: packet.qos }));
  await client.subscribeAsync(filter, { qos: 1 });
  return { client, got };
}

/** A real result: one phasor frame through the Pipeline (input example of shared/ARCHITECTURE.md). */
function computedResult(feeder = 'F1'): SequenceResult {
  const sink = new PipelineSink();
  sink.push({
    feeder,
    kind: 'phasor',
    origin: 'test',
    payload: JSON.stringify({
      ts: '2026-03-02T14:03:07.250Z',
      freq: 59.98,
      v: { a: [7212.4, 0.0], b: [7190.1, -120.4], c: [7168.8, 119.7] },
      i: { a: [212.0, -24.8], b: [205.3, -146.1], c: [198.6, 95.0] },
    }),
  });
  expect(sink.out.rejections).toEqual([]);
  return sink.out.results[0]!;
}

function alarm(condition: AlarmTransition['condition'], state: AlarmTransition['state'], ts: number): AlarmTransition {
  return {
    ts,
    feeder: 'F1',
    condition,
    state,
    level: 'alarm',
    value: condition === 'open-phase' ? 0.98 : 3.4,
    limit: condition === 'open-phase' ? 0.5 : 3,
    phase: condition === 'open-phase' ? 'c' : null,
    message: `${condition} ${state} (fictional test feeder)`,
  };
}

const EVENT: DisturbanceEvent = {
  ts: Date.UTC(2026, 2, 2, 14, 3, 7, 250),
  feeder: 'F1',
  type: 'CG',
  durationMs: 83.3,
  peakCurrent: 2140.5,
  peakPhase: 'c',
  i0OverI1: 0.92,
  i2OverI1: 0.97,
  message: 'single line-to-ground fault on phase c (fictional test feeder)',
};

describe.skipIf(!mosquittoAvailable())('MqttPublisher with a real mosquitto', () => {
  const td = new Teardown();
  afterEach(() => td.run());

  async function broker(persistence = false): Promise<Mosquitto> {
    const b = await Mosquitto.start({ persistence });
    td.add(() => b.dispose());
    return b;
  }

  function ownPublisher(url: string, extra: Partial<ConstructorParameters<typeof MqttPublisher>[0]> = {}): MqttPublisher {
    const pub = new MqttPublisher({ connection: { url, reconnect: { minMs: 50, maxMs: 200 } }, closeTimeoutMs: 1_000, ...extra });
    td.add(() => pub.destroy());
    return pub;
  }

  test('sequence messages carry resultToWire JSON on <out>/<feeder>/sequence, QoS 1 by default, not retained', async () => {
    const b = await broker();
    const { got } = await subscriber(b.url, 'seqmon/out/#', td);
    const pub = ownPublisher(b.url);
    const result = computedResult();
    pub.publishResult(result);
    await waitFor(() => got.length === 1, 5_000);
    expect(got[0]).toMatchObject({ topic: 'seqmon/out/F1/sequence', retain: false, qos: 1 });
    const wire = JSON.parse(got[0]!.text) as Record<string, unknown>;
    expect(wire).toEqual(JSON.parse(JSON.stringify(resultToWire(result))));
    // Contract fields (shared/ARCHITECTURE.md, "Outputs"): present, never renamed.
    expect(Object.keys(wire)).toEqual(expect.arrayContaining(['ts', 'feeder', 'window', 'freq', 'flagged', 'v', 'i']));
    expect(Object.keys(wire.v as object)).toEqual(expect.arrayContaining(['zero', 'pos', 'neg', 'u2', 'u0']));
    expect(wire.ts).toBe('2026-03-02T14:03:07.250Z');
  });

  test('alarm transitions are retained at QoS 1, so a late subscriber gets the last state of each condition', async () => {
    const b = await broker();
    const pub = ownPublisher(b.url, { outPrefix: 'site7/out' });
    const t0 = Date.UTC(2026, 2, 2, 14, 0, 0);
    const last = [alarm('open-phase', 'raised', t0 + 2_000), alarm('voltage-unbalance', 'cleared', t0 + 61_000)];
    pub.publishAlarm(alarm('voltage-unbalance', 'raised', t0));
    pub.publishAlarm(last[0]!);
    pub.publishAlarm(last[1]!);
    await waitFor(() => pub.waiting() === 0 && pub.counters().delivered === 3, 5_000);

    const { got } = await subscriber(b.url, 'site7/out/+/alarm/#', td);
    await waitFor(() => got.length === 2, 5_000);
    const byTopic = new Map(got.map((g) => [g.topic, g]));
    const open = byTopic.get('site7/out/F1/alarm/open-phase')!;
    const vu = byTopic.get('site7/out/F1/alarm/voltage-unbalance')!;
    expect([open.retain, open.qos, vu.retain, vu.qos]).toEqual([true, 1, true, 1]);
    expect(JSON.parse(open.text)).toEqual({
      ts: '2026-03-02T14:00:02.000Z',
      feeder: 'F1',
      condition: 'open-phase',
      state: 'raised',
      level: 'alarm',
      value: 0.98,
      limit: 0.5,
      phase: 'c',
      message: 'open-phase raised (fictional test feeder)',
    });
    expect(JSON.parse(vu.text)).toMatchObject({ condition: 'voltage-unbalance', state: 'cleared', ts: '2026-03-02T14:01:01.000Z' });
  });

  test('events go to <out>/<feeder>/event at QoS 1, not retained, with exactly the contract fields', async () => {
    const b = await broker();
    const { got } = await subscriber(b.url, 'seqmon/out/+/event', td);
    const pub = ownPublisher(b.url);
    pub.publishEvent(EVENT);
    await waitFor(() => got.length === 1, 5_000);
    expect(got[0]).toMatchObject({ topic: 'seqmon/out/F1/event', retain: false, qos: 1 });
    expect(JSON.parse(got[0]!.text)).toEqual({
      ts: '2026-03-02T14:03:07.250Z',
      feeder: 'F1',
      type: 'CG',
      durationMs: 83.3,
      peakCurrent: 2140.5,
      peakPhase: 'c',
      i0OverI1: 0.92,
      i2OverI1: 0.97,
      message: 'single line-to-ground fault on phase c (fictional test feeder)',
    });
  });

  test('results and alarms computed while the broker is down are delivered once it is back', async () => {
    const b = await broker(true);
    // A persistent session on a broker with persistence: the subscriber's subscription survives the restart.
    const { got } = await subscriber(b.url, 'seqmon/out/#', td, { clean: false, clientId: 'seqmon-test-listener' });
    const pub = ownPublisher(b.url);
    await waitFor(() => pub.client.connected, 5_000);
    await b.stop();
    await waitFor(() => !pub.client.connected, 5_000);
    const base = computedResult();
    for (let n = 0; n < 20; n++) pub.publishResult({ ...base, ts: base.ts + 20 * n });
    pub.publishAlarm(alarm('current-unbalance', 'raised', base.ts));
    expect(pub.waiting()).toBe(21);
    await b.restart();
    await waitFor(() => got.length === 21, 10_000);
    const seqTs = got.filter((g) => g.topic.endsWith('/sequence')).map((g) => Date.parse((JSON.parse(g.text) as { ts: string }).ts));
    expect(seqTs).toEqual(Array.from({ length: 20 }, (_, n) => base.ts + 20 * n));
    expect(got.filter((g) => g.topic === 'seqmon/out/F1/alarm/current-unbalance')).toHaveLength(1);
    expect(pub.counters().dropped).toEqual({ sequence: 0, alarm: 0, event: 0 });
  });

  test('while the broker is away, sequence messages beyond maxQueued are dropped and counted; alarms still queue', async () => {
    const b = await broker();
    const pub = ownPublisher(b.url, { maxQueued: 5, maxQueuedAlarmsEvents: 5 });
    await waitFor(() => pub.client.connected, 5_000);
    await b.stop();
    await waitFor(() => !pub.client.connected, 5_000);
    const base = computedResult();
    for (let n = 0; n < 8; n++) pub.publishResult({ ...base, ts: base.ts + 20 * n });
    pub.publishAlarm(alarm('stale-data', 'raised', base.ts));
    expect(pub.counters().dropped).toEqual({ sequence: 3, alarm: 0, event: 0 });
    expect(pub.counters().published).toEqual({ sequence: 5, alarm: 1, event: 0 });
    expect(pub.waiting()).toBe(6);
  });

  test('sharing the source connection: after the source closes, the publisher still delivers, and release ends the connection', async () => {
    const b = await broker();
    const { got } = await subscriber(b.url, 'seqmon/out/#', td);
    const src = new MqttSource({ url: b.url, reconnect: { minMs: 50, maxMs: 200 }, closeTimeoutMs: 1_000 });
    td.add(() => src.destroy());
    const loan = src.lendClient();
    const pub = new MqttPublisher({ client: loan.client, releaseClient: loan.release, closeTimeoutMs: 1_000 });
    await src.start(new FrameCollector());
    await waitFor(() => src.status().state === 'connected', 5_000);
    await src.close();
    expect(src.client.connected).toBe(true);
    pub.publishEvent(EVENT);
    await pub.close();
    expect(got.map((g) => g.topic)).toEqual(['seqmon/out/F1/event']);
    await waitFor(() => src.status().state === 'closed' && !src.client.connected, 5_000);
  });

  test('on a connection shared with the source, messages queued while the broker is down go out after the source reconnects', async () => {
    const b = await broker(true);
    const { got } = await subscriber(b.url, 'seqmon/out/#', td, { clean: false, clientId: 'seqmon-test-listener-2' });
    const src = new MqttSource({ url: b.url, reconnect: { minMs: 50, maxMs: 200 } });
    td.add(() => src.destroy());
    const loan = src.lendClient();
    const pub = new MqttPublisher({ client: loan.client, releaseClient: loan.release, closeTimeoutMs: 1_000 });
    await src.start(new FrameCollector());
    await waitFor(() => src.status().state === 'connected', 5_000);
    await b.stop();
    await waitFor(() => src.status().state === 'reconnecting', 5_000);
    const base = computedResult();
    for (let n = 0; n < 10; n++) pub.publishResult({ ...base, ts: base.ts + 20 * n });
    pub.publishAlarm(alarm('open-phase', 'raised', base.ts));
    await b.restart();
    await waitFor(() => got.length === 11, 10_000);
    expect(got.filter((g) => g.topic.endsWith('/sequence'))).toHaveLength(10);
    expect(pub.waiting()).toBe(0);
  });

  test('close() waits for acknowledgements, then ends its own connection; later publishes are counted as dropped', async () => {
    const b = await broker();
    const { got } = await subscriber(b.url, 'seqmon/out/#', td);
    const pub = ownPublisher(b.url);
    pub.publishEvent(EVENT);
    await Promise.all([pub.close(), pub.close()]);
    expect(got.length).toBe(1);
    expect(pub.client.connected).toBe(false);
    pub.publishEvent(EVENT);
    expect(pub.counters().dropped.event).toBe(1);
  });

  test('the pipeline output of a stream goes out whole: every frame result has its own sequence message', async () => {
    const b = await broker();
    const { got } = await subscriber(b.url, 'seqmon/out/+/sequence', td);
    const pub = ownPublisher(b.url, { resultQos: 0 });
    const sink = new PipelineSink();
    for (let n = 0; n < 10; n++) {
      sink.push({ feeder: 'F2', kind: 'rms', origin: 'test', payload: JSON.stringify({ ts: 1772460187250 + 100 * n, vll: { ab: 12470.2, bc: 12391.0, ca: 12440.7 } }) });
    }
    expect(sink.out.results).toHaveLength(10);
    for (const r of sink.out.results) pub.publishResult(r);
    await waitFor(() => got.length === 10, 5_000);
    expect(got.every((g) => g.qos === 0 && g.topic === 'seqmon/out/F2/sequence')).toBe(true);
  });
});
