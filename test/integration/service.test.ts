/**
 * The whole service against a real mosquitto: frames published on the input
 * topics come back as the contract's `sequence` messages every 3 s, alarms
 * as retained state messages, and trends through the HTTP API; a graceful
 * close flushes what was buffered.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import mqtt from 'mqtt';
import { afterEach, describe, expect, it } from 'vitest';
import { parseConfigText } from '../../agent/config/load-config.js';
import type { SeqmonConfig } from '../../agent/config/types.js';
import { SeqmonService } from '../../agent/main.js';
import { createLogger } from '../../agent/logging.js';
import { freePort, waitFor } from '../helpers/free-port.js';
import { Mosquitto, mosquittoAvailable } from '../helpers/mosquitto.js';
import { Teardown } from '../helpers/teardown.js';

const td = new Teardown();
afterEach(() => td.run());

interface Received {
  topic: string;
  payload: Record<string, unknown>;
  retain: boolean;
}

async function subscriber(url: string, topic: string): Promise<{ messages: Received[]; client: mqtt.MqttClient }> {
  const client = await mqtt.connectAsync(url, { clean: true });
  const messages: Received[] = [];
  client.on('message', (t, p, packet) => messages.push({ topic: t, payload: JSON.parse(p.toString()) as Record<string, unknown>, retain: packet.retain }));
  await client.subscribeAsync(topic, { qos: 1 });
  return { messages, client };
}

/** A phasor frame with a known 2.5 % negative-sequence voltage (V1 = 7200 V, V2 = 180 V) and balanced 200 A load. */
function frame(ts: number): string {
  const v1 = 7200, v2 = 180;
  const ph = (k: number): [number, number] => {
    const a1 = (-120 * k * Math.PI) / 180, a2 = (120 * k * Math.PI) / 180;
    const re = v1 * Math.cos(a1) + v2 * Math.cos(a2), im = v1 * Math.sin(a1) + v2 * Math.sin(a2);
    return [Math.hypot(re, im), (Math.atan2(im, re) * 180) / Math.PI];
  };
  return JSON.stringify({
    ts,
    freq: 60,
    v: { a: ph(0), b: ph(1), c: ph(2) },
    i: { a: [200, -30], b: [200, -150], c: [200, 90] },
  });
}

interface Setup {
  broker: Mosquitto;
  httpPort: number;
  config: SeqmonConfig;
}

/** A real broker, a temporary data folder and a configuration with a 3-s voltage-unbalance pickup, all torn down after the test. */
async function setup(): Promise<Setup> {
  const broker = await Mosquitto.start();
  td.add(() => broker.stop());
  const dir = mkdtempSync(join(tmpdir(), 'seqmon-service-'));
  td.add(() => rmSync(dir, { recursive: true, force: true }));
  const httpPort = await freePort();
  const yaml = `
dataDir: ${dir}
mqtt: { url: "${broker.url}" }
http: { port: ${httpPort} }
feeders:
  discover: true
  defaults:
    nominalHz: 60
    nominalVoltageLN: 7200
    detection:
      voltageUnbalance: { warning: 2, alarm: 3, pickupMs: 3000, dropoutMs: 3000 }
`;
  return { broker, httpPort, config: parseConfigText(yaml, null, {}, dir) };
}

describe.skipIf(!mosquittoAvailable())('the service against a real broker', () => {
  it('publishes 3-s sequence results, raises a retained voltage-unbalance alarm, and serves the trend over HTTP', async () => {
    const { broker, httpPort, config } = await setup();
    const service = await SeqmonService.start(config, { logger: createLogger({ level: 'silent' }), dashboardDir: null });
    td.add(() => service.close());

    const out = await subscriber(broker.url, 'seqmon/out/#');
    td.add(() => out.client.endAsync());
    const pub = await mqtt.connectAsync(broker.url);
    td.add(() => pub.endAsync());

    // 12 s of data at 10 frames/s, aligned so that several full 3-s intervals close.
    const t0 = Math.floor(Date.now() / 3000) * 3000 - 30_000;
    for (let k = 0; k < 120; k++) await pub.publishAsync('seqmon/in/F7/phasor', frame(t0 + 100 * k), { qos: 1 });

    await waitFor(() => out.messages.some((m) => m.topic === 'seqmon/out/F7/alarm/voltage-unbalance'), 10_000);
    const seq = out.messages.filter((m) => m.topic === 'seqmon/out/F7/sequence');
    expect(seq.length).toBeGreaterThanOrEqual(3);
    const first = seq[0]!.payload as { window: string; feeder: string; ts: string; v: { u2: number; u0: number; pos: [number, number] }; i: { u2: number } };
    expect(first.window).toBe('3s');
    expect(first.feeder).toBe('F7');
    expect(first.ts).toBe(new Date(t0).toISOString());
    // Constructed with |V2|/|V1| = 180/7200 = 2.5 % exactly (computed by hand), balanced currents.
    expect(first.v.u2).toBeCloseTo(2.5, 6);
    expect(first.v.u0).toBeCloseTo(0, 6);
    expect(first.v.pos[0]).toBeCloseTo(7200, 3);
    expect(first.i.u2).toBeCloseTo(0, 6);

    const alarm = out.messages.find((m) => m.topic === 'seqmon/out/F7/alarm/voltage-unbalance')!;
    expect(alarm.payload).toMatchObject({ feeder: 'F7', condition: 'voltage-unbalance', state: 'raised', level: 'warning', limit: 2 });

    // A late subscriber still learns the alarm state: it is retained.
    const late = await subscriber(broker.url, 'seqmon/out/F7/alarm/#');
    td.add(() => late.client.endAsync());
    await waitFor(() => late.messages.length > 0, 5_000);
    expect(late.messages[0]!.retain).toBe(true);

    await waitFor(async () => {
      const res = await fetch(`http://127.0.0.1:${httpPort}/api/feeders/F7/trend?window=3s&from=${t0}&to=${t0 + 12_000}`);
      const body = (await res.json()) as { count: number; columns: { vU2: number[] } };
      return body.count >= 3 && body.columns.vU2.every((u) => Math.abs(u - 2.5) < 1e-6);
    }, 10_000);
  });
});

describe.skipIf(!mosquittoAvailable())('alarms across a restart', () => {
  it('restores a raised alarm from the store after a restart and does not announce it again', async () => {
    const { broker, httpPort, config } = await setup();
    const logger = createLogger({ level: 'silent' });
    const out = await subscriber(broker.url, 'seqmon/out/+/alarm/#');
    td.add(() => out.client.endAsync());
    const pub = await mqtt.connectAsync(broker.url);
    td.add(() => pub.endAsync());
    const t0 = Math.floor(Date.now() / 3000) * 3000 - 60_000;

    const first = await SeqmonService.start(config, { logger, dashboardDir: null });
    for (let k = 0; k < 120; k++) await pub.publishAsync('seqmon/in/F9/phasor', frame(t0 + 100 * k), { qos: 1 });
    await waitFor(() => out.messages.some((m) => m.payload.state === 'raised'), 10_000);
    await first.close();
    const raisedBefore = out.messages.filter((m) => m.payload.state === 'raised').length;

    const second = await SeqmonService.start(config, { logger, dashboardDir: null });
    td.add(() => second.close());
    // The same unbalanced data goes on after the restart.
    for (let k = 120; k < 240; k++) await pub.publishAsync('seqmon/in/F9/phasor', frame(t0 + 100 * k), { qos: 1 });
    await waitFor(async () => {
      const body = (await (await fetch(`http://127.0.0.1:${httpPort}/api/feeders/F9/latest`)).json()) as { result: { ts: string } | null };
      return body.result !== null && Date.parse(body.result.ts) >= t0 + 100 * 239;
    }, 10_000);
    const active = (await (await fetch(`http://127.0.0.1:${httpPort}/api/alarms?active=true&feeder=F9`)).json()) as { alarms: { condition: string; state: string }[] };
    expect(active.alarms.map((a) => [a.condition, a.state])).toEqual([['voltage-unbalance', 'raised']]);
    expect(out.messages.filter((m) => m.payload.state === 'raised').length).toBe(raisedBefore);
  });
});
