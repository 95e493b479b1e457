/**
 * Picks and opens the trend store named by a store spec, the syntax of the
 * SEQMON_STORE variable (shared/ARCHITECTURE.md):
 *   sqlite:PATH                            e.g. sqlite:./data/seqmon.db
 *   influx:http://HOST:PORT/DATABASE       e.g. influx:http://127.0.0.1:8086/seqmon
 * (https and user:password@ in the URL are accepted; the port defaults to
 * 8086, InfluxDB 1.x's HTTP port).
 */
import { join } from 'node:path';
import { AgentError } from '../core/errors.js';
import type { Scheduler, TrendStore } from '../core/ports.js';
import { InfluxStore, type InfluxStoreOptions } from './influx/influx-store.js';
import type { RetentionDays } from './retention.js';
import { SqliteStore } from './sqlite/sqlite-store.js';

export type StoreSpec =
  | { readonly kind: 'sqlite'; readonly path: string }
  | { readonly kind: 'influx'; readonly url: string; readonly database: string; readonly username?: string; readonly password?: string };

/** Tuning of the InfluxDB store that a spec does not carry. */
export type InfluxTuning = Partial<
  Pick<
    InfluxStoreOptions,
    'batchSize' | 'flushIntervalMs' | 'requestTimeoutMs' | 'retryMinMs' | 'retryMaxMs' | 'drainBatch' | 'closeDrainMs' | 'spoolCapacity'
  >
>;

export interface OpenStoreOptions {
  /** Folder for the InfluxDB store's spool file (default ./data, as SEQMON_DATA_DIR). */
  readonly dataDir?: string | undefined;
  readonly retention?: Partial<RetentionDays> | undefined;
  readonly scheduler?: Scheduler | undefined;
  readonly influx?: InfluxTuning | undefined;
  readonly onWarning?: InfluxStoreOptions['onWarning'];
}

const INFLUX_DEFAULT_PORT = '8086';
const USAGE = 'use sqlite:PATH (for example sqlite:./data/seqmon.db) or influx:http://HOST:PORT/DATABASE';

/** The spec as it may be shown: a password in it is masked. */
function shown(spec: string): string {
  return spec.replace(/\/\/([^/@:]*):[^/@]*@/, '//$1:***@');
}

function bad(spec: string, why: string): AgentError {
  return new AgentError('STORE_OPEN_FAILED', `store "${shown(spec)}": ${why}; ${USAGE}`, { details: { spec: shown(spec) } });
}

export function parseStoreSpec(input: string): StoreSpec {
  const spec = typeof input === 'string' ? input.trim() : '';
  if (spec.startsWith('sqlite:')) {
    const path = spec.slice('sqlite:'.length);
    if (path.length === 0) throw bad(spec, 'the SQLite file path is missing');
    return { kind: 'sqlite', path };
  }
  if (spec.startsWith('influx:')) {
    let url: URL;
    try {
      url = new URL(spec.slice('influx:'.length));
    } catch {
      throw bad(spec, 'the InfluxDB address is not a URL');
    }
    if (url.protocol !== 'http:' && url.protocol !== 'https:') throw bad(spec, `the InfluxDB address must start with http:// or https://, found ${url.protocol}//`);
    if (url.hostname === '') throw bad(spec, 'the InfluxDB host is missing');
    if (url.search !== '' || url.hash !== '') throw bad(spec, 'a query string or fragment is not part of the syntax');
    const segments = url.pathname.split('/').filter((s) => s.length > 0);
    if (segments.length !== 1) throw bad(spec, 'the URL path must be exactly the database name');
    const database = decodeURIComponent(segments[0]);
    const base = `${url.protocol}//${url.hostname.includes(':') ? `[${url.hostname}]` : url.hostname}:${url.port === '' ? INFLUX_DEFAULT_PORT : url.port}`;
    const out: { kind: 'influx'; url: string; database: string; username?: string; password?: string } = { kind: 'influx', url: base, database };
    if (url.username !== '') out.username = decodeURIComponent(url.username);
    if (url.password !== '') out.password = decodeURIComponent(url.password);
    return out;
  }
  throw bad(spec, spec.length === 0 ? 'the store spec is empty' : 'the kind of store is not recognised');
}

/** The spool file of an InfluxDB store: one per database, so two stores never share a queue. */
export function spoolPathFor(dataDir: string, database: string): string {
  return join(dataDir, `influx-spool-${database.replace(/[^A-Za-z0-9_.-]/g, '_')}.db`);
}

/** Parses `spec` and opens that store; throws STORE_OPEN_FAILED (or STORE_SCHEMA_TOO_NEW) with what to fix. */
export async function openStore(spec: string, options: OpenStoreOptions = {}): Promise<TrendStore> {
  const parsed = parseStoreSpec(spec);
  if (parsed.kind === 'sqlite') {
    return new SqliteStore({ path: parsed.path, retention: options.retention, scheduler: options.scheduler });
  }
  return new InfluxStore({
    ...(options.influx ?? {}),
    url: parsed.url,
    database: parsed.database,
    username: parsed.username,
    password: parsed.password,
    spoolPath: spoolPathFor(options.dataDir ?? './data', parsed.database),
    retention: options.retention,
    scheduler: options.scheduler,
    onWarning: options.onWarning,
  });
}
