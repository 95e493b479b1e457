import { spawn } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, afterEach, beforeAll, describe, expect, test } from 'vitest';
import type { SequenceResult } from '../../agent/core/result.js';
import { InfluxStore } from '../../agent/stores/influx/influx-store.js';
import { DAY, alarm, disturbance, fullResult, recentBase } from '../contracts/trend-store-fixtures.js';
import { freePort, waitFor } from '../helpers/free-port.js';
import { hasInfluxd, influxQuery, startInfluxd, type InfluxdHandle } from '../helpers/influxd.js';
import { Teardown } from '../helpers/teardown.js';
import { bundleChild, lineReader } from './store-child-bundle.js';

const dir = mkdtempSync(join(tmpdir(), 'seqmon-outage-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

async function serverCount(url: string, db: string): Promise<number> {
  const body = (await influxQuery(url, db, 'SELECT COUNT("count") FROM "trend_3s"."sequence"')) as { results: { series?: { values: number[][] }[] }[] };
  return body.results[0].series?.[0].values[0][1] ?? 0;
}

describe.skipIf(!hasInfluxd)('InfluxDB store through an outage', () => {
  const teardown = new Teardown();
  let server: InfluxdHandle;
  beforeAll(async () => {
    server = await startInfluxd();
  });
  afterAll(() => server?.dispose());
  afterEach(() => teardown.run());

  test('delivers every point, alarm and event exactly once when InfluxDB stops mid-stream and comes back', async () => {
    const db = 'outage';
    const store = new InfluxStore({
      url: server.url,
      database: db,
      spoolPath: join(dir, 'outage-spool.db'),
      flushIntervalMs: 2,
      requestTimeoutMs: 1000,
      retryMinMs: 20,
      retryMaxMs: 200,
    });
    teardown.add(() => store.close());
    const base = recentBase();
    const written: number[] = [];
    const batchOf = (k: number): SequenceResult[] =>
      Array.from({ length: 50 }, (_, j) => {
        const ts = base + (k * 50 + j) * 3000;
        written.push(ts);
        return fullResult('OUT1', '3s', ts, j);
      });

    // The stream runs on its own; the server is stopped and started underneath it, requests in flight included.
    let sent = 0;
    const stream = (async () => {
      for (let k = 0; k < 40; k++) {
        await store.writeResults(batchOf(k));
        sent = k + 1;
        await new Promise((r) => setTimeout(r, 5));
      }
    })();
    await waitFor(() => sent >= 8, 10_000, 1);
    expect(store.health()).toMatchObject({ ok: true, queued: 0 });
    await server.stop();
    const stoppedAt = sent;
    await waitFor(() => sent >= stoppedAt + 10, 10_000, 1);
    // Acknowledged while the server was down: the points are on disk, and health says so.
    const during = store.health();
    expect(during.ok).toBe(false);
    expect(during.queued).toBeGreaterThanOrEqual(10 * 50);
    expect(during.queueCapacity).toBe(1_000_000);
    expect(during.detail).toMatch(/unreachable|failed/);
    const raised = alarm('OUT1', base + 60_000, { condition: 'open-phase', level: 'alarm', phase: 'c', value: 0.97, limit: 0.5 });
    const fault = disturbance('OUT1', base + 61_000);
    await store.writeAlarm(raised);
    await store.writeEvent(fault);
    await server.start();
    await stream;
    await waitFor(() => store.health().queued === 0, 10_000, 10);
    expect(store.health()).toMatchObject({ ok: true, queued: 0 });

    expect(await serverCount(server.url, db)).toBe(written.length);
    const back = await store.queryTrend('OUT1', '3s', { from: base, to: base + DAY });
    expect(back.map((r) => r.ts)).toEqual(written);
    expect(back[back.length - 1]).toStrictEqual(fullResult('OUT1', '3s', written[written.length - 1], 49));
    expect(await store.activeAlarms()).toStrictEqual([raised]);
    expect(await store.queryEvents({ feeder: 'OUT1' })).toStrictEqual([fault]);
  });

  test('keeps queued points through a SIGKILL of the writing process and delivers them at the next start', async () => {
    const child = await bundleChild(resolve(fileURLToPath(import.meta.url), '..', 'influx-spool-child.ts'), 'influx-spool-writer');
    const deadUrl = `http://127.0.0.1:${await freePort()}`;
    const spoolPath = join(dir, 'crash-spool.db');
    const base = recentBase();
    const size = 100;
    const proc = spawn(process.execPath, [child, deadUrl, 'crashdb', spoolPath, String(base), String(size)], { stdio: ['ignore', 'pipe', 'inherit'] });
    const exited = new Promise<void>((r) => proc.once('exit', () => r()));
    teardown.add(async () => {
      if (proc.exitCode === null && proc.signalCode === null) proc.kill('SIGKILL');
      await exited;
    });
    const queued: number[] = [];
    lineReader(proc.stdout!, (line) => {
      const m = /^queued (\d+)$/.exec(line);
      if (m) queued.push(Number(m[1]));
    });
    await waitFor(() => queued.length >= 15, 20_000, 5);
    proc.kill('SIGKILL');
    await exited;
    const reported = [...queued];

    const store = new InfluxStore({ url: server.url, database: 'crashdb', spoolPath, flushIntervalMs: 2, retryMinMs: 20, retryMaxMs: 200 });
    teardown.add(() => store.close());
    await waitFor(() => store.health().queued === 0, 10_000, 10);
    const stored = new Set((await store.queryTrend('SPOOL1', '3s', { from: base, to: base + DAY })).map((r) => r.ts));
    for (const k of reported) for (let j = 0; j < size; j++) expect(stored.has(base + (k * size + j) * 3000)).toBe(true);
    expect(stored.size % size).toBe(0);
    expect(await serverCount(server.url, 'crashdb')).toBe(stored.size);
  });
});
