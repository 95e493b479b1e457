/**
 * Anti-aliasing low-pass for sampled input faster than the estimator's grid.
 * The estimator resamples each basic window to POINTS_PER_CYCLE points per
 * cycle; content above half that rate would fold back onto the harmonics it
 * reads (a 100th harmonic lands on the 28th at 128 points per cycle), and
 * IEC 61000-4-7 asks for an anti-aliasing filter ahead of harmonic analysis
 * (from memory). Input slow enough to carry no such content is left alone.
 *
 * The filter is a linear-phase FIR: an ideal low-pass (sinc) under a Kaiser
 * window, sized by Kaiser's formulas for the window parameter β and the
 * length (J. F. Kaiser, "Nonrecursive digital filter design using the
 * I0-sinh window function", 1974; as given in Oppenheim & Schafer,
 * Discrete-Time Signal Processing, §7.5.3; from memory). It is applied
 * centred, so the filtered signal has no delay and stays aligned with the raw
 * samples, and its taps are scaled to a gain of exactly 1 at DC: across the
 * passband the gain differs from 1 by less than the stopband level (1e-4 at
 * 80 dB), and the sequence ratios u2 and u0 compare components at one
 * frequency, so they do not see it at all.
 */

/** Stopband attenuation, dB: aliases end up 1e-4 below their true level. */
export const ANTI_ALIAS_ATTENUATION_DB = 80;

export interface AntiAliasBands {
  /** Highest frequency to pass unchanged, Hz. */
  readonly passHz: number;
  /** Lowest frequency that must be suppressed, Hz. */
  readonly stopHz: number;
}

/**
 * The bands for a grid of `pointsPerCycle` points per cycle read up to
 * harmonic `maxHarmonic`, at fundamentals from minHz to maxHz; null when
 * `rate` cannot carry anything that would alias onto those harmonics.
 * Content at f folds to pointsPerCycle·f1 − f, which is at or below
 * harmonic maxHarmonic when f ≥ (pointsPerCycle − maxHarmonic)·f1.
 */
export function antiAliasBands(rate: number, pointsPerCycle: number, maxHarmonic: number, minHz: number, maxHz: number): AntiAliasBands | null {
  const stopHz = (pointsPerCycle - maxHarmonic) * minHz;
  if (rate / 2 <= stopHz) return null;
  return { passHz: maxHarmonic * maxHz, stopHz };
}

/** Modified Bessel function of the first kind, order 0, by its power series (converges for all x). */
export function besselI0(x: number): number {
  const q = (x * x) / 4;
  let term = 1;
  let sum = 1;
  for (let k = 1; k < 200; k++) {
    term *= q / (k * k);
    sum += term;
    if (term < sum * 1e-17) break;
  }
  return sum;
}

/**
 * Taps of a Kaiser-windowed low-pass at `rate` with the cutoff halfway
 * between the band edges; odd length, symmetric, summing to 1.
 */
export function kaiserLowPass(rate: number, bands: AntiAliasBands, attenuationDb = ANTI_ALIAS_ATTENUATION_DB): Float64Array {
  const A = attenuationDb;
  const beta = A > 50 ? 0.1102 * (A - 8.7) : A >= 21 ? 0.5842 * (A - 21) ** 0.4 + 0.07886 * (A - 21) : 0;
  const transition = (2 * Math.PI * (bands.stopHz - bands.passHz)) / rate;
  let length = Math.ceil((A - 8) / (2.285 * transition)) + 1;
  if (length % 2 === 0) length++;
  const half = (length - 1) / 2;
  const wc = (Math.PI * (bands.passHz + bands.stopHz)) / rate;
  const taps = new Float64Array(length);
  const norm = besselI0(beta);
  let sum = 0;
  for (let n = 0; n < length; n++) {
    const k = n - half;
    const ideal = k === 0 ? wc / Math.PI : Math.sin(wc * k) / (Math.PI * k);
    const r = k / half;
    const window = besselI0(beta * Math.sqrt(Math.max(0, 1 - r * r))) / norm;
    taps[n] = ideal * window;
    sum += taps[n]!;
  }
  for (let n = 0; n < length; n++) taps[n]! /= sum;
  return taps;
}

/** A symmetric FIR applied centred: out[m] = Σ_k taps[k]·src[m − half + k] (the taps must be symmetric). */
export class CentredFir {
  readonly half: number;

  constructor(readonly taps: Float64Array) {
    if (taps.length % 2 !== 1) throw new RangeError(`a centred FIR needs an odd number of taps, got ${taps.length}`);
    for (let k = 0; k < taps.length; k++) {
      if (taps[k] !== taps[taps.length - 1 - k]) throw new RangeError(`a centred FIR needs symmetric taps; tap ${k} differs from its mirror`);
    }
    this.half = (taps.length - 1) / 2;
  }

  /**
   * Writes out[j] for from ≤ j < to: the filter's output at src index j·step (step > 1 decimates: only
   * every step-th output is computed). src must hold from·step − half to (to − 1)·step + half.
   */
  apply(src: Float64Array, out: Float64Array, from: number, to: number, step = 1): void {
    const h = this.taps, half = this.half;
    // The taps are symmetric: one multiply per pair of samples, half the work.
    for (let j = from; j < to; j++) {
      const m = j * step;
      let acc = h[half]! * src[m]!;
      for (let k = 1; k <= half; k++) acc += h[half - k]! * (src[m - k]! + src[m + k]!);
      out[j] = acc;
    }
  }
}
