/**
 * Durable, bounded store-and-forward queue of InfluxDB line-protocol points,
 * kept in a small SQLite file.
 *
 * Why a SQLite file rather than append-only segment files: appending a batch
 * and removing a delivered prefix must each be atomic and survive a crash at
 * any instant. SQLite gives both (one transaction per append, one per
 * removal) plus torn-write detection, where segment files would need our own
 * framing, checksums, an acknowledged-offset file and compaction. The cost
 * is one fsync per append (journal_mode = WAL, synchronous = FULL), the same
 * as fsync-per-batch segments.
 *
 * Bound and overflow: at most `capacity` points. When an append would pass
 * it, the oldest points are dropped (drop-oldest: in an outage the newest
 * data is worth most), counted in `dropped`, which is persisted with the
 * queue so the count survives restarts.
 */
import { mkdirSync } from 'node:fs';
import { dirname } from 'node:path';
import Database from 'better-sqlite3';
import { AgentError } from '../../core/errors.js';

export interface SpooledPoint {
  /** Where the point goes: the InfluxDB retention policy. */
  readonly target: string;
  /** One line of line protocol, timestamp in ms. */
  readonly line: string;
}

export interface SpoolEntry extends SpooledPoint {
  readonly id: number;
}

export interface SpoolOptions {
  readonly path: string;
  /** Most points held; at least 1. */
  readonly capacity: number;
}

export interface AppendOutcome {
  /** Points dropped by this append to stay within capacity (oldest first, possibly from this batch). */
  readonly dropped: number;
}

const SPOOL_VERSION = 1;

export class Spool {
  readonly path: string;
  readonly capacity: number;
  private readonly db: Database.Database;
  private count: number;
  private droppedTotal: number;
  private open = true;
  private readonly insert: Database.Statement;
  private readonly dropOldest: Database.Statement;
  private readonly clearAll: Database.Statement;
  private readonly head: Database.Statement;
  private readonly removeRange: Database.Statement;
  private readonly saveDropped: Database.Statement;
  private readonly appendTx: (points: readonly SpooledPoint[]) => number;

  constructor(options: SpoolOptions) {
    if (!Number.isSafeInteger(options.capacity) || options.capacity < 1) {
      throw new AgentError('STORE_OPEN_FAILED', `spool capacity must be a whole number of points >= 1, found ${String(options.capacity)}`, {
        details: { field: 'spoolCapacity' },
      });
    }
    this.path = options.path;
    this.capacity = options.capacity;
    let db: Database.Database | undefined;
    try {
      mkdirSync(dirname(options.path), { recursive: true });
      db = new Database(options.path);
      db.pragma('journal_mode = WAL');
      // FULL: the WAL is fsynced at every commit, so "queued" means on disk even across a power loss.
      db.pragma('synchronous = FULL');
      const v = db.pragma('user_version', { simple: true }) as number;
      if (v > SPOOL_VERSION) {
        throw new AgentError('STORE_SCHEMA_TOO_NEW', `spool ${options.path} has version ${v}, newer than ${SPOOL_VERSION}; upgrade seqmon or move the file away`);
      }
      if (v === 0) {
        db.exec(`
          CREATE TABLE IF NOT EXISTS point (id INTEGER PRIMARY KEY AUTOINCREMENT, target TEXT NOT NULL, line TEXT NOT NULL);
          CREATE TABLE IF NOT EXISTS meta (key TEXT PRIMARY KEY, value INTEGER NOT NULL);
          INSERT OR IGNORE INTO meta VALUES ('dropped', 0);
          PRAGMA user_version = ${SPOOL_VERSION};`);
      }
    } catch (e) {
      db?.close();
      if (e instanceof AgentError) throw e;
      throw new AgentError('STORE_OPEN_FAILED', `could not open the store-and-forward spool ${options.path}: ${e instanceof Error ? e.message : String(e)}`, { cause: e });
    }
    this.db = db;
    this.count = db.prepare('SELECT COUNT(*) FROM point').pluck().get() as number;
    this.droppedTotal = db.prepare("SELECT value FROM meta WHERE key = 'dropped'").pluck().get() as number;
    this.insert = db.prepare('INSERT INTO point (target, line) VALUES (?, ?)');
    this.dropOldest = db.prepare('DELETE FROM point WHERE id IN (SELECT id FROM point ORDER BY id LIMIT ?)');
    this.clearAll = db.prepare('DELETE FROM point');
    this.head = db.prepare('SELECT id, target, line FROM point ORDER BY id LIMIT ?');
    this.removeRange = db.prepare('DELETE FROM point WHERE id BETWEEN ? AND ?');
    this.saveDropped = db.prepare("UPDATE meta SET value = ? WHERE key = 'dropped'");
    this.appendTx = db.transaction((points: readonly SpooledPoint[]): number => {
      let dropped = 0;
      let from = 0;
      if (points.length >= this.capacity) {
        // The batch alone fills the spool: keep its newest `capacity` points.
        dropped = this.count + points.length - this.capacity;
        from = points.length - this.capacity;
        this.clearAll.run();
        this.count = 0;
      } else if (this.count + points.length > this.capacity) {
        dropped = this.count + points.length - this.capacity;
        this.count -= this.dropOldest.run(dropped).changes;
      }
      for (let k = from; k < points.length; k++) this.insert.run(points[k].target, points[k].line);
      this.count += points.length - from;
      if (dropped > 0) this.saveDropped.run(this.droppedTotal + dropped);
      return dropped;
    });
  }

  /** Points queued now. */
  get size(): number {
    return this.count;
  }

  /** Points dropped by the overflow policy over the life of this spool file. */
  get dropped(): number {
    return this.droppedTotal;
  }

  private assertOpen(): void {
    if (!this.open) throw new AgentError('STORE_WRITE_FAILED', `the spool ${this.path} is closed`);
  }

  /** Appends in one transaction; returns once the points are on disk (fsynced). */
  append(points: readonly SpooledPoint[]): AppendOutcome {
    this.assertOpen();
    if (points.length === 0) return { dropped: 0 };
    const before = this.count;
    try {
      const dropped = this.appendTx(points);
      this.droppedTotal += dropped;
      return { dropped };
    } catch (e) {
      this.count = before;
      throw new AgentError('STORE_WRITE_FAILED', `could not queue ${points.length} points in ${this.path}: ${e instanceof Error ? e.message : String(e)}`, {
        cause: e,
      });
    }
  }

  /** The oldest points, oldest first, without removing them. */
  peek(max: number): SpoolEntry[] {
    this.assertOpen();
    return this.head.all(max) as SpoolEntry[];
  }

  /** Removes delivered entries firstId..lastId (a prefix returned by peek; ids dropped meanwhile are simply gone). */
  remove(firstId: number, lastId: number): void {
    this.assertOpen();
    this.count -= this.removeRange.run(firstId, lastId).changes;
  }

  close(): void {
    if (!this.open) return;
    this.open = false;
    this.db.close();
  }
}
