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

/**
 * A minimal MQTT 3.1.1 responder that accepts CONNECT (CONNACK 0) and refuses
 * every SUBSCRIBE filter with return code 0x80 (MQTT 3.1.1 §3.9.3, from memory), as a
 * broker ACL may do. Packets are read from their fixed header (§2.2, from memory).
 */
function refuseSubscriptions(s: import('node:net').Socket): void {
  let buf = Buffer.alloc(0);
  s.on('data', (chunk: Buffer) => {
    buf = Buffer.concat([buf, chunk]);
    for (;;) {
      if (buf.length < 2) return;
      let len = 0, mul = 1, k = 1;
      for (; k < 5 && k < buf.length; k++) {
        len += (buf[k]! & 0x7f) * mul;
        mul *= 128;
        if ((buf[k]! & 0x80) === 0) break;
      }
      const total = k + 1 + len;
      if (buf.length < total) return;
      const type = buf[0]! >> 4;
      const body = buf.subarray(k + 1, total);
      buf = buf.subarray(total);
      if (type === 1) s.write(Buffer.from([0x20, 0x02, 0x00, 0x00]));
      else if (type === 8) {
        // Packet id, then (filter length, filter, options) per subscription.
        const filters: number[] = [];
        for (let o = 2; o < body.length; ) {
          const n = body.readUInt16BE(o);
          o += 2 + n + 1;
          filters.push(0x80);
        }
        s.write(Buffer.from([0x90, 2 + filters.length, body[0]!, body[1]!, ...filters]));
      } else if (type === 12) s.write(Buffer.from([0xd0, 0x00]));
    }
  });
}

describe('MqttSource when the broker refuses the subscriptions', () => {
  const td = new Teardown();
  afterEach(() => td.run());

  test('the refusal is logged as an error, shown in lastError, and the connection is retried with back-off', async () => {
    const { port, accepts } = await scriptedBroker(refuseSubscriptions, td);
    const errors: string[] = [];
    const noop = (): void => undefined;
    const src = new MqttSource({
      url: `mqtt://127.0.0.1:${port}`,
      reconnect: { minMs: MIN_MS, maxMs: MAX_MS },
      logger: { info: noop, warn: noop, debug: noop, error: (_o, msg) => void errors.push(msg ?? '') },
    });
    td.add(() => src.destroy());
    await src.start(new FrameCollector());
    await waitFor(() => accepts.length >= 3, 5_000);
    expect(src.status().state).not.toBe('connected');
    expect(src.status().lastError).toMatch(/refused the subscription to seqmon\/in\/\+\/phasor, seqmon\/in\/\+\/rms, seqmon\/in\/\+\/samples/);
    expect(errors.length).toBeGreaterThanOrEqual(2);
    expect(src.counters().connects).toBeGreaterThanOrEqual(2);
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
