/**
 * The two InfluxDB 1.x HTTP calls on the data path, made with fetch: POST
 * /write with line protocol (one request per retention policy, precision=ms)
 * and GET /query with chunked JSON answers, which are not cut off by the
 * server's max-row-limit. Each answer is sorted into ok / transient / refused
 * so the store knows whether to queue and retry or to report.
 */
export interface InfluxEndpoint {
  /** http(s)://host:port, no trailing slash. */
  readonly url: string;
  readonly database: string;
  readonly username?: string | undefined;
  readonly password?: string | undefined;
  readonly timeoutMs: number;
}

export type WriteOutcome =
  | { readonly kind: 'ok'; readonly expired: number }
  /** Server down, timed out, 5xx, auth or missing database: keep the points and retry. */
  | { readonly kind: 'transient'; readonly reason: string; readonly missingDatabase: boolean }
  /** The server refused the points themselves (HTTP 400); retrying cannot help. */
  | { readonly kind: 'refused'; readonly reason: string };

const BEYOND_RETENTION = /^partial write: points beyond retention policy dropped=(\d+)$/;

function params(ep: InfluxEndpoint, extra: Record<string, string>): string {
  const p = new URLSearchParams({ db: ep.database, ...extra });
  if (ep.username !== undefined) p.set('u', ep.username);
  if (ep.password !== undefined) p.set('p', ep.password);
  return p.toString();
}

function errorText(e: unknown): string {
  if (e instanceof Error) {
    const cause = (e as { cause?: unknown }).cause;
    const code = cause !== null && typeof cause === 'object' && 'code' in cause ? String((cause as { code: unknown }).code) : null;
    return code !== null ? `${e.message} (${code})` : e.message;
  }
  return String(e);
}

async function serverError(res: Response): Promise<string> {
  const text = await res.text();
  try {
    const body = JSON.parse(text) as { error?: unknown };
    if (typeof body.error === 'string') return body.error;
  } catch {
    // not JSON
  }
  return text.trim().slice(0, 300) || `HTTP ${res.status}`;
}

export async function writeLines(ep: InfluxEndpoint, rp: string, body: string | Uint8Array<ArrayBuffer>, signal?: AbortSignal): Promise<WriteOutcome> {
  let res: Response;
  try {
    const timeout = AbortSignal.timeout(ep.timeoutMs);
    res = await fetch(`${ep.url}/write?${params(ep, { rp, precision: 'ms' })}`, {
      method: 'POST',
      body,
      headers: { 'content-type': 'text/plain; charset=utf-8' },
      signal: signal === undefined ? timeout : AbortSignal.any([timeout, signal]),
    });
  } catch (e) {
    return { kind: 'transient', reason: `InfluxDB at ${ep.url} unreachable: ${errorText(e)}`, missingDatabase: false };
  }
  if (res.status === 204 || res.status === 200) {
    await res.arrayBuffer();
    return { kind: 'ok', expired: 0 };
  }
  const reason = await serverError(res);
  if (res.status === 400) {
    // Points older than their retention policy are dropped by the server on purpose: that is retention working.
    const m = BEYOND_RETENTION.exec(reason);
    if (m) return { kind: 'ok', expired: Number(m[1]) };
    return { kind: 'refused', reason: `InfluxDB refused the points: ${reason}` };
  }
  return { kind: 'transient', reason: `InfluxDB answered ${res.status}: ${reason}`, missingDatabase: res.status === 404 && /database not found/.test(reason) };
}

export interface QuerySeries {
  readonly name?: string;
  readonly tags?: Record<string, string>;
  readonly columns: string[];
  readonly values?: unknown[][];
}

/** Runs InfluxQL (several statements may be joined with ';'); calls onSeries for every series chunk, statement index first. */
export async function querySeries(ep: InfluxEndpoint, q: string, onSeries: (statement: number, s: QuerySeries) => void): Promise<void> {
  const res = await fetch(`${ep.url}/query?${params(ep, { q, epoch: 'ms', chunked: 'true', chunk_size: '10000' })}`, {
    signal: AbortSignal.timeout(ep.timeoutMs),
  });
  if (res.status !== 200) throw new Error(`InfluxDB answered ${res.status}: ${await serverError(res)}`);
  const text = await res.text();
  let at = 0;
  while (at < text.length) {
    let nl = text.indexOf('\n', at);
    if (nl < 0) nl = text.length;
    const line = text.slice(at, nl).trim();
    at = nl + 1;
    if (line.length === 0) continue;
    const chunk = JSON.parse(line) as { error?: string; results?: { statement_id?: number; error?: string; series?: QuerySeries[] }[] };
    if (typeof chunk.error === 'string') throw new Error(`InfluxDB: ${chunk.error}`);
    for (const r of chunk.results ?? []) {
      if (typeof r.error === 'string') throw new Error(`InfluxDB: ${r.error}`);
      for (const s of r.series ?? []) onSeries(r.statement_id ?? 0, s);
    }
  }
}
