/**
 * The InfluxDB store's batching, spooling, back-off and overflow, against a
 * scripted HTTP server on loopback (it answers the way InfluxDB 1.x does:
 * 204 for a write, 503 while "down", 400 with an error body for points it
 * refuses) and a manual clock, so every timer fires when the test says.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { createServer, type IncomingMessage, type Server, type ServerResponse } from 'node:http';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, afterEach, beforeAll, beforeEach, describe, expect, test } from 'vitest';
import { AgentError } from '../../../agent/core/errors.js';
import { InfluxStore, type InfluxStoreOptions } from '../../../agent/stores/influx/influx-store.js';
import { fullResult, recentBase } from '../../contracts/trend-store-fixtures.js';
import { waitFor } from '../../helpers/free-port.js';
import { Teardown } from '../../helpers/teardown.js';
import { ManualScheduler } from './manual-scheduler.js';

type Mode = 'up' | 'down' | 'refuse';
interface WriteSeen {
  rp: string;
  precision: string;
  lines: string[];
  at: number;
}

let server: Server;
let url = '';
let mode: Mode = 'up';
let writes: WriteSeen[] = [];
let clock: ManualScheduler;
const dir = mkdtempSync(join(tmpdir(), 'seqmon-influx-flow-'));
let n = 0;

function answer(req: IncomingMessage, res: ServerResponse, body: string): void {
  const u = new URL(req.url ?? '/', 'http://x');
  if (u.pathname === '/write') {
    if (mode === 'down') {
      res.writeHead(503).end('{"error":"service unavailable"}');
      return;
    }
    writes.push({ rp: u.searchParams.get('rp') ?? '', precision: u.searchParams.get('precision') ?? '', lines: body.split('\n'), at: clock.now() });
    if (mode === 'refuse') res.writeHead(400, { 'content-type': 'application/json' }).end('{"error":"unable to parse \'bad line\': invalid field format"}');
    else res.writeHead(204).end();
    return;
  }
  // /query: CREATE DATABASE, SHOW/CREATE RETENTION POLICY
  if (mode === 'down') {
    res.writeHead(503).end('{"error":"service unavailable"}');
    return;
  }
  const q = u.searchParams.get('q') ?? '';
  const result = /show retention/i.test(q)
    ? { statement_id: 0, series: [{ columns: ['name', 'duration', 'shardGroupDuration', 'replicaN', 'default'], values: [] }] }
    : { statement_id: 0 };
  res.writeHead(200, { 'content-type': 'application/json' }).end(JSON.stringify({ results: [result] }));
}

beforeAll(async () => {
  server = createServer((req, res) => {
    let body = '';
    req.setEncoding('utf8');
    req.on('data', (c: string) => (body += c));
    req.on('end', () => answer(req, res, body));
  });
  await new Promise<void>((r) => server.listen(0, '127.0.0.1', () => r()));
  const addr = server.address();
  url = `http://127.0.0.1:${typeof addr === 'object' && addr !== null ? addr.port : 0}`;
});
afterAll(async () => {
  await new Promise<void>((r) => server.close(() => r()));
  rmSync(dir, { recursive: true, force: true });
});

function settled(p: Promise<unknown>): { done: boolean } {
  const s = { done: false };
  p.then(
    () => (s.done = true),
    () => (s.done = true),
  );
  return s;
}

const tick = (): Promise<void> => new Promise((r) => setTimeout(r, 20));

describe('InfluxDB store write flow', () => {
  const teardown = new Teardown();
  beforeEach(() => {
    mode = 'up';
    writes = [];
    clock = new ManualScheduler(1_800_000_000_000);
  });
  afterEach(() => teardown.run());
  function open(over: Partial<InfluxStoreOptions> = {}): InfluxStore {
    const s = new InfluxStore({ url, database: 'flow', spoolPath: join(dir, `spool-${++n}.db`), scheduler: clock, closeDrainMs: 0, ...over });
    teardown.add(() => s.destroy());
    return s;
  }
  const t = recentBase();

  test('holds a small batch until the flush interval passes, then posts it with precision=ms into the window policy', async () => {
    const s = open({ flushIntervalMs: 1000 });
    const state = settled(s.writeResults([fullResult('F1', '10min', t)]));
    await tick();
    expect(state.done).toBe(false);
    expect(writes).toHaveLength(0);
    clock.advance(1000);
    await waitFor(() => state.done, 2000, 5);
    expect(writes).toMatchObject([{ rp: 'trend_10min', precision: 'ms' }]);
    expect(writes[0].lines[0].endsWith(` ${t}`)).toBe(true);
  });

  test('flushes at once when the waiting points reach the batch size', async () => {
    const s = open({ batchSize: 4, flushIntervalMs: 60_000 });
    await s.writeResults([0, 1, 2, 3].map((k) => fullResult('F1', '3s', t + k * 3000)));
    expect(writes).toHaveLength(1);
    expect(writes[0].lines).toHaveLength(4);
  });

  test('posts one request per retention policy for a batch that mixes windows', async () => {
    const s = open({ batchSize: 3 });
    await s.writeResults([fullResult('F1', '3s', t), fullResult('F1', '2h', t), fullResult('F1', '3s', t + 3000)]);
    expect(writes.map((w) => [w.rp, w.lines.length])).toEqual([
      ['trend_3s', 2],
      ['trend_2h', 1],
    ]);
  });

  test('acknowledges a batch into the spool while the server is down and retries with doubling back-off', async () => {
    mode = 'down';
    const s = open({ batchSize: 1, retryMinMs: 100, retryMaxMs: 400 });
    await s.writeResults([fullResult('F1', '3s', t)]);
    expect(s.health()).toMatchObject({ ok: false, queued: 1 });
    const origin = clock.now();
    // Each failed retry doubles the wait: 100, 200, 400, then capped at retryMaxMs = 400.
    for (const step of [100, 200, 400, 400]) {
      clock.advance(step);
      await tick();
    }
    expect(s.health().queued).toBe(1);
    mode = 'up';
    clock.advance(400);
    await waitFor(() => s.health().queued === 0, 2000, 5);
    expect(writes).toHaveLength(1);
    expect(writes[0].at - origin).toBe(1500); // 100 + 200 + 400 + 400 (capped) + 400
    expect(s.health()).toMatchObject({ ok: true, queued: 0, detail: null });
  });

  test('sends queued points before newer ones when the server comes back', async () => {
    mode = 'down';
    const s = open({ batchSize: 1, retryMinMs: 100 });
    await s.writeResults([fullResult('F1', '3s', t)]);
    await s.writeResults([fullResult('F1', '3s', t + 3000)]);
    mode = 'up';
    const newer = s.writeResults([fullResult('F1', '3s', t + 6000)]);
    await newer;
    clock.advance(100);
    await waitFor(() => s.health().queued === 0, 2000, 5);
    const order = writes.flatMap((w) => w.lines.map((l) => Number(l.split(' ').pop())));
    expect(order).toEqual([t, t + 3000, t + 6000]);
  });

  test('rejects a batch the server refuses (HTTP 400) with STORE_WRITE_FAILED carrying the server message', async () => {
    mode = 'refuse';
    const s = open({ batchSize: 1 });
    await expect(s.writeResults([fullResult('F1', '3s', t)])).rejects.toMatchObject({
      code: 'STORE_WRITE_FAILED',
      message: expect.stringContaining('invalid field format'),
    });
    expect(s.health().queued).toBe(0);
  });

  test('drops the oldest queued points at the spool bound, counts them and warns with STORE_QUEUE_FULL', async () => {
    mode = 'down';
    const warnings: AgentError[] = [];
    const s = open({ batchSize: 3, spoolCapacity: 5, onWarning: (e) => warnings.push(e) });
    await s.writeResults([0, 1, 2].map((k) => fullResult('F1', '3s', t + k * 3000)));
    await s.writeResults([3, 4, 5].map((k) => fullResult('F1', '3s', t + k * 3000)));
    expect(s.health()).toMatchObject({ queued: 5, queueCapacity: 5, detail: expect.stringContaining('STORE_QUEUE_FULL') });
    expect(s.stats().dropped).toBe(1);
    expect(warnings.map((w) => w.code)).toEqual(['STORE_QUEUE_FULL']);
    // The drain tried while the server was down; its retry is due in 250 ms.
    await waitFor(() => clock.pending() === 1, 2000, 5);
    mode = 'up';
    clock.advance(250);
    await waitFor(() => s.health().queued === 0, 2000, 5);
    expect(writes.flatMap((w) => w.lines.map((l) => Number(l.split(' ').pop())))).toEqual([1, 2, 3, 4, 5].map((k) => t + k * 3000));
  });

  test('flushes what is waiting when closed, then refuses writes', async () => {
    const s = open({ flushIntervalMs: 60_000 });
    const waiting = s.writeResults([fullResult('F1', '3s', t)]);
    await s.close();
    await waiting;
    expect(writes).toHaveLength(1);
    await expect(s.writeAlarm({ ts: t, feeder: 'F1', condition: 'open-phase', state: 'raised', level: 'alarm', value: null, limit: null, phase: 'a', message: 'x' })).rejects.toMatchObject({
      code: 'STORE_WRITE_FAILED',
    });
  });

  test('rejects writes still waiting when destroyed, with STORE_WRITE_FAILED', async () => {
    const s = open({ flushIntervalMs: 60_000 });
    const waiting = s.writeResults([fullResult('F1', '3s', t)]);
    s.destroy(new Error('shutdown deadline passed'));
    s.destroy();
    await expect(waiting).rejects.toMatchObject({ code: 'STORE_WRITE_FAILED' });
    expect(clock.pending()).toBe(0);
  });

  test('answers a query with STORE_QUERY_FAILED while the server is down, naming the server', async () => {
    mode = 'down';
    const s = open();
    await expect(s.queryTrend('F1', '3s', { from: 0, to: t })).rejects.toMatchObject({
      code: 'STORE_QUERY_FAILED',
      message: expect.stringContaining(url),
    });
  });

  test('opens while the server is down and delivers points left in its spool by an earlier run', async () => {
    mode = 'down';
    const path = join(dir, `spool-${++n}.db`);
    const first = new InfluxStore({ url, database: 'flow', spoolPath: path, scheduler: clock, batchSize: 1, closeDrainMs: 0 });
    await first.writeResults([fullResult('F1', '3s', t)]);
    await first.close();
    expect(writes).toHaveLength(0);
    mode = 'up';
    const second = open({ spoolPath: path });
    await waitFor(() => second.health().queued === 0, 2000, 5);
    expect(writes).toHaveLength(1);
  });
});
