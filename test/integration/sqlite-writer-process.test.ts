import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, afterEach, beforeAll, describe, expect, test } from 'vitest';
import { SqliteStore } from '../../agent/stores/sqlite/sqlite-store.js';
import { DAY, recentBase } from '../contracts/trend-store-fixtures.js';
import { waitFor } from '../helpers/free-port.js';
import { Teardown } from '../helpers/teardown.js';
import { bundleChild, lineReader } from './store-child-bundle.js';

const BATCH = 200;
/** Far enough to hold every batch a writer can send (at most 200,000 results x 3 s). */
const SPAN = 8 * DAY;
const dir = mkdtempSync(join(tmpdir(), 'seqmon-sqlite-crash-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
let child = '';
beforeAll(async () => {
  child = await bundleChild(resolve(fileURLToPath(import.meta.url), '..', 'sqlite-writer-child.ts'), 'sqlite-writer');
});

interface Writer {
  proc: ChildProcess;
  committed: number[];
  exited: Promise<void>;
}

function startWriter(path: string, base: number, batch: number, batches: number, pauseMs: number, teardown: Teardown): Writer {
  const proc = spawn(process.execPath, [child, path, String(base), String(batch), String(batches), String(pauseMs)], { stdio: ['ignore', 'pipe', 'inherit'] });
  const committed: number[] = [];
  lineReader(proc.stdout!, (line) => {
    const m = /^committed (\d+)$/.exec(line);
    if (m) committed.push(Number(m[1]));
  });
  const exited = new Promise<void>((res) => proc.once('exit', () => res()));
  teardown.add(async () => {
    if (proc.exitCode === null && proc.signalCode === null) proc.kill('SIGKILL');
    await exited;
  });
  return { proc, committed, exited };
}

describe('SQLite store with a writer in another process', () => {
  const teardown = new Teardown();
  afterEach(() => teardown.run());

  test('keeps every batch a writer reported committed when the writer is killed with SIGKILL mid-stream', async () => {
    const path = join(dir, 'crash.db');
    const base = recentBase(9);
    const w = startWriter(path, base, BATCH, 1_000, 0, teardown);
    await waitFor(() => w.committed.length >= 30, 20_000, 5);
    w.proc.kill('SIGKILL');
    await w.exited;
    expect(w.proc.signalCode).toBe('SIGKILL');
    const reported = [...w.committed];

    const s = new SqliteStore({ path });
    teardown.add(() => s.close());
    const stored = new Set((await s.queryTrend('CRASH1', '3s', { from: base, to: base + SPAN })).map((r) => r.ts));
    for (const k of reported) {
      for (let j = 0; j < BATCH; j++) expect(stored.has(base + (k * BATCH + j) * 3000)).toBe(true);
    }
    // A transaction is all or nothing: the batch in flight at the kill is either whole or absent.
    expect(stored.size % BATCH).toBe(0);
    expect(stored.size).toBeGreaterThanOrEqual(reported.length * BATCH);
  });

  test('serves reads from another connection while the writer commits, each read seeing whole batches only', async () => {
    const path = join(dir, 'concurrent.db');
    const base = recentBase(9);
    const small = 50;
    const w = startWriter(path, base, small, 4_000, 2, teardown);
    await waitFor(() => w.committed.length >= 1, 20_000, 5);
    const reader = new SqliteStore({ path });
    teardown.add(() => reader.close());
    const seen: number[] = [];
    const commitsAtStart = w.committed.length;
    // At least 8 reads over at least 600 ms (bounded: 40 reads), so a loaded machine still gives several samples.
    const until = Date.now() + 600;
    while ((seen.length < 8 || Date.now() < until) && seen.length < 40) {
      seen.push((await reader.queryTrend('CRASH1', '3s', { from: base, to: base + SPAN })).length);
      await new Promise((r) => setTimeout(r, 5));
    }
    expect(seen.every((count) => count % small === 0)).toBe(true);
    expect(seen.every((count, k) => k === 0 || count >= seen[k - 1])).toBe(true);
    // The writer kept committing while we read: reads did not block it.
    expect(w.committed.length).toBeGreaterThan(commitsAtStart);
    expect(seen[seen.length - 1]).toBeGreaterThan(seen[0]);
  });
});
