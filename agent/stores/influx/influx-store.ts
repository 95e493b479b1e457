/**
 * TrendStore on InfluxDB 1.x, with store-and-forward.
 *
 * Write path: records are checked, encoded once into line protocol (the
 * same text goes to the server or to the spool) and gathered into a batch
 * that is flushed when it reaches `batchSize` points or `flushIntervalMs`
 * after its first point (timers from the injected Scheduler). A flush posts
 * each retention policy's points; whatever the server does not take because
 * it is unreachable goes into the on-disk spool. writeResults resolves only
 * then: its points are in InfluxDB or fsynced in the spool.
 *
 * While the spool holds anything, new batches are appended behind it rather
 * than posted, so the server sees writes in the order they were made. The
 * spool drains oldest first with exponential back-off between failed tries.
 * A chunk is removed from the spool only after InfluxDB acknowledged it; a
 * crash in between re-sends it, which is harmless because a point with the
 * same measurement, tag set and timestamp overwrites the earlier one
 * (at-least-once delivery + idempotent keys = each point stored once;
 * docs/storage.md, "Exactly once").
 *
 * Database and retention policies are created (or their durations
 * corrected) through the influx package before the first write, and again
 * if the database disappears; the store opens even while InfluxDB is down.
 */
import { InfluxDB, type IPoolOptions } from 'influx';
import { AgentError, isAgentError } from '../../core/errors.js';
import type { AlarmCondition, AlarmLevel, AlarmState, AlarmTransition, DisturbanceEvent, FaultType, Phase } from '../../core/detect/types.js';
import type { AlarmQuery, EventQuery, Scheduler, StoreHealth, TimeRange, TimerHandle, TrendStore } from '../../core/ports.js';
import { AGGREGATE_WINDOWS, type AggregateWindow, type SequenceResult } from '../../core/result.js';
import { realScheduler } from '../real-scheduler.js';
import { checkAlarm, checkEvent, checkResults } from '../record-check.js';
import { compareAlarms, compareEvents } from '../record-order.js';
import { resolveRetention, type RetentionDays } from '../retention.js';
import { SEQUENCE_COLUMNS, rowToSequence } from '../sequence-columns.js';
import { Spool, type SpooledPoint } from '../spool/spool.js';
import { querySeries, writeLines, type InfluxEndpoint, type QuerySeries } from './influx-http.js';
import { MEASUREMENT, RETENTION_POLICY } from './influx-schema.js';
import { ident, msLiteral, source, stringLit } from './influxql.js';
import { alarmLine, eventLine, LineBatch } from './line-protocol.js';

export interface InfluxStoreOptions {
  /** http(s)://HOST:PORT of the InfluxDB 1.x HTTP API. */
  readonly url: string;
  readonly database: string;
  readonly username?: string | undefined;
  readonly password?: string | undefined;
  /** The store-and-forward spool file (SQLite); created with its folder if missing. */
  readonly spoolPath: string;
  /** Most points the spool holds before dropping the oldest (default 1,000,000). */
  readonly spoolCapacity?: number | undefined;
  readonly retention?: Partial<RetentionDays> | undefined;
  readonly scheduler?: Scheduler | undefined;
  /** Flush when this many points are waiting (default 5000). */
  readonly batchSize?: number | undefined;
  /** Flush this long after the first waiting point, ms (default 1000). */
  readonly flushIntervalMs?: number | undefined;
  /** Per HTTP request, ms (default 10,000). */
  readonly requestTimeoutMs?: number | undefined;
  /** Back-off between drain attempts: first and longest wait, ms (defaults 250 and 30,000). */
  readonly retryMinMs?: number | undefined;
  readonly retryMaxMs?: number | undefined;
  /** Points per drain request (default 5000). */
  readonly drainBatch?: number | undefined;
  /** How long close() keeps draining the spool before leaving the rest for the next start, ms (default 5000). */
  readonly closeDrainMs?: number | undefined;
  /** Told about dropped (STORE_QUEUE_FULL) and refused (STORE_WRITE_FAILED) points that no caller is waiting for. */
  readonly onWarning?: ((err: AgentError) => void) | undefined;
}

type Lifecycle = 'open' | 'closing' | 'closed' | 'destroyed';

interface Waiter {
  resolve(): void;
  reject(err: Error): void;
}

export interface InfluxStoreStats {
  /** Points the server dropped as older than their retention policy. */
  readonly expired: number;
  /** Spooled points the server refused (HTTP 400) and that were discarded. */
  readonly refused: number;
  /** Points dropped by the spool's overflow policy (over the life of the spool file). */
  readonly dropped: number;
  readonly queued: number;
}

class Unreachable extends Error {
  constructor(
    message: string,
    readonly missingDatabase: boolean,
  ) {
    super(message);
  }
}

/**
 * The store owns retry timing (its back-off runs on the injected scheduler);
 * the client's own host back-off would add hidden real-time waits after a
 * failure, so it is turned off: a zero delay keeps the host enabled.
 */
const NO_CLIENT_BACKOFF: NonNullable<IPoolOptions['backoff']> = {
  getDelay: () => 0,
  next: () => NO_CLIENT_BACKOFF,
  reset: () => NO_CLIENT_BACKOFF,
};

function goDurationMs(d: string): number {
  const m = /^(?:(\d+)h)?(?:(\d+)m)?(?:(\d+)s)?$/.exec(d);
  if (m === null) return Number.NaN;
  return ((Number(m[1] ?? 0) * 60 + Number(m[2] ?? 0)) * 60 + Number(m[3] ?? 0)) * 1000;
}

function groupByTarget(points: readonly SpooledPoint[]): Map<string, string[]> {
  const groups = new Map<string, string[]>();
  for (const p of points) {
    let g = groups.get(p.target);
    if (g === undefined) groups.set(p.target, (g = []));
    g.push(p.line);
  }
  return groups;
}

function spoolEntries(groups: Map<string, LineBatch>): SpooledPoint[] {
  const out: SpooledPoint[] = [];
  for (const [target, batch] of groups) for (const line of batch.lines()) out.push({ target, line });
  return out;
}

function columnIndex(s: QuerySeries, name: string): number {
  return s.columns.indexOf(name);
}

export class InfluxStore implements TrendStore {
  readonly retention: RetentionDays;
  private readonly ep: InfluxEndpoint;
  private readonly admin: InfluxDB;
  private readonly spool: Spool;
  private readonly scheduler: Scheduler;
  private readonly batchSize: number;
  private readonly flushIntervalMs: number;
  private readonly retryMinMs: number;
  private readonly retryMaxMs: number;
  private readonly drainBatch: number;
  private readonly closeDrainMs: number;
  private readonly onWarning: (err: AgentError) => void;

  private state: Lifecycle = 'open';
  private schemaReady = false;
  /** Lines waiting for the next flush, per retention policy, in write order. */
  private pending = new Map<string, LineBatch>();
  /** Starting size of a new batch buffer: the largest body sent so far, so a steady load does not regrow it. */
  private batchBytes = 64 * 1024;
  private pendingCount = 0;
  private waiters: Waiter[] = [];
  private flushTimer: TimerHandle | null = null;
  private flushChain: Promise<void> = Promise.resolve();
  private draining = false;
  private drainDone: Promise<void> = Promise.resolve();
  private retryTimer: TimerHandle | null = null;
  private retryDelay: number;
  private reachable = true;
  private lastProblem: string | null = null;
  private expired = 0;
  private refused = 0;
  private closing: Promise<void> | null = null;
  private readonly aborter = new AbortController();

  constructor(options: InfluxStoreOptions) {
    this.retention = resolveRetention(options.retention);
    let url: URL;
    try {
      url = new URL(options.url);
      if (url.protocol !== 'http:' && url.protocol !== 'https:') throw new Error('protocol');
    } catch {
      throw new AgentError('STORE_OPEN_FAILED', `InfluxDB url "${options.url}" must look like http://HOST:PORT`, { details: { field: 'url' } });
    }
    if (typeof options.database !== 'string' || options.database.length === 0) {
      throw new AgentError('STORE_OPEN_FAILED', 'an InfluxDB database name is required', { details: { field: 'database' } });
    }
    const timeoutMs = options.requestTimeoutMs ?? 10_000;
    this.ep = {
      url: `${url.protocol}//${url.host}`,
      database: options.database,
      username: options.username,
      password: options.password,
      timeoutMs,
    };
    this.admin = new InfluxDB({
      host: url.hostname,
      port: url.port === '' ? (url.protocol === 'https:' ? 443 : 80) : Number(url.port),
      protocol: url.protocol === 'https:' ? 'https' : 'http',
      database: options.database,
      username: options.username ?? 'root',
      password: options.password ?? 'root',
      pool: { requestTimeout: timeoutMs, maxRetries: 0, backoff: NO_CLIENT_BACKOFF },
    });
    this.scheduler = options.scheduler ?? realScheduler;
    this.batchSize = options.batchSize ?? 5000;
    this.flushIntervalMs = options.flushIntervalMs ?? 1000;
    this.retryMinMs = options.retryMinMs ?? 250;
    this.retryMaxMs = options.retryMaxMs ?? 30_000;
    this.retryDelay = this.retryMinMs;
    this.drainBatch = options.drainBatch ?? 5000;
    this.closeDrainMs = options.closeDrainMs ?? 5000;
    this.onWarning = options.onWarning ?? (() => undefined);
    this.spool = new Spool({ path: options.spoolPath, capacity: options.spoolCapacity ?? 1_000_000 });
    // Points left queued by an earlier run (or a crash) go out first.
    if (this.spool.size > 0) this.kickDrain();
  }

  // ---------- schema ----------

  private async ensureSchema(): Promise<void> {
    if (this.schemaReady) return;
    try {
      await this.admin.createDatabase(this.ep.database);
      const existing = await this.admin.showRetentionPolicies(this.ep.database);
      for (const key of [...AGGREGATE_WINDOWS, 'records'] as const) {
        const name = RETENTION_POLICY[key];
        const minutes = Math.max(60, Math.round(this.retention[key] * 1440));
        const found = existing.find((p) => p.name === name);
        const options = { database: this.ep.database, duration: `${minutes}m`, replication: 1 };
        if (found === undefined) await this.admin.createRetentionPolicy(name, options);
        else if (goDurationMs(found.duration) !== minutes * 60_000) await this.admin.alterRetentionPolicy(name, options);
      }
      this.schemaReady = true;
    } catch (e) {
      throw new Unreachable(`preparing database ${this.ep.database} on ${this.ep.url} failed: ${e instanceof Error ? e.message : String(e)}`, false);
    }
  }

  // ---------- write path ----------

  private linesFor(target: string): LineBatch {
    let lines = this.pending.get(target);
    if (lines === undefined) this.pending.set(target, (lines = new LineBatch(this.batchBytes)));
    return lines;
  }

  /** Waits for the flush that takes the `added` lines just put into `pending`. */
  private enqueued(added: number): Promise<void> {
    if (added === 0) return Promise.resolve();
    this.pendingCount += added;
    return new Promise<void>((resolve, reject) => {
      this.waiters.push({ resolve, reject });
      if (this.pendingCount >= this.batchSize) this.requestFlush();
      else if (this.flushTimer === null) this.flushTimer = this.scheduler.setTimeout(() => this.requestFlush(), this.flushIntervalMs);
    });
  }

  private requestFlush(): Promise<void> {
    if (this.flushTimer !== null) {
      this.scheduler.clearTimeout(this.flushTimer);
      this.flushTimer = null;
    }
    this.flushChain = this.flushChain.then(() => this.flushOnce());
    return this.flushChain;
  }

  private async flushOnce(): Promise<void> {
    if (this.pendingCount === 0) return;
    const groups = this.pending;
    const waiters = this.waiters;
    this.pending = new Map();
    this.pendingCount = 0;
    this.waiters = [];
    try {
      await this.deliver(groups);
      // Writers are woken one turn later, after a flush already queued has taken its lines and started: a
      // writer that prepares its next batch when woken then does so while the server takes this one,
      // instead of the server waiting for it. (An ordering device, not a delay: hence no scheduler timer.)
      setImmediate(() => {
        for (const w of waiters) w.resolve();
      });
    } catch (e) {
      const err = isAgentError(e) ? e : new AgentError('STORE_WRITE_FAILED', `writing to InfluxDB failed: ${String(e)}`, { cause: e });
      for (const w of waiters) w.reject(err);
    }
  }

  /** Puts lines into InfluxDB or the spool; throws only when neither took them. */
  private async deliver(groups: Map<string, LineBatch>): Promise<void> {
    if (this.spool.size > 0 || this.draining) {
      this.toSpool(spoolEntries(groups));
      return;
    }
    try {
      await this.ensureSchema();
    } catch (e) {
      this.noteUnreachable(e instanceof Error ? e.message : String(e));
      this.toSpool(spoolEntries(groups));
      return;
    }
    let refusal: string | null = null;
    const left: SpooledPoint[] = [];
    for (const [target, batch] of groups) {
      if (left.length > 0) {
        for (const line of batch.lines()) left.push({ target, line });
        continue;
      }
      if (batch.byteLength > this.batchBytes) this.batchBytes = batch.byteLength;
      const out = await writeLines(this.ep, target, batch.body(), this.aborter.signal);
      if (out.kind === 'ok') {
        this.expired += out.expired;
        this.noteReachable();
      } else if (out.kind === 'transient') {
        if (out.missingDatabase) this.schemaReady = false;
        this.noteUnreachable(out.reason);
        for (const line of batch.lines()) left.push({ target, line });
      } else {
        refusal = out.reason;
      }
    }
    if (left.length > 0) this.toSpool(left);
    if (refusal !== null) {
      throw new AgentError('STORE_WRITE_FAILED', `${refusal}; the batch's other points were stored or queued`, { details: { database: this.ep.database } });
    }
  }

  private warn(err: AgentError): void {
    try {
      this.onWarning(err);
    } catch {
      // a failing listener must not turn a queued batch into a failed one
    }
  }

  private toSpool(points: SpooledPoint[]): void {
    const { dropped } = this.spool.append(points);
    if (dropped > 0) {
      this.warn(
        new AgentError(
          'STORE_QUEUE_FULL',
          `store-and-forward spool full (${this.spool.capacity} points): dropped the ${dropped} oldest queued points; raise spoolCapacity or restore InfluxDB`,
          { details: { dropped, capacity: this.spool.capacity } },
        ),
      );
    }
    this.kickDrain();
  }

  private noteUnreachable(reason: string): void {
    this.reachable = false;
    this.lastProblem = reason;
  }

  private noteReachable(): void {
    this.reachable = true;
    this.lastProblem = null;
  }

  // ---------- drain ----------

  private kickDrain(): void {
    if (this.draining || this.retryTimer !== null || this.state === 'destroyed' || this.state === 'closed') return;
    this.draining = true;
    this.drainDone = this.drain(Number.POSITIVE_INFINITY).finally(() => {
      this.draining = false;
      // A flush may have appended after the drain's last look at the spool (it saw `draining` and left it to us).
      if (this.spool.size > 0 && this.retryTimer === null && this.state === 'open') this.kickDrain();
    });
  }

  /** Sends the spool oldest first until it is empty, the deadline passes, or InfluxDB fails (then schedules a retry). */
  private async drain(deadline: number): Promise<void> {
    try {
      while (this.spool.size > 0 && this.state !== 'destroyed' && this.scheduler.now() < deadline) {
        await this.ensureSchema();
        const chunk = this.spool.peek(this.drainBatch);
        if (chunk.length === 0) break;
        for (const [target, lines] of groupByTarget(chunk)) {
          const out = await writeLines(this.ep, target, lines.join('\n'), this.aborter.signal);
          if (out.kind === 'transient') {
            if (out.missingDatabase) this.schemaReady = false;
            throw new Unreachable(out.reason, out.missingDatabase);
          }
          if (out.kind === 'refused') {
            this.refused += lines.length;
            this.warn(new AgentError('STORE_WRITE_FAILED', `${out.reason}; discarded ${lines.length} queued points that InfluxDB will never accept`));
          } else {
            this.expired += out.expired;
          }
        }
        // destroy() may have run while the request was out; the spool is closed then.
        if ((this.state as Lifecycle) === 'destroyed') return;
        this.spool.remove(chunk[0].id, chunk[chunk.length - 1].id);
        this.noteReachable();
        this.retryDelay = this.retryMinMs;
      }
    } catch (e) {
      if (this.state === 'destroyed') return;
      this.noteUnreachable(e instanceof Error ? e.message : String(e));
      if (this.state === 'open') {
        const wait = this.retryDelay;
        this.retryDelay = Math.min(this.retryMaxMs, this.retryDelay * 2);
        this.retryTimer = this.scheduler.setTimeout(() => {
          this.retryTimer = null;
          this.kickDrain();
        }, wait);
      }
    }
  }

  // ---------- TrendStore ----------

  private assertOpen(code: 'STORE_WRITE_FAILED' | 'STORE_QUERY_FAILED'): void {
    if (this.state !== 'open') throw new AgentError(code, `the InfluxDB store for ${this.ep.database} is ${this.state}; open it again to use it`);
  }

  writeResults(results: readonly SequenceResult[]): Promise<void> {
    try {
      this.assertOpen('STORE_WRITE_FAILED');
      checkResults(results);
      let target = '';
      let lines: LineBatch | null = null;
      for (const r of results) {
        const rp = RETENTION_POLICY[r.window as AggregateWindow];
        if (rp !== target || lines === null) lines = this.linesFor((target = rp));
        lines.addSequence(r);
      }
      return this.enqueued(results.length);
    } catch (e) {
      return Promise.reject(e);
    }
  }

  writeAlarm(transition: AlarmTransition): Promise<void> {
    try {
      this.assertOpen('STORE_WRITE_FAILED');
      checkAlarm(transition);
      this.linesFor(RETENTION_POLICY.records).addText(alarmLine(transition));
      return this.enqueued(1);
    } catch (e) {
      return Promise.reject(e);
    }
  }

  writeEvent(event: DisturbanceEvent): Promise<void> {
    try {
      this.assertOpen('STORE_WRITE_FAILED');
      checkEvent(event);
      this.linesFor(RETENTION_POLICY.records).addText(eventLine(event));
      return this.enqueued(1);
    } catch (e) {
      return Promise.reject(e);
    }
  }

  /** Sends what is waiting now instead of at the next interval; resolves when it is in InfluxDB or the spool. */
  flush(): Promise<void> {
    return this.requestFlush();
  }

  private async select(what: string, q: string, onSeries: (statement: number, s: QuerySeries) => void): Promise<void> {
    this.assertOpen('STORE_QUERY_FAILED');
    try {
      await this.ensureSchema();
      await querySeries(this.ep, q, onSeries);
    } catch (e) {
      throw new AgentError('STORE_QUERY_FAILED', `${what} from InfluxDB ${this.ep.url}/${this.ep.database} failed: ${e instanceof Error ? e.message : String(e)}`, {
        cause: e,
      });
    }
  }

  async queryTrend(feeder: string, window: AggregateWindow, range: TimeRange): Promise<SequenceResult[]> {
    this.assertOpen('STORE_QUERY_FAILED');
    if (!(AGGREGATE_WINDOWS as readonly string[]).includes(window)) {
      throw new AgentError('STORE_QUERY_FAILED', `window must be one of ${AGGREGATE_WINDOWS.join(', ')}, found "${String(window)}"`);
    }
    if (!(range.from < range.to)) return [];
    const out: SequenceResult[] = [];
    const q =
      `SELECT * FROM ${source(this.ep.database, RETENTION_POLICY[window], MEASUREMENT.sequence)} ` +
      `WHERE ${ident('feeder')} = ${stringLit(feeder)} AND ${ident('window')} = ${stringLit(window)} ` +
      `AND time >= ${msLiteral(range.from)} AND time < ${msLiteral(range.to)}`;
    await this.select('reading a trend', q, (_st, s) => {
      const t = columnIndex(s, 'time');
      const idx = SEQUENCE_COLUMNS.map((c) => columnIndex(s, c));
      const row = new Array<unknown>(idx.length);
      for (const v of s.values ?? []) {
        for (let k = 0; k < idx.length; k++) row[k] = idx[k] < 0 ? null : v[idx[k]];
        out.push(rowToSequence(feeder, window, v[t] as number, row));
      }
    });
    return out.sort((x, y) => x.ts - y.ts);
  }

  private where(q: { feeder?: string | undefined; from?: number | undefined; to?: number | undefined }): string {
    const terms: string[] = [];
    if (q.feeder !== undefined) terms.push(`${ident('feeder')} = ${stringLit(q.feeder)}`);
    if (q.from !== undefined) terms.push(`time >= ${msLiteral(q.from)}`);
    if (q.to !== undefined) terms.push(`time < ${msLiteral(q.to)}`);
    return terms.length === 0 ? '' : ` WHERE ${terms.join(' AND ')}`;
  }

  private static alarmsOf(s: QuerySeries, out: AlarmTransition[]): void {
    const col = (n: string): number => columnIndex(s, n);
    const [t, feeder, condition, state, level, value, limit, phase, message] = ['time', 'feeder', 'condition', 'state', 'level', 'value', 'limit', 'phase', 'message'].map(col);
    const tag = (v: unknown[], k: number, name: string): string => (k >= 0 ? (v[k] as string) : (s.tags?.[name] ?? ''));
    const opt = <T>(v: unknown[], k: number): T | null => (k < 0 || v[k] === undefined || v[k] === null ? null : (v[k] as T));
    for (const v of s.values ?? []) {
      out.push({
        ts: v[t] as number,
        feeder: tag(v, feeder, 'feeder'),
        condition: tag(v, condition, 'condition') as AlarmCondition,
        state: v[state] as AlarmState,
        level: v[level] as AlarmLevel,
        value: opt<number>(v, value),
        limit: opt<number>(v, limit),
        phase: opt<Phase>(v, phase),
        message: (opt<string>(v, message) ?? '') as string,
      });
    }
  }

  async queryAlarms(query: AlarmQuery): Promise<AlarmTransition[]> {
    const out: AlarmTransition[] = [];
    await this.select('reading alarms', `SELECT * FROM ${source(this.ep.database, RETENTION_POLICY.records, MEASUREMENT.alarm)}${this.where(query)}`, (_st, s) =>
      InfluxStore.alarmsOf(s, out),
    );
    return out.sort(compareAlarms);
  }

  async activeAlarms(): Promise<AlarmTransition[]> {
    const out: AlarmTransition[] = [];
    // LIMIT applies per series when grouped by tags: the latest transition of each (feeder, condition).
    const q = `SELECT * FROM ${source(this.ep.database, RETENTION_POLICY.records, MEASUREMENT.alarm)} GROUP BY ${ident('feeder')}, ${ident('condition')} ORDER BY time DESC LIMIT 1`;
    await this.select('reading active alarms', q, (_st, s) => InfluxStore.alarmsOf(s, out));
    return out.filter((a) => a.state === 'raised').sort(compareAlarms);
  }

  async queryEvents(query: EventQuery): Promise<DisturbanceEvent[]> {
    const out: DisturbanceEvent[] = [];
    await this.select('reading events', `SELECT * FROM ${source(this.ep.database, RETENTION_POLICY.records, MEASUREMENT.event)}${this.where(query)}`, (_st, s) => {
      const col = (n: string): number => columnIndex(s, n);
      const [t, feeder, type, dur, peak, peakPhase, i0, i2, message] = ['time', 'feeder', 'type', 'duration_ms', 'peak_current', 'peak_phase', 'i0_over_i1', 'i2_over_i1', 'message'].map(col);
      const opt = (v: unknown[], k: number): number | null => (k < 0 || typeof v[k] !== 'number' ? null : (v[k] as number));
      for (const v of s.values ?? []) {
        out.push({
          ts: v[t] as number,
          feeder: v[feeder] as string,
          type: v[type] as FaultType,
          durationMs: v[dur] as number,
          peakCurrent: v[peak] as number,
          peakPhase: v[peakPhase] as Phase,
          i0OverI1: opt(v, i0),
          i2OverI1: opt(v, i2),
          message: (v[message] as string | null) ?? '',
        });
      }
    });
    return out.sort(compareEvents);
  }

  async feeders(): Promise<{ feeder: string; lastTs: number }[]> {
    const last = new Map<string, number>();
    const q = AGGREGATE_WINDOWS.map(
      (w) => `SELECT last(${ident('count')}) FROM ${source(this.ep.database, RETENTION_POLICY[w], MEASUREMENT.sequence)} GROUP BY ${ident('feeder')}`,
    ).join('; ');
    await this.select('listing feeders', q, (_st, s) => {
      const feeder = s.tags?.feeder;
      const t = columnIndex(s, 'time');
      if (feeder === undefined || t < 0) return;
      for (const v of s.values ?? []) {
        const ts = v[t] as number;
        if (ts > (last.get(feeder) ?? -Infinity)) last.set(feeder, ts);
      }
    });
    return [...last]
      .map(([feeder, lastTs]) => ({ feeder, lastTs }))
      .sort((x, y) => (x.feeder < y.feeder ? -1 : x.feeder > y.feeder ? 1 : 0));
  }

  stats(): InfluxStoreStats {
    return { expired: this.expired, refused: this.refused, dropped: this.spool.dropped, queued: this.spool.size };
  }

  health(): StoreHealth {
    const open = this.state === 'open';
    const queued = open || this.state === 'closing' ? this.spool.size : 0;
    let detail: string | null = null;
    if (!open) detail = `store ${this.state}`;
    else if (!this.reachable) detail = `${this.lastProblem ?? 'InfluxDB unreachable'}; ${queued} points queued on disk`;
    else if (queued > 0) detail = `draining ${queued} queued points`;
    if (open && this.spool.dropped > 0) detail = `${detail === null ? '' : `${detail}; `}STORE_QUEUE_FULL: ${this.spool.dropped} points dropped (oldest first)`;
    return { kind: 'influx', ok: open && this.reachable, detail, queued, queueCapacity: this.spool.capacity };
  }

  close(): Promise<void> {
    if (this.closing !== null) return this.closing;
    if (this.state !== 'open') return Promise.resolve();
    this.state = 'closing';
    this.closing = (async () => {
      await this.requestFlush();
      if (this.retryTimer !== null) {
        this.scheduler.clearTimeout(this.retryTimer);
        this.retryTimer = null;
      }
      await this.drainDone;
      // One last bounded try, without back-off: whatever is left stays in the spool for the next start.
      if (this.spool.size > 0 && this.reachable) {
        this.draining = true;
        await this.drain(this.scheduler.now() + this.closeDrainMs).finally(() => {
          this.draining = false;
        });
      }
      if (this.state === 'closing') {
        this.state = 'closed';
        this.spool.close();
      }
    })();
    return this.closing;
  }

  destroy(err?: Error): void {
    if (this.state === 'destroyed') return;
    this.state = 'destroyed';
    if (this.flushTimer !== null) this.scheduler.clearTimeout(this.flushTimer);
    if (this.retryTimer !== null) this.scheduler.clearTimeout(this.retryTimer);
    this.flushTimer = null;
    this.retryTimer = null;
    this.aborter.abort(err);
    const reason = new AgentError('STORE_WRITE_FAILED', 'the InfluxDB store was destroyed before these points were stored or queued', { cause: err });
    for (const w of this.waiters) w.reject(reason);
    this.waiters = [];
    this.pending = new Map();
    this.pendingCount = 0;
    this.spool.close();
  }
}

/** Opens the spool and returns the store; InfluxDB itself may still be down (points queue until it is back). */
export function openInfluxStore(options: InfluxStoreOptions): InfluxStore {
  return new InfluxStore(options);
}
