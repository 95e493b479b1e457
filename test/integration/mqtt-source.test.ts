/**
 * MqttSource against a real mosquitto on a free loopback port.
 * Topic layout and payloads: shared/ARCHITECTURE.md ("Input frames").
 */
import mqtt, { type MqttClient } from 'mqtt';
import { afterEach, beforeEach, describe, expect, test } from 'vitest';
import type { SourceState } from '../../agent/core/ports.js';
import { MqttSource } from '../../agent/sources/mqtt/mqtt-source.js';
import { waitFor } from '../helpers/free-port.js';
import { Mosquitto, mosquittoAvailable } from '../helpers/mosquitto.js';
import { FrameCollector } from '../helpers/mqtt-test-sink.js';
import { Teardown } from '../helpers/teardown.js';
import { StepScheduler } from '../helpers/mqtt-step-scheduler.js';

const PHASOR = JSON.stringify({
  ts: '2026-03-02T14:03:07.250Z',
  freq: 59.98,
  v: { a: [7212.4, 0.0], b: [7190.1, -120.4], c: [7168.8, 119.7] },
  i: { a: [212.0, -24.8], b: [205.3, -146.1], c: [198.6, 95.0] },
});
const RMS = JSON.stringify({ ts: 1772460187250, vll: { ab: 12470.2, bc: 12391.0, ca: 12440.7 }, i: { a: 212.0, b: 205.3, c: 198.6 } });
const SAMPLES = JSON.stringify({ ts: '2026-03-02T14:03:07.000Z', rate: 7680, v: { a: [0, 1, 2], b: [0, 1, 2], c: [0, 1, 2] } });

/** A phasor frame whose timestamp encodes its sequence number n (one frame per 20 ms). */
function numbered(n: number): string {
  return JSON.stringify({ ts: 1772460187000 + 20 * n, v: { a: [7200, 0], b: [7200, -120], c: [7200, 120] } });
}
function seqOf(text: string): number {
  return ((JSON.parse(text) as { ts: number }).ts - 1772460187000) / 20;
}

async function publisher(url: string, td: Teardown): Promise<MqttClient> {
  const client = await mqtt.connectAsync(url, { reconnectPeriod: 100, clientId: `test-pub-${Math.random().toString(16).slice(2, 10)}` });
  td.add(() => client.endAsync(true));
  return client;
}

describe.skipIf(!mosquittoAvailable())('MqttSource with a real mosquitto', () => {
  const td = new Teardown();
  let broker: Mosquitto;

  beforeEach(async () => {
    broker = await Mosquitto.start();
    td.add(() => broker.dispose());
  });
  afterEach(() => td.run());

  function source(extra: Partial<ConstructorParameters<typeof MqttSource>[0]> = {}): { src: MqttSource; states: SourceState[] } {
    const states: SourceState[] = [];
    const src = new MqttSource({ url: broker.url, reconnect: { minMs: 50, maxMs: 400 }, onState: (s) => states.push(s.state), ...extra });
    td.add(() => src.destroy());
    return { src, states };
  }

  test('frames of each kind arrive as raw frames with the feeder and kind taken from the topic', async () => {
    const sink = new FrameCollector();
    const { src } = source();
    await src.start(sink);
    await waitFor(() => src.status().state === 'connected', 5_000);
    const pub = await publisher(broker.url, td);
    await pub.publishAsync('seqmon/in/F1/phasor', PHASOR, { qos: 1 });
    await pub.publishAsync('seqmon/in/F-2.b/rms', RMS, { qos: 1 });
    await pub.publishAsync('seqmon/in/F_3/samples', SAMPLES, { qos: 1 });
    await waitFor(() => sink.frames.length === 3, 5_000);
    expect(sink.frames.map((f) => [f.feeder, f.kind, f.origin])).toEqual([
      ['F1', 'phasor', 'seqmon/in/F1/phasor'],
      ['F-2.b', 'rms', 'seqmon/in/F-2.b/rms'],
      ['F_3', 'samples', 'seqmon/in/F_3/samples'],
    ]);
    expect(sink.texts()).toEqual([PHASOR, RMS, SAMPLES]);
  });

  test('topics outside <prefix>/<feeder>/<kind> are not handed on', async () => {
    const sink = new FrameCollector();
    const { src } = source({ inputPrefix: 'site7/in' });
    await src.start(sink);
    await waitFor(() => src.status().state === 'connected', 5_000);
    const pub = await publisher(broker.url, td);
    await pub.publishAsync('seqmon/in/F1/phasor', PHASOR, { qos: 1 });
    await pub.publishAsync('site7/in/F1/voltage', PHASOR, { qos: 1 });
    await pub.publishAsync('site7/in/F1/phasor', PHASOR, { qos: 1 });
    await waitFor(() => sink.frames.length >= 1, 5_000);
    // The last publish is the only match; wait a little for any stray delivery.
    await new Promise((r) => setTimeout(r, 100));
    expect(sink.frames.map((f) => f.origin)).toEqual(['site7/in/F1/phasor']);
  });

  test('a broker restart mid-stream is survived: reconnect, resubscribe, frames after the restart arrive once each', async () => {
    const sink = new FrameCollector();
    const { src, states } = source();
    await src.start(sink);
    await waitFor(() => src.status().state === 'connected', 5_000);
    const pub = await publisher(broker.url, td);
    for (let n = 0; n < 50; n++) await pub.publishAsync('seqmon/in/F1/phasor', numbered(n), { qos: 1 });
    await waitFor(() => sink.frames.length === 50, 5_000);

    await broker.restart();
    await waitFor(() => src.status().state === 'connected' && pub.connected, 10_000);
    for (let n = 50; n < 100; n++) await pub.publishAsync('seqmon/in/F1/phasor', numbered(n), { qos: 1 });
    await waitFor(() => sink.frames.length >= 100, 5_000);
    await new Promise((r) => setTimeout(r, 100));

    const seqs = sink.texts().map(seqOf);
    expect(seqs).toEqual(Array.from({ length: 100 }, (_, n) => n));
    expect(states).toEqual(['connecting', 'connected', 'reconnecting', 'connected']);
    expect(src.counters().reconnectAttempts).toBeGreaterThanOrEqual(1);
  });

  test('with clean: false it subscribes again when the restarted broker has no session (sessionPresent = false)', async () => {
    const sink = new FrameCollector();
    const { src } = source({ clean: false, clientId: 'seqmon-test-persistent' });
    await src.start(sink);
    await waitFor(() => src.status().state === 'connected', 5_000);
    await broker.restart();
    await waitFor(() => src.counters().connects === 2 && src.status().state === 'connected', 10_000);
    const pub = await publisher(broker.url, td);
    await pub.publishAsync('seqmon/in/F9/rms', RMS, { qos: 1 });
    await waitFor(() => sink.frames.length === 1, 5_000);
    expect(sink.frames[0]!.feeder).toBe('F9');
  });

  test('reading pauses while the sink asks for it and resumes in order on drain', async () => {
    const sink = new FrameCollector();
    sink.pauseAfter = 1;
    const { src } = source();
    await src.start(sink);
    await waitFor(() => src.status().state === 'connected', 5_000);
    const pub = await publisher(broker.url, td);
    for (let n = 0; n < 5; n++) await pub.publishAsync('seqmon/in/F1/phasor', numbered(n), { qos: 0 });
    await waitFor(() => sink.frames.length === 1, 5_000);
    await new Promise((r) => setTimeout(r, 150));
    expect(sink.frames).toHaveLength(1);
    sink.drain();
    await waitFor(() => sink.frames.length === 5, 5_000);
    expect(sink.texts().map(seqOf)).toEqual([0, 1, 2, 3, 4]);
    expect(src.counters().pauses).toBe(1);
  });

  test('a QoS 1 frame is acknowledged only after the sink has taken it', async () => {
    // With a persistent session, a frame the source never acknowledged is sent again after reconnect (MQTT 3.1.1 §4.4, from memory).
    const sink = new FrameCollector();
    sink.pauseAfter = 1;
    const first = source({ clean: false, clientId: 'seqmon-test-ack' });
    await first.src.start(sink);
    await waitFor(() => first.src.status().state === 'connected', 5_000);
    const pub = await publisher(broker.url, td);
    await pub.publishAsync('seqmon/in/F1/phasor', numbered(0), { qos: 1 });
    await pub.publishAsync('seqmon/in/F1/phasor', numbered(1), { qos: 1 });
    await waitFor(() => sink.frames.length === 1, 5_000);
    // Frame 0 is held (paused, not acknowledged); frame 1 is still unread. Abort without acknowledging.
    first.src.destroy();
    await waitFor(() => first.src.status().state === 'closed', 5_000);

    const again = new FrameCollector();
    const second = source({ clean: false, clientId: 'seqmon-test-ack' });
    await second.src.start(again);
    await waitFor(() => again.frames.length === 2, 5_000);
    expect(again.texts().map(seqOf)).toEqual([0, 1]);
  });

  test('acknowledgements of QoS 1 frames that arrive together leave in one socket write, and each frame arrives once', async () => {
    // 200 QoS 1 frames queued for a persistent session while it is away: the broker then sends them in bursts.
    const away = source({ clean: false, clientId: 'seqmon-test-ack-batch', qos: 1 });
    await away.src.start(new FrameCollector());
    await waitFor(() => away.src.status().state === 'connected', 5_000);
    away.src.destroy(); // not close(): that would unsubscribe
    await waitFor(() => away.src.status().state === 'closed', 5_000);
    const pub = await publisher(broker.url, td);
    for (let n = 0; n < 200; n++) await pub.publishAsync('seqmon/in/F1/phasor', numbered(n), { qos: 1 });

    const sink = new FrameCollector();
    const { src } = source({ clean: false, clientId: 'seqmon-test-ack-batch', qos: 1 });
    await src.start(sink);
    // Count the writes that reach the socket (each one is a system call); the connection has not opened yet.
    const socket = src.client.stream as unknown as Record<'_write' | '_writev', (...args: unknown[]) => unknown>;
    let writes = 0;
    for (const method of ['_write', '_writev'] as const) {
      const original = socket[method].bind(socket);
      socket[method] = (...args: unknown[]) => {
        writes++;
        return original(...args);
      };
    }
    await waitFor(() => sink.frames.length === 200, 5_000);
    await new Promise((r) => setTimeout(r, 200)); // an unacknowledged frame would come again
    expect(sink.texts().map(seqOf)).toEqual(Array.from({ length: 200 }, (_, n) => n));
    // One write per frame without holding; with it, one per burst (mosquitto sends up to 20 unacknowledged at a time).
    expect(writes).toBeLessThan(50);
  });

  test('close() unsubscribes, ends the connection, reports closed, and can be called twice', async () => {
    const sink = new FrameCollector();
    const { src, states } = source();
    await src.start(sink);
    await waitFor(() => src.status().state === 'connected', 5_000);
    await Promise.all([src.close(), src.close()]);
    await src.close();
    expect(src.status().state).toBe('closed');
    expect(src.client.connected).toBe(false);
    expect(states.at(-1)).toBe('closed');
    const pub = await publisher(broker.url, td);
    await pub.publishAsync('seqmon/in/F1/phasor', PHASOR, { qos: 1 });
    await new Promise((r) => setTimeout(r, 100));
    expect(sink.frames).toHaveLength(0);
  });

  test('MQTT 5 connections receive frames the same way', async () => {
    const sink = new FrameCollector();
    const { src } = source({ protocolVersion: 5 });
    await src.start(sink);
    await waitFor(() => src.status().state === 'connected', 5_000);
    const pub = await publisher(broker.url, td);
    await pub.publishAsync('seqmon/in/F5/phasor', PHASOR, { qos: 1 });
    await waitFor(() => sink.frames.length === 1, 5_000);
    expect([sink.frames[0]!.feeder, sink.frames[0]!.kind]).toEqual(['F5', 'phasor']);
  });

  test('the back-off starts again from the first delay only after a connection stayed up for 2 x maxMs', async () => {
    const sched = new StepScheduler();
    const sink = new FrameCollector();
    const { src } = source({ scheduler: sched, random: () => 0.999999, reconnect: { minMs: 100, maxMs: 1_000 } });
    await broker.stop();
    await src.start(sink);
    // Three refused attempts while the broker is down: delays 100, 200, 400 (each delay equals its cap).
    for (let k = 0; k < 3; k++) {
      await waitFor(() => sched.pending.length === 1, 2_000);
      sched.fire();
    }
    await waitFor(() => sched.pending.length === 1, 2_000);
    await broker.restart();
    sched.fire();
    await waitFor(() => src.status().state === 'connected', 5_000);
    // A short-lived connection: the next drop continues the sequence (1000 = cap after 800).
    sched.clock += 500;
    await broker.restart();
    await waitFor(() => sched.pending.length === 1, 5_000);
    sched.fire();
    await waitFor(() => src.status().state === 'connected', 5_000);
    // A connection that stays up 2 x maxMs counts as healthy: the next drop starts again at 100.
    sched.clock += 2_000;
    await broker.restart();
    await waitFor(() => sched.pending.length === 1, 5_000);
    expect(sched.requested).toEqual([100, 200, 400, 800, 1_000, 100]);
  });

  test('close() while the sink is paused waits for its drain before ending', async () => {
    const sink = new FrameCollector();
    sink.pauseAfter = 1;
    const { src } = source({ closeTimeoutMs: 5_000 });
    await src.start(sink);
    await waitFor(() => src.status().state === 'connected', 5_000);
    const pub = await publisher(broker.url, td);
    await pub.publishAsync('seqmon/in/F1/phasor', numbered(0), { qos: 1 });
    await waitFor(() => sink.frames.length === 1, 5_000);
    let closed = false;
    const closing = src.close().then(() => (closed = true));
    await new Promise((r) => setTimeout(r, 200));
    expect(closed).toBe(false);
    sink.drain();
    await closing;
    expect(src.status().state).toBe('closed');
  });

  test('close() with a sink that never drains still ends after closeTimeoutMs', async () => {
    const sink = new FrameCollector();
    sink.pauseAfter = 1;
    const { src } = source({ closeTimeoutMs: 300 });
    await src.start(sink);
    await waitFor(() => src.status().state === 'connected', 5_000);
    const pub = await publisher(broker.url, td);
    await pub.publishAsync('seqmon/in/F1/phasor', numbered(0), { qos: 1 });
    await waitFor(() => sink.frames.length === 1, 5_000);
    const t0 = Date.now();
    await src.close();
    expect(Date.now() - t0).toBeLessThan(3_000);
    expect(src.status().state).toBe('closed');
  });

  test('destroy(err) ends at once, reports failed with the reason, and is idempotent', async () => {
    const sink = new FrameCollector();
    const { src } = source();
    await src.start(sink);
    await waitFor(() => src.status().state === 'connected', 5_000);
    src.destroy(new Error('operator abort'));
    src.destroy();
    expect(src.status()).toMatchObject({ state: 'failed', lastError: 'operator abort' });
    await waitFor(() => !src.client.connected, 2_000);
  });
});
