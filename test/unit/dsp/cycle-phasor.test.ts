/**
 * Accuracy of the one-cycle DFT estimator against synthetic signals with known
 * phasors. Limit: TVE < 1 % (IEEE C37.118.1a-2014 §4.3, published, quoted in
 * shared/CHECKS.md §4); TVE formula from C37.118.1 §5.3 eq. (12) (from memory,
 * checked here against the computed values of CHECKS.md §4).
 */
import { describe, expect, it } from 'vitest';
import { CyclePhasorEstimator, frequencyFromCycleAdvance } from '../../../agent/core/dsp/cycle-phasor.js';

const D = Math.PI / 180;
/** IEEE C37.118.1 steady-state limit, percent. */
const TVE_LIMIT_PCT = 1;

function tvePct(re: number, im: number, mag: number, angDeg: number): number {
  const xr = mag * Math.cos(angDeg * D), xi = mag * Math.sin(angDeg * D);
  return 100 * Math.sqrt(((re - xr) ** 2 + (im - xi) ** 2) / (xr ** 2 + xi ** 2));
}

interface Tone {
  /** Multiple of the signal frequency (1 = fundamental, 0 = DC). */
  h: number;
  rms: number;
  deg: number;
}

/** x(t) = Σ √2·rms·cos(2π·h·f·t + deg) (DC: rms as the constant), sampled at `rate` from t = 0. */
function signal(rate: number, f: number, n: number, tones: Tone[]): Float64Array {
  const x = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    const t = k / rate;
    let v = 0;
    for (const tone of tones) v += tone.h === 0 ? tone.rms : Math.SQRT2 * tone.rms * Math.cos(2 * Math.PI * tone.h * f * t + tone.deg * D);
    x[k] = v;
  }
  return x;
}

function estimate(est: CyclePhasorEstimator, x: Float64Array, start: number): [number, number] {
  const out = new Float64Array(2);
  est.plan(start);
  est.estimateInto(x, out, 0);
  return [out[0]!, out[1]!];
}

describe('TVE helper', () => {
  it('gives the computed TVE values of CHECKS.md §4 (computed with mathjs there)', () => {
    expect(tvePct(1.01, 0, 1, 0)).toBeCloseTo(1.0, 6);
    expect(tvePct(Math.cos(0.573 * D), Math.sin(0.573 * D), 1, 0)).toBeCloseTo(1.00007, 4);
    expect(tvePct(0.995 * Math.cos(0.5 * D), 0.995 * Math.sin(0.5 * D), 1, 0)).toBeCloseTo(1.00386, 4);
  });
});

describe('one-cycle DFT phasor', () => {
  it('recovers a 60 Hz phasor exactly at a whole number of samples per cycle (32), rejecting DC and integer harmonics', () => {
    const est = new CyclePhasorEstimator(1920, 60);
    const x = signal(1920, 60, 128, [{ h: 1, rms: 7200, deg: -37 }, { h: 0, rms: 500, deg: 0 }, { h: 3, rms: 720, deg: 20 }, { h: 5, rms: 360, deg: -70 }]);
    const [re, im] = estimate(est, x, 32);
    // The full-cycle DFT's rejection of DC and integer harmonics is exact (orthogonality of the DFT basis): only float error remains.
    expect(tvePct(re, im, 7200, -37)).toBeLessThan(1e-9);
  });

  it('gives the true RMS of the window: the root of the summed squares of DC and every harmonic (Parseval)', () => {
    const est = new CyclePhasorEstimator(1920, 60);
    const x = signal(1920, 60, 64, [{ h: 1, rms: 7200, deg: -37 }, { h: 0, rms: 500, deg: 0 }, { h: 3, rms: 720, deg: 20 }]);
    estimate(est, x, 32);
    expect(est.lastRms).toBeCloseTo(Math.sqrt(7200 ** 2 + 500 ** 2 + 720 ** 2), 6);
  });

  for (const [rate, f0] of [[1000, 60], [5000, 60], [3030, 50], [1234.5, 50]] as const) {
    it(`stays within 1 % TVE at ${rate} samples/s (${(rate / f0).toFixed(2)} per ${f0} Hz cycle, resampled)`, () => {
      const est = new CyclePhasorEstimator(rate, f0);
      expect(est.points).toBe(2 ** Math.ceil(Math.log2(rate / f0)));
      const x = signal(rate, f0, Math.ceil((rate / f0) * 4), [{ h: 1, rms: 200, deg: 123 }]);
      const start = rate / f0; // second cycle: a fractional position
      const [re, im] = estimate(est, x, start);
      // The reference cosine starts at the window start: advance the true angle by 360·f0·t_start.
      const refDeg = 123 + 360 * f0 * (start / rate);
      expect(tvePct(re, im, 200, refDeg)).toBeLessThan(TVE_LIMIT_PCT);
    });
  }

  it('keeps the resampled estimate far inside the limit: below 0.01 % TVE at 16.67 samples per cycle', () => {
    const est = new CyclePhasorEstimator(1000, 60);
    const x = signal(1000, 60, 100, [{ h: 1, rms: 1, deg: 10 }]);
    const [re, im] = estimate(est, x, 10.3);
    expect(tvePct(re, im, 1, 10 + (360 * 60 * 10.3) / 1000)).toBeLessThan(0.01);
  });

  for (const df of [-0.5, 0.5]) {
    it(`stays within 1 % TVE at ${60 + df} Hz against the phasor at the window centre`, () => {
      const rate = 1920, f0 = 60, f = f0 + df;
      const est = new CyclePhasorEstimator(rate, f0);
      const x = signal(rate, f, 256, [{ h: 1, rms: 100, deg: 45 }]);
      const start = 64;
      const [re, im] = estimate(est, x, start);
      // x = √2·100·cos(2π(f0+Δf)t + 45°): against a nominal reference starting at t_s its phasor is 100∠(45° + 360·f·t_s + 360·Δf·(t − t_s)); window centre t − t_s = T0/2.
      const ts = start / rate;
      const centreDeg = 45 + 360 * f * ts + 360 * df * (0.5 / f0);
      expect(tvePct(re, im, 100, centreDeg)).toBeLessThan(TVE_LIMIT_PCT);
    });
  }

  it('reports the sample span a window reads, including the interpolation taps', () => {
    const direct = new CyclePhasorEstimator(1920, 60);
    expect(direct.span(64)).toEqual({ first: 64, last: 95 });
    const resampled = new CyclePhasorEstimator(1000, 60);
    const s = resampled.span(10);
    expect(s.first).toBe(8);
    expect(s.last).toBe(Math.floor(10 + (31 * 1000) / 60 / 32) + 3);
  });

  it('refuses fewer than 8 samples per cycle', () => {
    expect(() => new CyclePhasorEstimator(400, 60)).toThrow(RangeError);
  });
});

describe('frequency from the cycle-to-cycle angle advance', () => {
  it('gives f0·(1 + Δφ/360): 3° per cycle at 60 Hz is 60.5 Hz (computed)', () => {
    expect(frequencyFromCycleAdvance(10, 13, 60)).toBeCloseTo(60.5, 12);
  });

  it('unwraps an advance across ±180°', () => {
    expect(frequencyFromCycleAdvance(179, -179, 50)).toBeCloseTo(50 * (1 + 2 / 360), 12);
  });
});
