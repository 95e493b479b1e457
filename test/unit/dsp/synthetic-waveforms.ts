/**
 * Synthetic three-phase waveforms with known content, built from chosen
 * sequence components (inverse Fortescue, amplitude-invariant, a = 1∠120°:
 * Xa = X0+X1+X2, Xb = X0+a²X1+aX2, Xc = X0+aX1+a²X2; CHECKS.md §0), so every
 * test knows the true u2, u0, phasors, RMS and THD independently of the code
 * under test.
 */
import type { SamplesFrame } from '../../../agent/core/frames.js';

export interface Polar {
  mag: number; // RMS
  deg: number;
}

export interface Harmonic {
  /** Harmonic order h ≥ 2. */
  order: number;
  /** RMS magnitude in percent of |X1|, the same in every phase (a balanced harmonic set). */
  percent: number;
  deg: number;
}

export interface WaveSpec {
  rate: number;
  /** Frequency at t = 0, Hz. */
  f0: number;
  /** Linear frequency ramp, Hz/s (0 for steady). */
  rampHzPerS?: number;
  seconds: number;
  zero: Polar;
  pos: Polar;
  neg: Polar;
  harmonics?: Harmonic[];
  /** Standard deviation of white Gaussian noise, in percent of the peak of |X1|. */
  noisePercent?: number;
  seed?: number;
}

export interface Wave {
  spec: WaveSpec;
  phases: [Float64Array, Float64Array, Float64Array];
  /** Phase fundamental phasors at θ = 0, rectangular [re, im] × 3 (RMS). */
  phasors: Float64Array;
}

const SQRT3_2 = Math.sqrt(3) / 2;

/** Mulberry32, a small seeded PRNG (public-domain algorithm by Tommy Ettinger), so noisy tests repeat exactly. */
export function mulberry32(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Standard normal deviates by the Box–Muller transform. */
export function gaussian(rand: () => number): () => number {
  return () => {
    const u = 1 - rand();
    const v = rand();
    return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
  };
}

function rect(p: Polar): [number, number] {
  const th = (p.deg * Math.PI) / 180;
  return [p.mag * Math.cos(th), p.mag * Math.sin(th)];
}

/** Phase phasors from sequence components (inverse Fortescue). */
export function phaseFromSequence(zero: Polar, pos: Polar, neg: Polar): Float64Array {
  const [zr, zi] = rect(zero), [pr, pi] = rect(pos), [nr, ni] = rect(neg);
  // a = -1/2 + j√3/2, a² = -1/2 - j√3/2
  const mul = (r: number, i: number, sr: number, si: number): [number, number] => [r * sr - i * si, r * si + i * sr];
  const [a2pr, a2pi] = mul(pr, pi, -0.5, -SQRT3_2);
  const [apr, api] = mul(pr, pi, -0.5, SQRT3_2);
  const [a2nr, a2ni] = mul(nr, ni, -0.5, -SQRT3_2);
  const [anr, ani] = mul(nr, ni, -0.5, SQRT3_2);
  return Float64Array.from([zr + pr + nr, zi + pi + ni, zr + a2pr + anr, zi + a2pi + ani, zr + apr + a2nr, zi + api + a2ni]);
}

/** Instantaneous phase θ(t) = 2π(f0·t + r·t²/2) of the fundamental. */
export function theta(spec: WaveSpec, t: number): number {
  const r = spec.rampHzPerS ?? 0;
  return 2 * Math.PI * (spec.f0 * t + 0.5 * r * t * t);
}

/** Instantaneous frequency at t, Hz. */
export function freqAt(spec: WaveSpec, t: number): number {
  return spec.f0 + (spec.rampHzPerS ?? 0) * t;
}

export function makeWave(spec: WaveSpec): Wave {
  const n = Math.round(spec.seconds * spec.rate);
  const ph = phaseFromSequence(spec.zero, spec.pos, spec.neg);
  const phases: [Float64Array, Float64Array, Float64Array] = [new Float64Array(n), new Float64Array(n), new Float64Array(n)];
  const noise = gaussian(mulberry32(spec.seed ?? 1));
  const sigma = ((spec.noisePercent ?? 0) / 100) * spec.pos.mag * Math.SQRT2;
  const harmonics = spec.harmonics ?? [];
  for (let k = 0; k < n; k++) {
    const th = theta(spec, k / spec.rate);
    for (let p = 0; p < 3; p++) {
      const re = ph[2 * p]!, im = ph[2 * p + 1]!;
      // √2·Re{X·e^{jθ}}
      let x = Math.SQRT2 * (re * Math.cos(th) - im * Math.sin(th));
      for (const h of harmonics) {
        const amp = Math.SQRT2 * (h.percent / 100) * spec.pos.mag;
        x += amp * Math.cos(h.order * (th - (2 * Math.PI * p) / 3) + (h.deg * Math.PI) / 180);
      }
      if (sigma > 0) x += sigma * noise();
      phases[p]![k] = x;
    }
  }
  return { spec, phases, phasors: ph };
}

/** Splits voltages (and optionally currents) into consecutive frames of `block` samples. */
export function toFrames(ts0: number, rate: number, v: Wave | null, i: Wave | null, block: number): SamplesFrame[] {
  const n = (v ?? i)!.phases[0].length;
  const frames: SamplesFrame[] = [];
  for (let s = 0; s < n; s += block) {
    const e = Math.min(n, s + block);
    const cut = (w: Wave | null): [Float64Array, Float64Array, Float64Array] | null =>
      w === null ? null : [w.phases[0].subarray(s, e), w.phases[1].subarray(s, e), w.phases[2].subarray(s, e)];
    frames.push({ kind: 'samples', feeder: 'F1', ts: ts0 + (s * 1000) / rate, rate, length: e - s, v: cut(v), i: cut(i) });
  }
  return frames;
}

/**
 * Total vector error, IEEE C37.118.1-2011 §5.3 eq. (12) (CHECKS.md §4):
 * TVE = √{[(X̂r − Xr)² + (X̂i − Xi)²] / (Xr² + Xi²)}, as a fraction.
 */
export function tve(measRe: number, measIm: number, trueRe: number, trueIm: number): number {
  return Math.sqrt(((measRe - trueRe) ** 2 + (measIm - trueIm) ** 2) / (trueRe ** 2 + trueIm ** 2));
}
