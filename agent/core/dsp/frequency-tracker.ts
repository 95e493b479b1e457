/**
 * Frequency of the fundamental over one basic window, for a window that must
 * span exactly N cycles of the actual frequency (IEC 61000-4-30 §4.4, 10
 * cycles at 50 Hz, 12 at 60 Hz).
 *
 * Two steps:
 * 1. coarseFrequencyHz(): positive-going zero crossings with a Schmitt
 *    trigger and linear interpolation, used only to acquire lock (at start and
 *    after a gap), because step 2 is ambiguous beyond ±f/N.
 * 2. HalfWindowRefiner: the window is resampled to M points spanning N cycles
 *    of a trial frequency f_j. The fundamental phasors of its first and second
 *    halves (N/2 cycles each, both referred to a cosine at f_j from the window
 *    start) differ in angle by Δφ = 2π·(f - f_j)·(T/2), T = N/f_j, so
 *    f = f_j·(1 + Δφ/(π·N)). Spectral leakage makes this inexact when f_j ≠ f,
 *    but the error shrinks with |f - f_j|, so iterating converges to the
 *    frequency at which the window holds exactly N cycles; there the halves
 *    are N/2 whole cycles and harmonics fall on their own bins. Under a linear
 *    ramp the fixed point is the mean frequency over the window (the angle of
 *    each half is its mid-point phase). The three phases are combined into the
 *    positive-sequence phasor, so losing one phase does not lose the frequency.
 */

const SQRT3_2 = Math.sqrt(3) / 2;

/**
 * Coarse frequency from zero crossings of x[from .. to) sampled at `rate`.
 * The trigger re-arms only after the signal fell below -hysteresis, so noise
 * and moderate harmonics around a crossing count once. Returns NaN when fewer
 * than three crossings were found.
 */
export function coarseFrequencyHz(x: Float64Array, from: number, to: number, rate: number): number {
  let sum = 0, sumSq = 0;
  for (let n = from; n < to; n++) {
    const v = x[n]!;
    sum += v;
    sumSq += v * v;
  }
  const count = to - from;
  if (count < 3) return Number.NaN;
  const mean = sum / count;
  const rms = Math.sqrt(Math.max(0, sumSq / count - mean * mean));
  if (!(rms > 0)) return Number.NaN;
  // 30 % of the RMS: above noise and harmonic ripple near the crossing, below the trough of any realistic waveform.
  const hysteresis = 0.3 * rms;
  let armed = false;
  let first = Number.NaN, last = Number.NaN, crossings = 0;
  let prev = x[from]! - mean;
  for (let n = from + 1; n < to; n++) {
    const v = x[n]! - mean;
    if (v < -hysteresis) armed = true;
    else if (armed && prev < 0 && v >= 0) {
      const t = n - 1 + prev / (prev - v);
      if (crossings === 0) first = t;
      last = t;
      crossings++;
      armed = false;
    }
    prev = v;
  }
  if (crossings < 3) return Number.NaN;
  return ((crossings - 1) * rate) / (last - first);
}

/** Half-window phase comparison on a resampled window of M points holding N trial cycles. */
export class HalfWindowRefiner {
  readonly points: number;
  readonly cycles: number;
  private readonly cos: Float64Array;
  private readonly sin: Float64Array;
  /**
   * Set by relativeCorrection(): (|S1|² + |S2|²)·4/M over Σx², summed over the
   * three phases, where S1, S2 are the half-window DFT sums at the
   * fundamental. 1 for sinusoids at the trial frequency, near 0 when the
   * trial frequency is wrong by a whole bin or the input is noise.
   */
  fundamentalFraction = 0;
  /**
   * Set by relativeCorrection(): the relative correction f/f_j - 1, or NaN
   * when the positive-sequence phasor is too small to carry a reliable angle.
   */
  correction = 0;

  constructor(points: number, cycles: number) {
    if (points % 2 !== 0 || cycles % 2 !== 0) throw new RangeError('half-window refinement needs an even number of points and of cycles');
    this.points = points;
    this.cycles = cycles;
    this.cos = new Float64Array(points);
    this.sin = new Float64Array(points);
    for (let k = 0; k < points; k++) {
      const th = (2 * Math.PI * cycles * k) / points;
      this.cos[k] = Math.cos(th);
      this.sin[k] = Math.sin(th);
    }
  }

  /**
   * Relative frequency correction f/f_j - 1 from the resampled phases a, b, c
   * (any of them may be all zero), into `correction` and `fundamentalFraction`.
   * NaN when the positive-sequence phasor is too small against the phase
   * phasors to carry a reliable angle (no voltage, or a pure
   * negative/zero-sequence set). Results go to fields rather than a return
   * value: a double returned from a call V8 does not inline is boxed, an
   * allocation on every window.
   */
  update(a: Float64Array, b: Float64Array, c: Float64Array): void {
    const half = this.points >> 1;
    const cs = this.cos, sn = this.sin;
    // Half-window DFT sums at the fundamental bin; scale factors cancel in the angle.
    let ar1 = 0, ai1 = 0, br1 = 0, bi1 = 0, cr1 = 0, ci1 = 0;
    let energy = 0;
    for (let k = 0; k < half; k++) {
      const co = cs[k]!, si = sn[k]!;
      const xa = a[k]!, xb = b[k]!, xc = c[k]!;
      energy += xa * xa + xb * xb + xc * xc;
      ar1 += xa * co; ai1 -= xa * si;
      br1 += xb * co; bi1 -= xb * si;
      cr1 += xc * co; ci1 -= xc * si;
    }
    let ar2 = 0, ai2 = 0, br2 = 0, bi2 = 0, cr2 = 0, ci2 = 0;
    for (let k = half; k < this.points; k++) {
      const co = cs[k]!, si = sn[k]!;
      const xa = a[k]!, xb = b[k]!, xc = c[k]!;
      energy += xa * xa + xb * xb + xc * xc;
      ar2 += xa * co; ai2 -= xa * si;
      br2 += xb * co; bi2 -= xb * si;
      cr2 += xc * co; ci2 -= xc * si;
    }
    // Positive sequence ×3: Xa + a·Xb + a²·Xc, a = 1∠120° (Fortescue, as in sequence/fortescue.ts).
    const p1r = ar1 - 0.5 * br1 - SQRT3_2 * bi1 - 0.5 * cr1 + SQRT3_2 * ci1;
    const p1i = ai1 + SQRT3_2 * br1 - 0.5 * bi1 - SQRT3_2 * cr1 - 0.5 * ci1;
    const p2r = ar2 - 0.5 * br2 - SQRT3_2 * bi2 - 0.5 * cr2 + SQRT3_2 * ci2;
    const p2i = ai2 + SQRT3_2 * br2 - 0.5 * bi2 - SQRT3_2 * cr2 - 0.5 * ci2;
    const atFundamental = ar1 * ar1 + ai1 * ai1 + br1 * br1 + bi1 * bi1 + cr1 * cr1 + ci1 * ci1 + ar2 * ar2 + ai2 * ai2 + br2 * br2 + bi2 * bi2 + cr2 * cr2 + ci2 * ci2;
    this.fundamentalFraction = energy > 0 ? (atFundamental * 4) / (this.points * energy) : 0;
    // Squared magnitudes (Math.hypot is not inlined by V8 and would box its result on every call).
    const largestSq = Math.max(ar1 * ar1 + ai1 * ai1, br1 * br1 + bi1 * bi1, cr1 * cr1 + ci1 * ci1);
    // A single live phase still gives |3·X1| = |Xa|; below 5 % the set is essentially not positive sequence.
    const floorSq = 0.05 * 0.05 * largestSq;
    if (!(largestSq > 0) || p1r * p1r + p1i * p1i < floorSq || p2r * p2r + p2i * p2i < floorSq) {
      this.correction = Number.NaN;
      return;
    }
    // Angle of P2·conj(P1).
    const dphi = Math.atan2(p2i * p1r - p2r * p1i, p2r * p1r + p2i * p1i);
    this.correction = dphi / (Math.PI * this.cycles);
  }

  /** update() followed by reading `correction`; for callers off the hot path. */
  relativeCorrection(a: Float64Array, b: Float64Array, c: Float64Array): number {
    this.update(a, b, c);
    return this.correction;
  }
}
