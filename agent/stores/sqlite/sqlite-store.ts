/**
 * TrendStore on one SQLite file (better-sqlite3): the embedded default.
 *
 * - WAL journal with synchronous = NORMAL: readers never block the writer and
 *   see whole transactions only; a commit survives a killed process (the WAL
 *   is in the OS page cache), and only a power loss can take back the last
 *   commits before the next checkpoint (docs/storage.md, "Durability").
 * - Statements are prepared once; each writeResults call is one transaction.
 * - Columns, not a JSON blob, so plain SQL can read the trends.
 * - Retention: rows older than each window's retention are deleted at open
 *   and then every `retentionIntervalMs` on the injected scheduler.
 */
import { mkdirSync } from 'node:fs';
import { dirname } from 'node:path';
import Database from 'better-sqlite3';
import { AgentError, isAgentError, type ErrorCode } from '../../core/errors.js';
import type { AlarmCondition, AlarmLevel, AlarmState, AlarmTransition, DisturbanceEvent, FaultType, Phase } from '../../core/detect/types.js';
import type { AlarmQuery, EventQuery, Scheduler, StoreHealth, TimeRange, TimerHandle, TrendStore } from '../../core/ports.js';
import { AGGREGATE_WINDOWS, type AggregateWindow, type SequenceResult } from '../../core/result.js';
import { realScheduler } from '../real-scheduler.js';
import { checkAlarm, checkEvent, checkResults } from '../record-check.js';
import { resolveRetention, retentionMs, type RetentionDays } from '../retention.js';
import { SEQUENCE_COLUMNS, rowToSequence, sequenceToRow, type ColumnValue } from '../sequence-columns.js';
import { migrate } from './schema.js';

export interface SqliteStoreOptions {
  /** File path (its folder is created if missing), or ':memory:'. */
  readonly path: string;
  /** Days to keep per window and for alarms/events; defaults in agent/stores/retention.ts. */
  readonly retention?: Partial<RetentionDays> | undefined;
  readonly scheduler?: Scheduler | undefined;
  /** How often retention runs, ms (default one hour). */
  readonly retentionIntervalMs?: number | undefined;
  /** How long a write waits for another connection's write lock, ms (default 5000). */
  readonly busyTimeoutMs?: number | undefined;
}

type Lifecycle = 'open' | 'closed' | 'destroyed';

const SEQ_COLS = SEQUENCE_COLUMNS.join(', ');
const ALARM_COLS = 'ts, feeder, condition, state, level, value, "limit", phase, message';
const EVENT_COLS = 'ts, feeder, type, duration_ms, peak_current, peak_phase, i0_over_i1, i2_over_i1, message';
const HOUR_MS = 3_600_000;

type AlarmRow = [number, string, AlarmCondition, AlarmState, AlarmLevel, number | null, number | null, Phase | null, string];
type EventRow = [number, string, FaultType, number, number, Phase, number | null, number | null, string];

function alarmFromRow(r: AlarmRow): AlarmTransition {
  return { ts: r[0], feeder: r[1], condition: r[2], state: r[3], level: r[4], value: r[5], limit: r[6], phase: r[7], message: r[8] };
}

function eventFromRow(r: EventRow): DisturbanceEvent {
  return { ts: r[0], feeder: r[1], type: r[2], durationMs: r[3], peakCurrent: r[4], peakPhase: r[5], i0OverI1: r[6], i2OverI1: r[7], message: r[8] };
}

function wrap(code: ErrorCode, what: string, e: unknown): AgentError {
  if (isAgentError(e)) return e;
  const msg = e instanceof Error ? e.message : String(e);
  return new AgentError(code, `${what}: ${msg}`, { cause: e });
}

export class SqliteStore implements TrendStore {
  readonly path: string;
  readonly retention: RetentionDays;
  /** Schema version the file had before this open (0 for a new file). */
  readonly openedVersion: number;
  private readonly db: Database.Database;
  private readonly scheduler: Scheduler;
  private readonly timer: TimerHandle;
  private state: Lifecycle = 'open';
  private lastError: string | null = null;
  /** Reused bind array: feeder, window, ts, then the columns. */
  private readonly row: (ColumnValue | string)[];

  private readonly insertSeq: Database.Statement;
  private readonly insertAlarm: Database.Statement;
  private readonly insertEvent: Database.Statement;
  private readonly selectTrend: Database.Statement;
  private readonly selectAlarms: Database.Statement;
  private readonly selectActive: Database.Statement;
  private readonly selectEvents: Database.Statement;
  private readonly selectFeederIds: Database.Statement;
  private readonly selectLastTs: Database.Statement;
  private readonly deleteSeq: Database.Statement;
  private readonly deleteAlarms: Database.Statement;
  private readonly deleteEvents: Database.Statement;
  private readonly writeBatch: (results: readonly SequenceResult[]) => void;

  constructor(options: SqliteStoreOptions) {
    this.path = options.path;
    this.retention = resolveRetention(options.retention);
    this.scheduler = options.scheduler ?? realScheduler;
    let db: Database.Database | undefined;
    try {
      if (options.path !== ':memory:' && options.path !== '') mkdirSync(dirname(options.path), { recursive: true });
      db = new Database(options.path);
      db.pragma(`busy_timeout = ${Math.max(0, Math.round(options.busyTimeoutMs ?? 5000))}`);
      db.pragma('journal_mode = WAL');
      db.pragma('synchronous = NORMAL');
      this.openedVersion = migrate(db, options.path);
    } catch (e) {
      db?.close();
      if (isAgentError(e)) throw e;
      throw wrap('STORE_OPEN_FAILED', `could not open the SQLite store at ${options.path} (check the path, its permissions, and that it is a seqmon database)`, e);
    }
    this.db = db;
    const n = SEQUENCE_COLUMNS.length;
    this.row = new Array<ColumnValue | string>(3 + n).fill(null);
    this.insertSeq = db.prepare(`INSERT OR REPLACE INTO sequence (feeder, "window", ts, ${SEQ_COLS}) VALUES (${new Array(3 + n).fill('?').join(', ')})`);
    this.insertAlarm = db.prepare(`INSERT OR REPLACE INTO alarm (${ALARM_COLS}) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)`);
    this.insertEvent = db.prepare(`INSERT OR REPLACE INTO event (${EVENT_COLS}) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)`);
    this.selectTrend = db.prepare(`SELECT ts, ${SEQ_COLS} FROM sequence WHERE feeder = ? AND "window" = ? AND ts >= ? AND ts < ? ORDER BY ts`).raw(true);
    const filter = '(@feeder IS NULL OR feeder = @feeder) AND (@from IS NULL OR ts >= @from) AND (@to IS NULL OR ts < @to)';
    this.selectAlarms = db.prepare(`SELECT ${ALARM_COLS} FROM alarm WHERE ${filter} ORDER BY ts, feeder, condition`).raw(true);
    this.selectActive = db
      .prepare(
        `SELECT ${ALARM_COLS.split(', ').map((c) => `a.${c}`).join(', ')} FROM alarm a
         JOIN (SELECT feeder, condition, MAX(ts) AS ts FROM alarm GROUP BY feeder, condition) l
           ON a.feeder = l.feeder AND a.condition = l.condition AND a.ts = l.ts
         WHERE a.state = 'raised' ORDER BY a.ts, a.feeder, a.condition`,
      )
      .raw(true);
    this.selectEvents = db.prepare(`SELECT ${EVENT_COLS} FROM event WHERE ${filter} ORDER BY ts, feeder, type`).raw(true);
    // Distinct feeders by hopping along the primary key: one index seek per feeder, not a scan of every row.
    this.selectFeederIds = db
      .prepare(
        `WITH RECURSIVE f(feeder) AS (
           SELECT MIN(feeder) FROM sequence
           UNION ALL SELECT (SELECT MIN(feeder) FROM sequence WHERE feeder > f.feeder) FROM f WHERE f.feeder IS NOT NULL)
         SELECT feeder FROM f WHERE feeder IS NOT NULL`,
      )
      .pluck(true);
    this.selectLastTs = db.prepare('SELECT MAX(ts) FROM sequence WHERE feeder = ? AND "window" = ?').pluck(true);
    this.deleteSeq = db.prepare('DELETE FROM sequence WHERE feeder = ? AND "window" = ? AND ts < ?');
    this.deleteAlarms = db.prepare('DELETE FROM alarm WHERE ts < ?');
    this.deleteEvents = db.prepare('DELETE FROM event WHERE ts < ?');
    this.writeBatch = db.transaction((results: readonly SequenceResult[]) => {
      const row = this.row;
      for (const r of results) {
        row[0] = r.feeder;
        row[1] = r.window;
        row[2] = Math.round(r.ts);
        sequenceToRow(r, row as ColumnValue[], 3);
        this.insertSeq.run(row);
      }
    });
    this.enforceRetention();
    this.timer = this.scheduler.setInterval(() => {
      try {
        this.enforceRetention();
      } catch (e) {
        this.lastError = `retention: ${e instanceof Error ? e.message : String(e)}`;
      }
    }, options.retentionIntervalMs ?? HOUR_MS);
  }

  private assertOpen(code: 'STORE_WRITE_FAILED' | 'STORE_QUERY_FAILED'): void {
    if (this.state !== 'open') throw new AgentError(code, `the SQLite store ${this.path} is ${this.state}; open it again to use it`);
  }

  private write(what: string, fn: () => void): Promise<void> {
    try {
      this.assertOpen('STORE_WRITE_FAILED');
      fn();
      this.lastError = null;
      return Promise.resolve();
    } catch (e) {
      const err = wrap('STORE_WRITE_FAILED', `writing ${what} to ${this.path} failed`, e);
      if (err.cause !== undefined) this.lastError = err.message;
      return Promise.reject(err);
    }
  }

  private query<T>(what: string, fn: () => T): Promise<T> {
    try {
      this.assertOpen('STORE_QUERY_FAILED');
      return Promise.resolve(fn());
    } catch (e) {
      return Promise.reject(wrap('STORE_QUERY_FAILED', `${what} from ${this.path} failed`, e));
    }
  }

  writeResults(results: readonly SequenceResult[]): Promise<void> {
    return this.write('results', () => {
      checkResults(results);
      if (results.length > 0) this.writeBatch(results);
    });
  }

  writeAlarm(a: AlarmTransition): Promise<void> {
    return this.write('an alarm transition', () => {
      checkAlarm(a);
      this.insertAlarm.run(Math.round(a.ts), a.feeder, a.condition, a.state, a.level, a.value, a.limit, a.phase, a.message);
    });
  }

  writeEvent(e: DisturbanceEvent): Promise<void> {
    return this.write('a disturbance event', () => {
      checkEvent(e);
      this.insertEvent.run(Math.round(e.ts), e.feeder, e.type, e.durationMs, e.peakCurrent, e.peakPhase, e.i0OverI1, e.i2OverI1, e.message);
    });
  }

  queryTrend(feeder: string, window: AggregateWindow, range: TimeRange): Promise<SequenceResult[]> {
    return this.query('reading a trend', () => {
      const rows = this.selectTrend.all(feeder, window, range.from, range.to) as unknown[][];
      const out = new Array<SequenceResult>(rows.length);
      for (let k = 0; k < rows.length; k++) out[k] = rowToSequence(feeder, window, rows[k][0] as number, rows[k], 1);
      return out;
    });
  }

  queryAlarms(q: AlarmQuery): Promise<AlarmTransition[]> {
    return this.query('reading alarms', () =>
      (this.selectAlarms.all({ feeder: q.feeder ?? null, from: q.from ?? null, to: q.to ?? null }) as AlarmRow[]).map(alarmFromRow),
    );
  }

  activeAlarms(): Promise<AlarmTransition[]> {
    return this.query('reading active alarms', () => (this.selectActive.all() as AlarmRow[]).map(alarmFromRow));
  }

  queryEvents(q: EventQuery): Promise<DisturbanceEvent[]> {
    return this.query('reading events', () =>
      (this.selectEvents.all({ feeder: q.feeder ?? null, from: q.from ?? null, to: q.to ?? null }) as EventRow[]).map(eventFromRow),
    );
  }

  private feederIds(): string[] {
    return this.selectFeederIds.all() as string[];
  }

  feeders(): Promise<{ feeder: string; lastTs: number }[]> {
    return this.query('listing feeders', () => {
      const out: { feeder: string; lastTs: number }[] = [];
      for (const feeder of this.feederIds()) {
        let lastTs = -Infinity;
        for (const w of AGGREGATE_WINDOWS) {
          const ts = this.selectLastTs.get(feeder, w) as number | null;
          if (ts !== null && ts > lastTs) lastTs = ts;
        }
        if (lastTs > -Infinity) out.push({ feeder, lastTs });
      }
      return out;
    });
  }

  /**
   * Deletes what is older than its retention, counted back from `now`
   * (the scheduler's clock by default). Returns the number of rows deleted.
   */
  enforceRetention(now: number = this.scheduler.now()): number {
    this.assertOpen('STORE_WRITE_FAILED');
    let deleted = 0;
    for (const feeder of this.feederIds()) {
      for (const w of AGGREGATE_WINDOWS) deleted += this.deleteSeq.run(feeder, w, now - retentionMs(this.retention, w)).changes;
    }
    const recordsBefore = now - retentionMs(this.retention, 'records');
    deleted += this.deleteAlarms.run(recordsBefore).changes;
    deleted += this.deleteEvents.run(recordsBefore).changes;
    return deleted;
  }

  health(): StoreHealth {
    const open = this.state === 'open';
    return {
      kind: 'sqlite',
      ok: open && this.lastError === null,
      detail: open ? this.lastError : `store ${this.state}`,
      queued: 0,
      queueCapacity: 0,
    };
  }

  private shut(next: Lifecycle): void {
    if (this.state !== 'open') {
      if (next === 'destroyed') this.state = 'destroyed';
      return;
    }
    this.state = next;
    this.scheduler.clearInterval(this.timer);
    // Closing the last connection checkpoints the WAL into the main file.
    this.db.close();
  }

  async close(): Promise<void> {
    this.shut('closed');
  }

  destroy(_err?: Error): void {
    this.shut('destroyed');
  }
}

/** Opens (creating or migrating) a SQLite trend store; throws STORE_OPEN_FAILED or STORE_SCHEMA_TOO_NEW. */
export function openSqliteStore(options: SqliteStoreOptions): SqliteStore {
  return new SqliteStore(options);
}
