/**
 * Voltage-unbalance compliance over a range of 10-min values, in the manner of
 * EN 50160 (LV and MV supply): during each week, 95 % of the 10-min mean
 * values of the negative-sequence unbalance u2 shall be within 0-2 % (from
 * memory: EN 50160). Intervals flagged per IEC 61000-4-30 §4.7 (dips, swells,
 * interruptions, gaps) are excluded from the assessment and counted.
 */
import type { SequenceResult } from '../core/result.js';
import { quantileSorted } from './stats.js';
import { WINDOW_MS } from './time-range.js';

/** EN 50160 limit for u2 in LV/MV networks, percent (from memory: EN 50160). */
export const EN50160_U2_LIMIT_PERCENT = 2;
/** Share of the week's valid 10-min values that must lie within the limit (from memory: EN 50160). */
export const EN50160_REQUIRED_FRACTION = 0.95;
/** The assessment period of EN 50160 is one week (from memory: EN 50160). */
export const EN50160_PERIOD_MS = 7 * 24 * 3_600_000;

export type ComplianceVerdict = 'pass' | 'fail' | 'no-data';

export interface ComplianceSummary {
  basis: string;
  limitPercent: number;
  requiredFraction: number;
  /** 10-min intervals the range holds. */
  expected: number;
  /** Unflagged 10-min values with a voltage u2. */
  valid: number;
  /** Values excluded because they are flagged. */
  flagged: number;
  /** Unflagged values without a voltage u2 (e.g. no voltage measured). */
  withoutValue: number;
  /** valid / expected. */
  coverage: number;
  /** Share of valid values at or below the limit; null without valid values. */
  fractionWithinLimit: number | null;
  p95: number | null;
  max: number | null;
  mean: number | null;
  verdict: ComplianceVerdict;
  /** True when the range is at least one EN 50160 week. */
  fullPeriod: boolean;
}

export function voltageUnbalanceCompliance(tenMinute: readonly SequenceResult[], from: number, to: number, limitPercent = EN50160_U2_LIMIT_PERCENT): ComplianceSummary {
  const values: number[] = [];
  let flagged = 0;
  let withoutValue = 0;
  for (const r of tenMinute) {
    if (r.flagged) {
      flagged++;
      continue;
    }
    const u2 = r.v?.u2 ?? null;
    if (u2 === null || !Number.isFinite(u2)) {
      withoutValue++;
      continue;
    }
    values.push(u2);
  }
  const expected = Math.max(0, Math.floor((to - from) / WINDOW_MS['10min']));
  const base = {
    basis: 'EN 50160 style: 95 % of valid 10-min u2 values within the limit; flagged intervals excluded (IEC 61000-4-30 flagging)',
    limitPercent,
    requiredFraction: EN50160_REQUIRED_FRACTION,
    expected,
    valid: values.length,
    flagged,
    withoutValue,
    coverage: expected === 0 ? 0 : values.length / expected,
    fullPeriod: to - from >= EN50160_PERIOD_MS,
  };
  if (values.length === 0) {
    return { ...base, fractionWithinLimit: null, p95: null, max: null, mean: null, verdict: 'no-data' };
  }
  const sorted = Float64Array.from(values).sort();
  let within = 0;
  let sum = 0;
  for (const x of values) {
    if (x <= limitPercent) within++;
    sum += x;
  }
  const fraction = within / values.length;
  return {
    ...base,
    fractionWithinLimit: fraction,
    p95: quantileSorted(sorted, 0.95),
    max: sorted[sorted.length - 1]!,
    mean: sum / values.length,
    verdict: fraction >= EN50160_REQUIRED_FRACTION ? 'pass' : 'fail',
  };
}
