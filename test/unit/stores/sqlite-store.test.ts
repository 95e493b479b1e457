import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import Database from 'better-sqlite3';
import { afterAll, afterEach, describe, expect, test } from 'vitest';
import { SqliteStore } from '../../../agent/stores/sqlite/sqlite-store.js';
import { trendStoreContract } from '../../contracts/trend-store-contract.js';
import { DAY, alarm, disturbance, fullResult } from '../../contracts/trend-store-fixtures.js';
import { Teardown } from '../../helpers/teardown.js';
import { ManualScheduler } from './manual-scheduler.js';

const dir = mkdtempSync(join(tmpdir(), 'seqmon-sqlite-'));
let n = 0;
const nextPath = (): string => join(dir, `store-${++n}.db`);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

trendStoreContract('sqlite', async () => new SqliteStore({ path: nextPath() }), { kind: 'sqlite' });

describe('SQLite store', () => {
  const teardown = new Teardown();
  afterEach(() => teardown.run());
  function open(opts: Partial<ConstructorParameters<typeof SqliteStore>[0]> = {}): SqliteStore {
    const s = new SqliteStore({ path: nextPath(), ...opts });
    teardown.add(() => s.close());
    return s;
  }
  const NOW = Date.UTC(2026, 5, 1);

  test('opens its file in WAL mode with synchronous = NORMAL', async () => {
    const s = open();
    await s.close();
    const db = new Database(s.path, { readonly: true });
    teardown.add(() => db.close());
    expect(db.pragma('journal_mode', { simple: true })).toBe('wal');
    // synchronous is per connection; check what the store set on its own by reopening through it
    const s2 = new SqliteStore({ path: s.path });
    teardown.add(() => s2.close());
    expect((s2 as unknown as { db: Database.Database }).db.pragma('synchronous', { simple: true })).toBe(1); // 1 = NORMAL (sqlite.org/pragma.html#pragma_synchronous)
  });

  test('stores results as readable columns that plain SQL can select', async () => {
    const s = open();
    await s.writeResults([fullResult('F7', '10min', NOW, 0)]);
    await s.close();
    const db = new Database(s.path, { readonly: true });
    teardown.add(() => db.close());
    const row = db.prepare('SELECT feeder, "window", ts, v_u2, i_rms_c, v_rms_ab, flagged, count FROM sequence').get();
    expect(row).toEqual({ feeder: 'F7', window: '10min', ts: NOW, v_u2: 1.3100000000000001, i_rms_c: 198.6, v_rms_ab: 12470.2, flagged: 0, count: 15 });
  });

  test('answers a week of 10-minute data through the (feeder, window, ts) primary key, not a table scan', () => {
    const s = open();
    const plan = (s as unknown as { db: Database.Database }).db
      .prepare('EXPLAIN QUERY PLAN SELECT ts FROM sequence WHERE feeder = ? AND "window" = ? AND ts >= ? AND ts < ? ORDER BY ts')
      .all('F1', '10min', 0, 1) as { detail: string }[];
    expect(plan.map((p) => p.detail).join(' ')).toMatch(/SEARCH sequence USING PRIMARY KEY \(feeder=\? AND window=\? AND ts>\? AND ts<\?\)/);
  });

  test('deletes 3-s results older than 35 days on the hourly retention run and keeps younger ones', async () => {
    const clock = new ManualScheduler(NOW);
    const s = open({ scheduler: clock });
    await s.writeResults([fullResult('F1', '3s', NOW - 35 * DAY - 30 * 60_000), fullResult('F1', '3s', NOW - 35 * DAY + 2 * 3_600_000)]);
    clock.advance(3_600_000);
    const kept = await s.queryTrend('F1', '3s', { from: 0, to: NOW });
    expect(kept.map((r) => r.ts)).toEqual([NOW - 35 * DAY + 2 * 3_600_000]);
  });

  test('keeps each window for its own retention: 10-min results for 1825 days, 2-h results for 3650', async () => {
    const clock = new ManualScheduler(NOW);
    const s = open({ scheduler: clock });
    await s.writeResults([
      fullResult('F1', '10min', NOW - 1826 * DAY),
      fullResult('F1', '10min', NOW - 1824 * DAY),
      fullResult('F1', '2h', NOW - 3651 * DAY),
      fullResult('F1', '2h', NOW - 1826 * DAY),
    ]);
    expect(s.enforceRetention()).toBe(2);
    expect((await s.queryTrend('F1', '10min', { from: 0, to: NOW })).map((r) => r.ts)).toEqual([NOW - 1824 * DAY]);
    expect((await s.queryTrend('F1', '2h', { from: 0, to: NOW })).map((r) => r.ts)).toEqual([NOW - 1826 * DAY]);
  });

  test('applies a configured retention and deletes old alarms and events by the records retention', async () => {
    const clock = new ManualScheduler(NOW);
    const s = open({ scheduler: clock, retention: { '3s': 1, records: 30 } });
    await s.writeResults([fullResult('F1', '3s', NOW - 2 * DAY), fullResult('F1', '3s', NOW - DAY / 2)]);
    await s.writeAlarm(alarm('F1', NOW - 31 * DAY));
    await s.writeAlarm(alarm('F1', NOW - 29 * DAY));
    await s.writeEvent(disturbance('F1', NOW - 31 * DAY));
    clock.advance(3_600_000);
    expect((await s.queryTrend('F1', '3s', { from: 0, to: NOW })).map((r) => r.ts)).toEqual([NOW - DAY / 2]);
    expect((await s.queryAlarms({})).map((a) => a.ts)).toEqual([NOW - 29 * DAY]);
    expect(await s.queryEvents({})).toEqual([]);
  });

  test('refuses a retention shorter than one hour with STORE_OPEN_FAILED', () => {
    expect(() => open({ retention: { '3s': 0 } })).toThrow(expect.objectContaining({ code: 'STORE_OPEN_FAILED' }));
  });

  test('stops its retention timer on close', async () => {
    const clock = new ManualScheduler(NOW);
    const s = open({ scheduler: clock });
    expect(clock.pending()).toBe(1);
    await s.close();
    expect(clock.pending()).toBe(0);
  });

  test('refuses a file that is not a SQLite database with STORE_OPEN_FAILED', () => {
    const p = nextPath();
    writeFileSync(p, 'this is a text file, not a database '.repeat(200));
    expect(() => new SqliteStore({ path: p })).toThrow(expect.objectContaining({ code: 'STORE_OPEN_FAILED' }));
  });

  test('creates the folder of its file when it is missing', async () => {
    const s = open({ path: join(dir, 'nested', 'deeper', 'trend.db') });
    await s.writeResults([fullResult('F1', '3s', NOW)]);
    expect(await s.feeders()).toEqual([{ feeder: 'F1', lastTs: NOW }]);
  });
});
