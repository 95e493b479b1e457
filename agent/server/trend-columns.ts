/**
 * Trend results as columns (one array per quantity): compact JSON that a
 * chart reads directly, and the same columns feed the CSV export.
 */
import { AgentError } from '../core/errors.js';
import type { SequenceResult } from '../core/result.js';
import { isoTime } from '../core/result.js';

/**
 * Trend values are rounded to fixed decimals: 1 mV / 1 mA, 0.0001 percentage
 * point, 0.1 mHz, all far below any meter's resolution or the ±0.15 point
 * class A uncertainty of u2 (IEC 61000-4-30, from memory). Fixed decimals
 * cost one multiply and round per value (toPrecision builds a string) and
 * keep the JSON short for 200,000-point trends.
 */
export const DECIMALS = Object.freeze({ A: 3, V: 3, '%': 4, Hz: 4 });

export function fixed(x: number, decimals: number): number {
  const f = 10 ** decimals;
  return Math.round(x * f) / f;
}

/** Numeric columns in output order, with their unit; `pick` reads one value of a result. */
export const TREND_NUMERIC_COLUMNS = [
  { key: 'ia', unit: 'A', pick: (r: SequenceResult) => r.i?.rms?.a ?? null },
  { key: 'ib', unit: 'A', pick: (r: SequenceResult) => r.i?.rms?.b ?? null },
  { key: 'ic', unit: 'A', pick: (r: SequenceResult) => r.i?.rms?.c ?? null },
  { key: 'va', unit: 'V', pick: (r: SequenceResult) => r.v?.rms?.a ?? null },
  { key: 'vb', unit: 'V', pick: (r: SequenceResult) => r.v?.rms?.b ?? null },
  { key: 'vc', unit: 'V', pick: (r: SequenceResult) => r.v?.rms?.c ?? null },
  { key: 'v1', unit: 'V', pick: (r: SequenceResult) => r.v?.pos?.[0] ?? null },
  { key: 'v2', unit: 'V', pick: (r: SequenceResult) => r.v?.neg?.[0] ?? null },
  { key: 'v0', unit: 'V', pick: (r: SequenceResult) => r.v?.zero?.[0] ?? null },
  { key: 'i1', unit: 'A', pick: (r: SequenceResult) => r.i?.pos?.[0] ?? null },
  { key: 'i2', unit: 'A', pick: (r: SequenceResult) => r.i?.neg?.[0] ?? null },
  { key: 'i0', unit: 'A', pick: (r: SequenceResult) => r.i?.zero?.[0] ?? null },
  { key: 'vU2', unit: '%', pick: (r: SequenceResult) => r.v?.u2 ?? null },
  { key: 'vU0', unit: '%', pick: (r: SequenceResult) => r.v?.u0 ?? null },
  { key: 'iU2', unit: '%', pick: (r: SequenceResult) => r.i?.u2 ?? null },
  { key: 'iU0', unit: '%', pick: (r: SequenceResult) => r.i?.u0 ?? null },
  { key: 'freq', unit: 'Hz', pick: (r: SequenceResult) => r.freq },
] as const;

export type TrendColumnKey = (typeof TREND_NUMERIC_COLUMNS)[number]['key'];
export type TrendColumn = (typeof TREND_NUMERIC_COLUMNS)[number];

const BY_KEY = new Map<string, TrendColumn>(TREND_NUMERIC_COLUMNS.map((c) => [c.key, c]));

/** Parses `fields=vU2,i1` into the columns to return (all when absent); unknown names are a 400 naming `fields`. */
export function parseFields(fields: string | undefined): TrendColumn[] {
  if (fields === undefined || fields.trim() === '') return [...TREND_NUMERIC_COLUMNS];
  const out: TrendColumn[] = [];
  for (const name of fields.split(',').map((f) => f.trim()).filter((f) => f !== '')) {
    const c = BY_KEY.get(name);
    if (c === undefined) {
      throw new AgentError('API_BAD_PARAMETER', `fields: unknown column "${name.slice(0, 20)}"; known: ${TREND_NUMERIC_COLUMNS.map((x) => x.key).join(', ')}`, { details: { parameter: 'fields' } });
    }
    if (!out.includes(c)) out.push(c);
  }
  return out;
}

export interface TrendColumns {
  ts: string[];
  flagged: boolean[];
  values: Partial<Record<TrendColumnKey, (number | null)[]>>;
}

export function toColumns(results: readonly SequenceResult[], columns: readonly TrendColumn[] = TREND_NUMERIC_COLUMNS): TrendColumns {
  const n = results.length;
  const ts = new Array<string>(n);
  const flagged = new Array<boolean>(n);
  for (let k = 0; k < n; k++) {
    const r = results[k]!;
    ts[k] = isoTime(r.ts);
    flagged[k] = r.flagged;
  }
  const values: Partial<Record<TrendColumnKey, (number | null)[]>> = {};
  // Column by column: one pick function per loop keeps each loop monomorphic.
  for (const c of columns) {
    const col = new Array<number | null>(n);
    const f = 10 ** DECIMALS[c.unit];
    const pick = c.pick;
    for (let k = 0; k < n; k++) {
      const x = pick(results[k]!);
      col[k] = x === null ? null : Math.round(x * f) / f;
    }
    values[c.key] = col;
  }
  return { ts, flagged, values };
}
