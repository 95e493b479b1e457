/**
 * The SQLite schema and its migrations. The version lives in PRAGMA
 * user_version; migrations[k] takes a file from version k to k + 1, each in
 * one IMMEDIATE transaction, so a file is never left between versions and
 * two processes opening the same file at once do not both migrate it.
 *
 * v1: tables sequence, alarm, event (first release).
 * v2: per-phase THD columns (v_thd_*, i_thd_*) for sampled input, and time
 *     indexes on alarm and event for the time-range queries of the HTTP API.
 */
import type Database from 'better-sqlite3';
import { AgentError } from '../../core/errors.js';

type Db = Database.Database;

const QUANTITY_V1 = ['zero_mag', 'zero_ang', 'pos_mag', 'pos_ang', 'neg_mag', 'neg_ang', 'u2', 'u0', 'rms_a', 'rms_b', 'rms_c'];
const THD = ['thd_a', 'thd_b', 'thd_c'];

function v0to1(db: Db): void {
  const real = (names: string[]): string => names.map((n) => `${n} REAL`).join(',\n  ');
  db.exec(`
CREATE TABLE sequence (
  feeder TEXT NOT NULL,
  "window" TEXT NOT NULL,
  ts INTEGER NOT NULL,
  duration_ms REAL NOT NULL,
  freq REAL,
  flagged INTEGER NOT NULL,
  count INTEGER NOT NULL,
  has_v INTEGER NOT NULL,
  has_i INTEGER NOT NULL,
  ${real(QUANTITY_V1.map((c) => `v_${c}`))},
  ${real(['rms_ab', 'rms_bc', 'rms_ca', 'lvur', 'pvur'].map((c) => `v_${c}`))},
  ${real(QUANTITY_V1.map((c) => `i_${c}`))},
  PRIMARY KEY (feeder, "window", ts)
) WITHOUT ROWID;
CREATE TABLE alarm (
  feeder TEXT NOT NULL,
  condition TEXT NOT NULL,
  ts INTEGER NOT NULL,
  state TEXT NOT NULL,
  level TEXT NOT NULL,
  value REAL,
  "limit" REAL,
  phase TEXT,
  message TEXT NOT NULL,
  PRIMARY KEY (feeder, condition, ts)
) WITHOUT ROWID;
CREATE TABLE event (
  feeder TEXT NOT NULL,
  type TEXT NOT NULL,
  ts INTEGER NOT NULL,
  duration_ms REAL NOT NULL,
  peak_current REAL NOT NULL,
  peak_phase TEXT NOT NULL,
  i0_over_i1 REAL,
  i2_over_i1 REAL,
  message TEXT NOT NULL,
  PRIMARY KEY (feeder, type, ts)
) WITHOUT ROWID;
`);
}

function v1to2(db: Db): void {
  for (const q of ['v', 'i']) for (const c of THD) db.exec(`ALTER TABLE sequence ADD COLUMN ${q}_${c} REAL`);
  db.exec('CREATE INDEX alarm_ts ON alarm (ts); CREATE INDEX event_ts ON event (ts);');
}

const MIGRATIONS: readonly ((db: Db) => void)[] = [v0to1, v1to2];

/** The version this build writes. */
export const SCHEMA_VERSION = MIGRATIONS.length;

function version(db: Db): number {
  return db.pragma('user_version', { simple: true }) as number;
}

function tooNew(path: string, found: number): AgentError {
  return new AgentError(
    'STORE_SCHEMA_TOO_NEW',
    `${path} has schema version ${found}, newer than the ${SCHEMA_VERSION} this seqmon understands; upgrade seqmon or point the store at another file`,
    { details: { path, found, supported: SCHEMA_VERSION } },
  );
}

/** Brings the file to SCHEMA_VERSION; refuses a newer file without touching it. Returns the version found. */
export function migrate(db: Db, path: string): number {
  const found = version(db);
  if (found > SCHEMA_VERSION) throw tooNew(path, found);
  if (found === SCHEMA_VERSION) return found; // no write lock needed to open a current file
  for (;;) {
    const step = db.transaction((): boolean => {
      // Read again inside the write lock: another process may have migrated meanwhile.
      const v = version(db);
      if (v > SCHEMA_VERSION) throw tooNew(path, v);
      if (v === SCHEMA_VERSION) return false;
      MIGRATIONS[v](db);
      db.pragma(`user_version = ${v + 1}`);
      return true;
    });
    if (!step.immediate()) return found;
  }
}
