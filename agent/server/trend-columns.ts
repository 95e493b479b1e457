/**
 * Trend results as columns (one array per quantity): compact JSON that a
 * chart reads directly, and the same columns feed the CSV export.
 */
import type { SequenceResult } from '../core/result.js';
import { isoTime, roundForWire } from '../core/result.js';

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

export interface TrendColumns {
  ts: string[];
  flagged: boolean[];
  values: Record<TrendColumnKey, (number | null)[]>;
}

export function toColumns(results: readonly SequenceResult[]): TrendColumns {
  const n = results.length;
  const ts = new Array<string>(n);
  const flagged = new Array<boolean>(n);
  const values = {} as Record<TrendColumnKey, (number | null)[]>;
  for (const c of TREND_NUMERIC_COLUMNS) values[c.key] = new Array<number | null>(n);
  for (let k = 0; k < n; k++) {
    const r = results[k]!;
    ts[k] = isoTime(r.ts);
    flagged[k] = r.flagged;
    for (const c of TREND_NUMERIC_COLUMNS) {
      const x = c.pick(r);
      values[c.key][k] = x === null ? null : roundForWire(x);
    }
  }
  return { ts, flagged, values };
}
