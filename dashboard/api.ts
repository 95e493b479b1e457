/** Typed access to the seqmon HTTP API (docs/api.md). The dashboard talks to nothing else. */

export type Polar = [number, number | null] | null;
export type PhaseKey = 'a' | 'b' | 'c';

export interface QuantityWire {
  zero: Polar;
  pos: Polar;
  neg: Polar;
  u2: number | null;
  u0: number | null;
  rms: Record<PhaseKey, number> | null;
}

export interface ResultWire {
  ts: string;
  feeder: string;
  window: string;
  freq: number | null;
  flagged: boolean;
  v: QuantityWire | null;
  i: QuantityWire | null;
}

export interface LimitPair {
  enabled: boolean;
  warning: number;
  alarm: number;
}

export interface FeederInfo {
  id: string;
  nominalHz: number;
  nominalVoltageLN: number | null;
  limits: { voltageUnbalance: LimitPair; zeroSequenceVoltage: LimitPair; currentUnbalance: LimitPair; staleAfterMs: number };
  lastTs: string | null;
  sources: string[];
}

export interface AlarmWire {
  ts: string;
  feeder: string;
  condition: string;
  state: 'raised' | 'cleared';
  level: 'warning' | 'alarm';
  value: number | null;
  limit: number | null;
  phase: string | null;
  message: string;
  caution: string | null;
}

export interface EventWire {
  ts: string;
  feeder: string;
  type: string;
  durationMs: number;
  peakCurrent: number;
  peakPhase: string;
  message: string;
  caution: string;
}

export interface Worst {
  value: number;
  ts: string;
}

export interface OverviewFeeder extends FeederInfo {
  latest: ResultWire | null;
  worst24h: { vU2: Worst | null; vU0: Worst | null; iU2: Worst | null; i1: Worst | null };
  activeAlarms: AlarmWire[];
}

export interface Overview {
  demo: boolean;
  now: string;
  feeders: OverviewFeeder[];
}

export interface Trend {
  feeder: string;
  window: string;
  from: string;
  to: string;
  count: number;
  columns: Record<string, (number | null)[]> & { ts: string[]; flagged: boolean[] };
}

export interface Balance {
  samples: number;
  phases: Record<PhaseKey, { meanA: number | null; peakA: number | null }>;
  heaviest: PhaseKey | null;
  lightest: PhaseKey | null;
  spreadA: number | null;
  maxDeviationPercent: number | null;
  currentU2: { count: number; mean: number | null; max: number | null; p95: number | null };
  caution: string;
  window: string;
}

export interface Compliance {
  verdict: 'pass' | 'fail' | 'no-data';
  limitPercent: number;
  valid: number;
  flagged: number;
  expected: number;
  coverage: number;
  fractionWithinLimit: number | null;
  p95: number | null;
  max: number | null;
  fullPeriod: boolean;
  basis: string;
}

export interface Health {
  status: 'ok' | 'degraded';
  demo?: boolean;
  sources?: { name: string; state: string; since: string; lastError: string | null }[];
  store?: { kind: string; ok: boolean; detail: string | null };
}

const TOKEN_KEY = 'seqmon.token';

export class UnauthorizedError extends Error {}

export function token(): string | null {
  try {
    return sessionStorage.getItem(TOKEN_KEY);
  } catch {
    return null;
  }
}

export function setToken(t: string | null): void {
  if (t === null || t === '') sessionStorage.removeItem(TOKEN_KEY);
  else sessionStorage.setItem(TOKEN_KEY, t);
}

/** A URL with the token as a query parameter, for EventSource and download links (they cannot send headers). */
export function withToken(path: string): string {
  const t = token();
  if (t === null) return path;
  return `${path}${path.includes('?') ? '&' : '?'}token=${encodeURIComponent(t)}`;
}

export async function getJson<T>(path: string, okStatuses: number[] = [200]): Promise<T> {
  const t = token();
  const res = await fetch(path, { headers: t === null ? {} : { authorization: `Bearer ${t}` } });
  if (res.status === 401) throw new UnauthorizedError('token needed');
  if (!okStatuses.includes(res.status)) {
    let message = `${res.status}`;
    try {
      const body = (await res.json()) as { error?: { message?: string } };
      message = body.error?.message ?? message;
    } catch {
      // not JSON
    }
    throw new Error(message);
  }
  return (await res.json()) as T;
}

export const api = {
  overview: () => getJson<Overview>('/api/overview'),
  feeders: () => getJson<{ demo: boolean; feeders: FeederInfo[] }>('/api/feeders'),
  latest: (id: string) => getJson<{ feeder: string; result: ResultWire | null }>(`/api/feeders/${encodeURIComponent(id)}/latest`),
  trend: (id: string, q: string) => getJson<Trend>(`/api/feeders/${encodeURIComponent(id)}/trend?${q}`),
  balance: (id: string, q: string) => getJson<Balance>(`/api/feeders/${encodeURIComponent(id)}/balance?${q}`),
  compliance: (id: string) => getJson<Compliance>(`/api/feeders/${encodeURIComponent(id)}/compliance`),
  alarms: (q: string) => getJson<{ alarms: AlarmWire[] }>(`/api/alarms?${q}`),
  events: (q: string) => getJson<{ events: EventWire[] }>(`/api/events?${q}`),
  health: () => getJson<Health>('/healthz', [200, 503]),
};
