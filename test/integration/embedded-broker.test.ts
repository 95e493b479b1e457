import mqtt from 'mqtt';
import type { MqttClient } from 'mqtt';
import { afterEach, describe, expect, test } from 'vitest';
import { startEmbeddedBroker } from '../../agent/runtime/embedded-broker.js';
import type { EmbeddedBroker } from '../../agent/runtime/embedded-broker.js';
import { SubstationSimulator } from '../../agent/sources/simulator/generator.js';
import { startSimulatorPublisher } from '../../agent/sources/simulator/simulator-mqtt.js';
import { SYSTEM_SCHEDULER } from '../../agent/sources/mqtt/system-scheduler.js';
import { validateFrame } from '../../agent/core/frames.js';
import { freePort, waitFor } from '../helpers/free-port.js';
import { Teardown } from '../helpers/teardown.js';

const teardown = new Teardown();
afterEach(() => teardown.run());

async function broker(port?: number): Promise<EmbeddedBroker> {
  const b = await startEmbeddedBroker({ port: port ?? (await freePort()) });
  teardown.add(() => b.close());
  return b;
}

async function client(url: string): Promise<MqttClient> {
  const c = await mqtt.connectAsync(url, { reconnectPeriod: 0, connectTimeout: 5_000 });
  teardown.add(() => c.endAsync(true));
  return c;
}

describe('embedded MQTT broker', () => {
  test('delivers a QoS 1 message from one mqtt.js client to a subscriber on loopback', async () => {
    const b = await broker();
    expect(b.url).toBe(`mqtt://127.0.0.1:${b.port}`);
    const sub = await client(b.url);
    const pub = await client(b.url);
    await sub.subscribeAsync('seqmon/in/+/phasor', { qos: 1 });
    const got = new Promise<[string, string]>((resolve) => sub.on('message', (t, p) => resolve([t, p.toString()])));
    await pub.publishAsync('seqmon/in/F1/phasor', '{"x":1}', { qos: 1 });
    expect(await got).toEqual(['seqmon/in/F1/phasor', '{"x":1}']);
    expect(b.connectedClients()).toBe(2);
  });

  test('keeps retained messages for later subscribers (alarms are published retained)', async () => {
    const b = await broker();
    const pub = await client(b.url);
    await pub.publishAsync('seqmon/out/F1/alarm/open-phase', '{"state":"raised"}', { qos: 1, retain: true });
    const sub = await client(b.url);
    const got = new Promise<{ retain: boolean; payload: string }>((resolve) => sub.on('message', (_t, p, packet) => resolve({ retain: packet.retain, payload: p.toString() })));
    await sub.subscribeAsync('seqmon/out/#', { qos: 1 });
    expect(await got).toEqual({ retain: true, payload: '{"state":"raised"}' });
  });

  test('refuses a non-loopback address', async () => {
    await expect(startEmbeddedBroker({ port: 0, host: '0.0.0.0' })).rejects.toMatchObject({ code: 'SRC_CONFIG' });
  });

  test('reports a port in use as SRC_CONNECT_FAILED', async () => {
    const b = await broker();
    await expect(startEmbeddedBroker({ port: b.port })).rejects.toMatchObject({ code: 'SRC_CONNECT_FAILED', message: expect.stringMatching(/in use/) });
  });

  test('close disconnects clients, frees the port, and is idempotent', async () => {
    const port = await freePort();
    const b = await startEmbeddedBroker({ port });
    const c = await mqtt.connectAsync(b.url, { reconnectPeriod: 0 });
    teardown.add(() => c.endAsync(true));
    const closed = new Promise<void>((r) => c.once('close', () => r()));
    await Promise.all([b.close(), b.close()]);
    await b.close();
    await closed;
    const again = await broker(port);
    expect(again.port).toBe(port);
  });
});

describe('simulator publishing through the embedded broker', () => {
  test('frames of every simulated feeder arrive on <inputPrefix>/<feeder>/<kind> and validate', async () => {
    const b = await broker();
    const sub = await client(b.url);
    const seen = new Map<string, boolean>();
    sub.on('message', (topic, payload) => {
      const [, , feeder, kind] = topic.split('/');
      const r = validateFrame(JSON.parse(payload.toString()), { feeder, kind: kind as 'phasor' });
      seen.set(`${feeder}/${kind}`, r.ok);
    });
    await sub.subscribeAsync('demo/in/#', { qos: 0 });
    const simulator = new SubstationSimulator({ originMs: Date.now(), seed: 5, speed: 240 });
    const pub = await startSimulatorPublisher({ url: b.url, inputPrefix: 'demo/in', simulator, scheduler: SYSTEM_SCHEDULER });
    teardown.add(() => pub.close());
    await waitFor(() => seen.size === 6, 5_000);
    expect([...seen.keys()].sort()).toEqual(['WM-101/phasor', 'WM-102/phasor', 'WM-103/phasor', 'WM-104/phasor', 'WM-105/samples', 'WM-106/rms']);
    expect([...seen.values()].every(Boolean)).toBe(true);
    expect(pub.stats()).toMatchObject({ connected: true, state: 'running' });
    await pub.close();
    await pub.close();
    expect(pub.stats().state).toBe('closed');
  });
});
