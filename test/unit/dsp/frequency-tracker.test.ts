import { describe, expect, test } from 'vitest';
import { coarseFrequencyHz, HalfWindowRefiner } from '../../../agent/core/dsp/frequency-tracker.js';
import { makeWave, type WaveSpec } from './synthetic-waveforms.js';

const balanced = (rate: number, f0: number, extra: Partial<WaveSpec> = {}): WaveSpec => ({
  rate, f0, seconds: 0.25, zero: { mag: 0, deg: 0 }, pos: { mag: 100, deg: 0 }, neg: { mag: 0, deg: 0 }, ...extra,
});

describe('coarseFrequencyHz (zero crossings)', () => {
  test.each([42.5, 50, 57.5, 51, 69])('finds %f Hz within 0.5 % despite 10 %% 3rd and 5th harmonics and noise (good enough to acquire lock: refinement is unambiguous within ±f/N = ±10 %)', (f) => {
    const w = makeWave(balanced(6400, f, { harmonics: [{ order: 3, percent: 10, deg: 0 }, { order: 5, percent: 10, deg: 90 }], noisePercent: 0.5, seed: 9 }));
    const est = coarseFrequencyHz(w.phases[0], 0, w.phases[0].length, 6400);
    expect(Math.abs(est / f - 1)).toBeLessThan(0.005);
  });

  test('returns NaN for a flat signal instead of a made-up frequency', () => {
    expect(coarseFrequencyHz(new Float64Array(500), 0, 500, 4000)).toBeNaN();
  });
});

describe('HalfWindowRefiner', () => {
  /** Resamples phase waveforms onto M points spanning N cycles of a trial frequency (exact, from the formula). */
  function trial(spec: WaveSpec, fTrial: number, M: number, N: number): Float64Array[] {
    const w = makeWave({ ...spec, rate: (M * fTrial) / N, seconds: N / fTrial });
    return w.phases.map((p) => p.subarray(0, M));
  }

  test('a correct trial frequency gets a zero correction', () => {
    const r = new HalfWindowRefiner(1024, 10);
    const [a, b, c] = trial(balanced(0, 50), 50, 1024, 10);
    expect(Math.abs(r.relativeCorrection(a!, b!, c!))).toBeLessThan(1e-12);
  });

  test('iterating the correction from 5 % off converges to the true frequency within 1e-6 Hz (fixed point of the half-window phase comparison)', () => {
    const r = new HalfWindowRefiner(1024, 12);
    const spec = balanced(0, 61.7, { neg: { mag: 3, deg: 40 }, harmonics: [{ order: 5, percent: 6, deg: 0 }] });
    let f = 61.7 * 1.05;
    for (let k = 0; k < 8; k++) {
      const [a, b, c] = trial(spec, f, 1024, 12);
      f *= 1 + r.relativeCorrection(a!, b!, c!);
    }
    expect(Math.abs(f - 61.7)).toBeLessThan(1e-6);
  });

  test('one live phase is enough to track the frequency', () => {
    const r = new HalfWindowRefiner(512, 10);
    const [a] = trial(balanced(0, 48), 48.5, 512, 10);
    const zero = new Float64Array(512);
    const rel = r.relativeCorrection(a!, zero, zero);
    expect(Math.abs(48.5 * (1 + rel) - 48)).toBeLessThan(0.05);
  });

  test('the fundamental share of the energy is 1/(1 + THD²) at the right trial frequency and near 0 at an alias one bin away (Parseval)', () => {
    const r = new HalfWindowRefiner(1024, 10);
    const spec = balanced(0, 57, { harmonics: [{ order: 5, percent: 20, deg: 0 }] });
    const [a, b, c] = trial(spec, 57, 1024, 10);
    r.relativeCorrection(a!, b!, c!);
    expect(Math.abs(r.fundamentalFraction - 1 / (1 + 0.2 ** 2))).toBeLessThan(1e-9);
    // 47.5 Hz trial: the halves hold 5 trial cycles but 6 true ones.
    const [x, y, z] = trial(spec, 47.5, 1024, 10);
    r.relativeCorrection(x!, y!, z!);
    expect(r.fundamentalFraction).toBeLessThan(0.05);
  });

  test('all-zero phases give NaN (no phase information), not a correction', () => {
    const r = new HalfWindowRefiner(512, 10);
    const z = new Float64Array(512);
    expect(r.relativeCorrection(z, z, z)).toBeNaN();
  });
});
