/**
 * Load-balancing summary of a feeder over a range: per-phase mean and peak
 * current, the heaviest and lightest phase, and the current unbalance u2.
 * Planning figures; the caution travels with them.
 */
import type { Phase } from '../core/detect/types.js';
import type { SequenceResult } from '../core/result.js';
import { BALANCE_CAUTION } from './cautions.js';
import { summarize, type Summary } from './stats.js';

export interface PhaseLoad {
  meanA: number | null;
  peakA: number | null;
}

export interface BalanceSummary {
  /** Intervals with per-phase currents. */
  samples: number;
  phases: Record<Phase, PhaseLoad>;
  heaviest: Phase | null;
  lightest: Phase | null;
  /** Mean current of the heaviest minus the lightest phase, A. */
  spreadA: number | null;
  /**
   * Largest deviation of a phase's mean current from the average of the three
   * means, percent of that average: the NEMA MG-1 "maximum deviation from the
   * average" definition applied to currents (common practice).
   */
  maxDeviationPercent: number | null;
  /** Current unbalance u2 = |I2|/|I1|, percent (IEC definition). */
  currentU2: Summary;
  caution: string;
}

const PHASES: readonly Phase[] = ['a', 'b', 'c'];

export function balanceSummary(results: readonly SequenceResult[]): BalanceSummary {
  const sum = { a: 0, b: 0, c: 0 };
  const peak = { a: -Infinity, b: -Infinity, c: -Infinity };
  let samples = 0;
  const u2: number[] = [];
  for (const r of results) {
    const rms = r.i?.rms ?? null;
    if (rms !== null) {
      samples++;
      for (const p of PHASES) {
        sum[p] += rms[p];
        if (rms[p] > peak[p]) peak[p] = rms[p];
      }
    }
    const x = r.i?.u2 ?? null;
    if (x !== null && Number.isFinite(x)) u2.push(x);
  }
  const phases = {} as Record<Phase, PhaseLoad>;
  for (const p of PHASES) phases[p] = samples === 0 ? { meanA: null, peakA: null } : { meanA: sum[p] / samples, peakA: peak[p] };
  let heaviest: Phase | null = null;
  let lightest: Phase | null = null;
  let spreadA: number | null = null;
  let maxDeviationPercent: number | null = null;
  if (samples > 0) {
    const mean = (p: Phase) => phases[p].meanA!;
    heaviest = PHASES.reduce((best, p) => (mean(p) > mean(best) ? p : best));
    lightest = PHASES.reduce((best, p) => (mean(p) < mean(best) ? p : best));
    spreadA = mean(heaviest) - mean(lightest);
    const avg = (mean('a') + mean('b') + mean('c')) / 3;
    maxDeviationPercent = avg > 0 ? (100 * Math.max(...PHASES.map((p) => Math.abs(mean(p) - avg)))) / avg : null;
  }
  return { samples, phases, heaviest, lightest, spreadA, maxDeviationPercent, currentU2: summarize(u2), caution: BALANCE_CAUTION };
}
