/**
 * Faults a real broker will not produce on cue, from a scripted TCP server on a
 * free loopback port: a broker that accepts the socket but never answers
 * CONNECT, and one that drops every socket at once. The source must keep
 * retrying, with delays that grow and stay under reconnect.maxMs.
 */
import { createServer, type Server, type Socket } from 'node:net';
import { afterEach, describe, expect, test } from 'vitest';
import { MqttSource } from '../../agent/sources/mqtt/mqtt-source.js';
import { freePort, waitFor } from '../helpers/free-port.js';
import { FrameCollector } from '../helpers/mqtt-test-sink.js';
import { Teardown } from '../helpers/teardown.js';

const MIN_MS = 40;
const MAX_MS = 320;
const CONNECT_TIMEOUT_MS = 100;
// Timer and event-loop slack on a loaded 2-core machine (common practice for wall-clock bounds in tests).
const SLACK_MS = 150;

async function scriptedBroker(onSocket: (s: Socket) => void, td: Teardown): Promise<{ port: number; accepts: number[] }> {
  const port = await freePort();
  const accepts: number[] = [];
  const sockets = new Set<Socket>();
  const server: Server = createServer((s) => {
    accepts.push(performance.now());
    sockets.add(s);
    s.on('close', () => sockets.delete(s));
    s.on('error', () => undefined);
    onSocket(s);
  });
  await new Promise<void>((r) => server.listen(port, '127.0.0.1', r));
  td.add(
    () =>
      new Promise<void>((r) => {
        for (const s of sockets) s.destroy();
        server.close(() => r());
      }),
  );
  return { port, accepts };
}

function gaps(times: number[]): number[] {
  return times.slice(1).map((t, k) => t - times[k]!);
}

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
