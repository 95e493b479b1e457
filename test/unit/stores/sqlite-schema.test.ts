import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import Database from 'better-sqlite3';
import { afterAll, afterEach, describe, expect, test } from 'vitest';
import { SCHEMA_VERSION } from '../../../agent/stores/sqlite/schema.js';
import { SqliteStore } from '../../../agent/stores/sqlite/sqlite-store.js';
import { fullResult } from '../../contracts/trend-store-fixtures.js';
import { Teardown } from '../../helpers/teardown.js';

const dir = mkdtempSync(join(tmpdir(), 'seqmon-schema-'));
let n = 0;
const nextPath = (): string => join(dir, `s-${++n}.db`);
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const T = Date.UTC(2026, 10, 20, 8, 0, 0);

/**
 * Writes a file exactly as the first release (schema v1) left it, with its
 * own DDL here rather than the migration code, so the test checks the
 * migration against an independent description of the old file.
 */
function writeVersion1File(path: string): void {
  const db = new Database(path);
  const q = ['zero_mag', 'zero_ang', 'pos_mag', 'pos_ang', 'neg_mag', 'neg_ang', 'u2', 'u0', 'rms_a', 'rms_b', 'rms_c'];
  const cols = [...q.map((c) => `v_${c} REAL`), 'v_rms_ab REAL', 'v_rms_bc REAL', 'v_rms_ca REAL', 'v_lvur REAL', 'v_pvur REAL', ...q.map((c) => `i_${c} REAL`)];
  db.exec(`
    PRAGMA journal_mode = WAL;
    CREATE TABLE sequence (feeder TEXT NOT NULL, "window" TEXT NOT NULL, ts INTEGER NOT NULL, duration_ms REAL NOT NULL, freq REAL,
      flagged INTEGER NOT NULL, count INTEGER NOT NULL, has_v INTEGER NOT NULL, has_i INTEGER NOT NULL, ${cols.join(', ')},
      PRIMARY KEY (feeder, "window", ts)) WITHOUT ROWID;
    CREATE TABLE alarm (feeder TEXT NOT NULL, condition TEXT NOT NULL, ts INTEGER NOT NULL, state TEXT NOT NULL, level TEXT NOT NULL,
      value REAL, "limit" REAL, phase TEXT, message TEXT NOT NULL, PRIMARY KEY (feeder, condition, ts)) WITHOUT ROWID;
    CREATE TABLE event (feeder TEXT NOT NULL, type TEXT NOT NULL, ts INTEGER NOT NULL, duration_ms REAL NOT NULL, peak_current REAL NOT NULL,
      peak_phase TEXT NOT NULL, i0_over_i1 REAL, i2_over_i1 REAL, message TEXT NOT NULL, PRIMARY KEY (feeder, type, ts)) WITHOUT ROWID;
    INSERT INTO sequence (feeder, "window", ts, duration_ms, freq, flagged, count, has_v, has_i, v_pos_mag, v_pos_ang, v_neg_mag, v_neg_ang, v_u2,
      v_rms_a, v_rms_b, v_rms_c, i_pos_mag, i_u2)
      VALUES ('OLD1', '10min', ${T}, 600000, 60.01, 0, 200, 1, 1, 7200.5, 0.25, 72.1, -95.5, 1.0013, 7210, 7195, 7190, 201.5, 2.5);
    INSERT INTO alarm VALUES ('OLD1', 'voltage-unbalance', ${T}, 'raised', 'warning', 2.1, 2, NULL, 'kept from v1 (fictional)');
    PRAGMA user_version = 1;
  `);
  db.close();
}

describe('SQLite schema versions', () => {
  const teardown = new Teardown();
  afterEach(() => teardown.run());

  test('creates a new file at the current schema version', async () => {
    const s = new SqliteStore({ path: nextPath() });
    teardown.add(() => s.close());
    expect(s.openedVersion).toBe(0);
    expect(SCHEMA_VERSION).toBe(2);
    const db = new Database(s.path, { readonly: true });
    teardown.add(() => db.close());
    expect(db.pragma('user_version', { simple: true })).toBe(SCHEMA_VERSION);
  });

  test('migrates a version 1 file to version 2 and keeps its rows, with the new THD columns null', async () => {
    const p = nextPath();
    writeVersion1File(p);
    const s = new SqliteStore({ path: p });
    teardown.add(() => s.close());
    expect(s.openedVersion).toBe(1);
    const [old] = await s.queryTrend('OLD1', '10min', { from: T, to: T + 1 });
    expect(old.v).toMatchObject({ pos: [7200.5, 0.25], neg: [72.1, -95.5], u2: 1.0013, rms: { a: 7210, b: 7195, c: 7190 }, thd: null, zero: null });
    expect(old.i).toMatchObject({ pos: [201.5, null], u2: 2.5, thd: null, rms: null });
    expect(await s.activeAlarms()).toMatchObject([{ feeder: 'OLD1', message: 'kept from v1 (fictional)' }]);
  });

  test('writes full version 2 results, THD included, into a migrated file', async () => {
    const p = nextPath();
    writeVersion1File(p);
    const s = new SqliteStore({ path: p });
    teardown.add(() => s.close());
    const r = fullResult('NEW1', '3s', T);
    await s.writeResults([r]);
    expect(await s.queryTrend('NEW1', '3s', { from: T, to: T + 1 })).toStrictEqual([r]);
    const db = new Database(p, { readonly: true });
    teardown.add(() => db.close());
    expect(db.pragma('user_version', { simple: true })).toBe(2);
    expect(db.prepare('SELECT v_thd_a FROM sequence WHERE feeder = ?').pluck().get('NEW1')).toBe(1.5e-9);
  });

  test('opens an already current file without migrating it again', async () => {
    const p = nextPath();
    const first = new SqliteStore({ path: p });
    await first.writeResults([fullResult('F1', '2h', T)]);
    await first.close();
    const again = new SqliteStore({ path: p });
    teardown.add(() => again.close());
    expect(again.openedVersion).toBe(SCHEMA_VERSION);
    expect(await again.feeders()).toEqual([{ feeder: 'F1', lastTs: T }]);
  });

  test('refuses a file from a newer seqmon with STORE_SCHEMA_TOO_NEW and leaves it untouched', () => {
    const p = nextPath();
    const db = new Database(p);
    db.exec('CREATE TABLE future_table (x); PRAGMA user_version = 7;');
    db.close();
    expect(() => new SqliteStore({ path: p })).toThrow(expect.objectContaining({ code: 'STORE_SCHEMA_TOO_NEW', details: expect.objectContaining({ found: 7 }) }));
    const check = new Database(p, { readonly: true });
    teardown.add(() => check.close());
    expect(check.pragma('user_version', { simple: true })).toBe(7);
    expect(check.prepare("SELECT name FROM sqlite_master WHERE type = 'table'").pluck().all()).toEqual(['future_table']);
  });

  test('refuses a SQLite file of another program (tables but no version) with STORE_OPEN_FAILED', () => {
    const p = nextPath();
    const db = new Database(p);
    db.exec('CREATE TABLE sequence (something_else TEXT)');
    db.close();
    expect(() => new SqliteStore({ path: p })).toThrow(expect.objectContaining({ code: 'STORE_OPEN_FAILED' }));
  });
});
