/**
 * Faults a real broker will not produce on cue, from a scripted TCP server on a
 * free loopback port: a broker that accepts the socket but never answers
 * CONNECT, and one that drops every socket at once. The source (and the
 * publisher's own connection) must keep retrying, with delays that grow and
 * stay under reconnect.maxMs.
 */
import { afterEach, describe, expect, test } from 'vitest';
import { MqttPublisher } from '../../agent/publish/mqtt-publisher.js';
import { MqttSource } from '../../agent/sources/mqtt/mqtt-source.js';
import { waitFor } from '../helpers/free-port.js';
import { gaps, scriptedBroker } from '../helpers/mqtt-scripted-broker.js';
import { FrameCollector } from '../helpers/mqtt-test-sink.js';
import { Teardown } from '../helpers/teardown.js';

const MIN_MS = 40;
const MAX_MS = 320;
const CONNECT_TIMEOUT_MS = 100;
// Timer and event-loop slack on a loaded 2-core machine (common practice for wall-clock bounds in tests).
const SLACK_MS = 150;

describe('MqttSource reconnect back-off against a scripted broker', () => {
  const td = new Teardown();
  afterEach(() => td.run());

  function start(port: number): MqttSource {
    const src = new MqttSource({ url: `mqtt://127.0.0.1:${port}`, reconnect: { minMs: MIN_MS, maxMs: MAX_MS }, connectTimeoutMs: CONNECT_TIMEOUT_MS });
    td.add(() => src.destroy());
    void src.start(new FrameCollector());
    return src;
  }

  test('a broker that never sends CONNACK is retried with growing, bounded delays', async () => {
    // The socket stays open and silent: only the source's connect timeout ends each attempt.
    const { port, accepts } = await scriptedBroker(() => undefined, td);
    const src = start(port);
    await waitFor(() => accepts.length >= 8, 8_000);
    const g = gaps(accepts).map((x) => x - CONNECT_TIMEOUT_MS);
    // Delay n lies in [cap/2, cap], cap = min(max, min * 2^n): delay 3 >= 160 > 40 >= delay 0.
    expect(g[3]!).toBeGreaterThan(g[0]!);
    expect(g[2]!).toBeGreaterThan(MIN_MS);
    expect(Math.max(...g)).toBeLessThanOrEqual(MAX_MS + SLACK_MS);
    expect(src.status().state).toBe('reconnecting');
    expect(src.status().lastError).toMatch(/connack timeout/i);
  });

  test('a broker that drops every socket at once is retried with growing, bounded delays', async () => {
    const { port, accepts } = await scriptedBroker((s) => s.destroy(), td);
    const src = start(port);
    await waitFor(() => accepts.length >= 8, 8_000);
    const g = gaps(accepts);
    expect(g[3]!).toBeGreaterThan(g[0]!);
    expect(Math.min(...g.slice(3))).toBeGreaterThanOrEqual(MAX_MS / 2 - 5);
    expect(Math.max(...g)).toBeLessThanOrEqual(MAX_MS + SLACK_MS);
    expect(src.status().state).toBe('reconnecting');
    expect(src.counters().reconnectAttempts).toBeGreaterThanOrEqual(7);
  });

  test('close() while retrying stops the retries', async () => {
    const { port, accepts } = await scriptedBroker((s) => s.destroy(), td);
    const src = start(port);
    await waitFor(() => accepts.length >= 2, 5_000);
    await src.close();
    const seen = accepts.length;
    await new Promise((r) => setTimeout(r, MAX_MS + SLACK_MS));
    expect(accepts.length).toBe(seen);
    expect(src.status().state).toBe('closed');
  });
});

describe('MqttPublisher own-connection back-off against a scripted broker', () => {
  const td = new Teardown();
  afterEach(() => td.run());

  test('a broker that drops every socket is retried with growing, bounded delays, and messages wait meanwhile', async () => {
    const { port, accepts } = await scriptedBroker((s) => s.destroy(), td);
    const pub = new MqttPublisher({ connection: { url: `mqtt://127.0.0.1:${port}`, reconnect: { minMs: MIN_MS, maxMs: MAX_MS } } });
    td.add(() => pub.destroy());
    pub.publishEvent({ ts: 1772460187250, feeder: 'F1', type: 'AG', durationMs: 50, peakCurrent: 1800, peakPhase: 'a', i0OverI1: 0.9, i2OverI1: 0.95, message: 'test (fictional feeder)' });
    await waitFor(() => accepts.length >= 8, 8_000);
    const g = gaps(accepts);
    expect(g[3]!).toBeGreaterThan(g[0]!);
    expect(Math.min(...g.slice(3))).toBeGreaterThanOrEqual(MAX_MS / 2 - 5);
    expect(Math.max(...g)).toBeLessThanOrEqual(MAX_MS + SLACK_MS);
    expect(pub.waiting()).toBe(1);
  });
});
