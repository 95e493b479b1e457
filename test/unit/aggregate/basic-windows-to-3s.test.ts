/**
 * The estimator and the aggregator together: basic windows from sampled
 * waveforms grouped into 150-cycle values (IEC 61000-4-30 §4.5.2).
 */
import { describe, expect, test } from 'vitest';
import { IntervalAggregator } from '../../../agent/core/aggregate/interval-aggregator.js';
import { WaveformEstimator, type BasicWindow } from '../../../agent/core/dsp/waveform-estimator.js';
import type { SequenceResult } from '../../../agent/core/result.js';
import { quantityFromPhasors, SequenceScratch, voltageFromPhasors } from '../../../agent/core/sequence/quantities.js';
import { makeWave, toFrames } from '../dsp/synthetic-waveforms.js';

// A 10-min tick (UTC), so the first 3-s group is not cut by resynchronisation.
const T0 = Date.UTC(2026, 2, 2, 14, 10, 0);

function basicResult(w: BasicWindow, s: SequenceScratch): SequenceResult {
  return {
    ts: w.ts, feeder: 'F1', window: 'basic', durationMs: w.durationMs, freq: w.freq, flagged: w.flagged,
    v: w.v === null ? null : voltageFromPhasors(w.v, s), i: w.i === null ? null : quantityFromPhasors(w.i, s), count: 1,
  };
}

describe('basic windows to 3-s values', () => {
  test('at 49.5 Hz fifteen 10-cycle windows make one 150-cycle value of 3.0303 s (CHECKS.md §3, computed with mathjs)', () => {
    const spec = { rate: 6400, f0: 49.5, seconds: 7, zero: { mag: 2.3, deg: 0 }, pos: { mag: 230, deg: 0 }, neg: { mag: 4.6, deg: 30 } };
    const est = new WaveformEstimator({ nominalHz: 50, nominalVoltageLN: 230 });
    const agg = new IntervalAggregator({ feeder: 'F1', nominalHz: 50 });
    const out: SequenceResult[] = [];
    const s = new SequenceScratch();
    for (const f of toFrames(T0, spec.rate, makeWave(spec), null, 1280)) est.push(f, (w) => agg.push(basicResult(w, s), (a) => out.push(a)));
    const threes = out.filter((a) => a.window === '3s');
    expect(threes.length).toBe(2);
    for (const a of threes) {
      expect(a.count).toBe(15);
      // 150 cycles / 49.5 Hz = 3.030303 s, printed as 3.0303 s: ±0.05 ms.
      expect(Math.abs(a.durationMs - 3030.3)).toBeLessThan(0.05);
      expect(a.flagged).toBe(false);
      // u2 = 2 % by construction; RMS aggregation of equal values returns that value.
      expect(Math.abs(a.v!.u2! - 2)).toBeLessThan(0.02);
    }
  });
});
