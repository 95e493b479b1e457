/**
 * Accuracy of the basic-window estimator on synthetic waveforms built from
 * chosen sequence components (synthetic-waveforms.ts).
 *
 * Reference phasor of a window (stated for TVE, IEEE C37.118.1-2011 §5.3):
 * the true phase phasor X_p rotated to the true instantaneous phase θ(t_c) at
 * the window centre t_c = ts + durationMs/2, i.e. X_p·e^{jθ(t_c)}. For a steady
 * frequency this equals the phase at the window start modulo 360°, because
 * the window holds an even number (10 or 12) of cycles; under a ramp it is the
 * phase the DFT over the window follows. True window frequency: the mean
 * frequency over the window, (θ(ts + T) − θ(ts)) / (2πT).
 *
 * Limits: u2, u0 within ±0.02 percentage points absolute (a tenth of the
 * ±0.15 % class A unbalance uncertainty, IEC 61000-4-30 §5.7, from memory;
 * CHECKS.md §3), |V1| within ±0.05 % (half the class A ±0.1 % magnitude
 * uncertainty, CHECKS.md §3, from memory), TVE below 1 % and frequency within
 * ±5 mHz (IEEE C37.118.1a-2014 §4.3 steady-state limits, published;
 * CHECKS.md §4).
 */
import { describe, expect, test } from 'vitest';
import { WaveformEstimator, type BasicWindow } from '../../../agent/core/dsp/waveform-estimator.js';
import type { SamplesFrame } from '../../../agent/core/frames.js';
import { fortescueInto } from '../../../agent/core/sequence/fortescue.js';
import { gaussian, makeWave, mulberry32, phaseFromSequence, theta, toFrames, tve, type Harmonic, type Polar, type WaveSpec } from './synthetic-waveforms.js';

const TS0 = Date.UTC(2026, 2, 2, 14, 3, 7);
const U2_U0_ABS_PP = 0.02;
const POS_REL_PERCENT = 0.05;
const TVE_LIMIT = 0.01;
const FREQ_ABS_HZ = 0.005;

/** Copy of what a test keeps from a window (the estimator reuses its output object). */
interface Kept {
  ts: number;
  durationMs: number;
  freq: number;
  v: Float64Array | null;
  i: Float64Array | null;
  vRms: Float64Array | null;
  vThd: Float64Array | null;
  flagged: boolean;
  gap: boolean;
  dip: boolean;
  swell: boolean;
  interruption: boolean;
}

function keep(w: BasicWindow): Kept {
  const copy = (x: Float64Array | null): Float64Array | null => (x === null ? null : Float64Array.from(x));
  return {
    ts: w.ts, durationMs: w.durationMs, freq: w.freq, v: copy(w.v), i: copy(w.i), vRms: copy(w.vRms), vThd: copy(w.vThd),
    flagged: w.flagged, gap: w.gap, dip: w.dip, swell: w.swell, interruption: w.interruption,
  };
}

function runFrames(frames: SamplesFrame[], nominalHz: 50 | 60, nominalVoltageLN: number | null = null): Kept[] {
  const est = new WaveformEstimator({ nominalHz, nominalVoltageLN });
  const out: Kept[] = [];
  for (const f of frames) est.push(f, (w) => out.push(keep(w)));
  return out;
}

interface Errors {
  windows: number;
  u2: number;
  u0: number;
  pos: number;
  tve: number;
  freq: number;
}

function measure(spec: WaveSpec, nominalHz: 50 | 60, blockMs: number | 'whole'): Errors {
  const wave = makeWave(spec);
  const block = blockMs === 'whole' ? wave.phases[0].length : Math.round((spec.rate * blockMs) / 1000);
  const windows = runFrames(toFrames(TS0, spec.rate, wave, null, block), nominalHz);
  const seq = new Float64Array(6);
  const u2True = (100 * spec.neg.mag) / spec.pos.mag, u0True = (100 * spec.zero.mag) / spec.pos.mag;
  const e: Errors = { windows: windows.length, u2: 0, u0: 0, pos: 0, tve: 0, freq: 0 };
  for (const w of windows) {
    const ts = (w.ts - TS0) / 1000, T = w.durationMs / 1000;
    fortescueInto(w.v!, seq);
    const p = Math.hypot(seq[2]!, seq[3]!);
    e.u2 = Math.max(e.u2, Math.abs((100 * Math.hypot(seq[4]!, seq[5]!)) / p - u2True));
    e.u0 = Math.max(e.u0, Math.abs((100 * Math.hypot(seq[0]!, seq[1]!)) / p - u0True));
    e.pos = Math.max(e.pos, 100 * Math.abs(p / spec.pos.mag - 1));
    const th = theta(spec, ts + T / 2);
    for (let k = 0; k < 3; k++) {
      const re = wave.phasors[2 * k]!, im = wave.phasors[2 * k + 1]!;
      e.tve = Math.max(e.tve, tve(w.v![2 * k]!, w.v![2 * k + 1]!, re * Math.cos(th) - im * Math.sin(th), re * Math.sin(th) + im * Math.cos(th)));
    }
    e.freq = Math.max(e.freq, Math.abs(w.freq - (theta(spec, ts + T) - theta(spec, ts)) / (2 * Math.PI * T)));
  }
  return e;
}

// Sequence content chosen so that u2 and u0 span 0.5–5 % (CHECKS.md §3 class A range, from memory).
const CONTENT: { zero: Polar; pos: Polar; neg: Polar }[] = [
  { zero: { mag: 11.5, deg: 33 }, pos: { mag: 230, deg: 10 }, neg: { mag: 1.15, deg: -71 } }, // u2 0.5 %, u0 5 %
  { zero: { mag: 2.3, deg: -140 }, pos: { mag: 230, deg: -25 }, neg: { mag: 4.6, deg: 95 } }, // u2 2 %, u0 1 %
  { zero: { mag: 72, deg: 170 }, pos: { mag: 7200, deg: 0 }, neg: { mag: 360, deg: 12 } }, // u2 5 %, u0 1 %
];
const HARMONICS: Harmonic[] = [
  { order: 3, percent: 6, deg: 25 },
  { order: 5, percent: 10, deg: -60 },
  { order: 7, percent: 3, deg: 140 },
];

interface Case {
  name: string;
  nominal: 50 | 60;
  rate: number;
  f0: number;
  ramp?: number;
  harmonics?: boolean;
  noise?: number;
  content: number;
}

const CASES: Case[] = [
  { name: '50 Hz nominal, 6400 S/s', nominal: 50, rate: 6400, f0: 50, content: 0 },
  { name: '50 Hz system at 42.5 Hz (class A lower edge), 6400 S/s', nominal: 50, rate: 6400, f0: 42.5, content: 1 },
  { name: '50 Hz system at 57.5 Hz (class A upper edge), 6400 S/s', nominal: 50, rate: 6400, f0: 57.5, content: 2 },
  { name: '50 Hz system at 49.83 Hz, 4000 S/s', nominal: 50, rate: 4000, f0: 49.83, content: 1 },
  { name: '60 Hz nominal, 7680 S/s', nominal: 60, rate: 7680, f0: 60, content: 1 },
  { name: '60 Hz system at 51 Hz (class A lower edge), 7680 S/s', nominal: 60, rate: 7680, f0: 51, content: 2 },
  { name: '60 Hz system at 69 Hz (class A upper edge), 7680 S/s', nominal: 60, rate: 7680, f0: 69, content: 0 },
  { name: '60 Hz system at 69 Hz, 4000 S/s', nominal: 60, rate: 4000, f0: 69, content: 1 },
  { name: '50 Hz at 50.2 Hz with 3rd/5th/7th harmonics 6/10/3 % and 0.1 % noise, 6400 S/s', nominal: 50, rate: 6400, f0: 50.2, harmonics: true, noise: 0.1, content: 0 },
  { name: '50 Hz at 42.5 Hz with harmonics and noise, 4000 S/s', nominal: 50, rate: 4000, f0: 42.5, harmonics: true, noise: 0.1, content: 2 },
  { name: '60 Hz at 59.91 Hz with harmonics and noise, 7680 S/s', nominal: 60, rate: 7680, f0: 59.91, harmonics: true, noise: 0.1, content: 1 },
  { name: '60 Hz at 69 Hz with harmonics and noise, 4000 S/s', nominal: 60, rate: 4000, f0: 69, harmonics: true, noise: 0.1, content: 0 },
  { name: '50 Hz ramp 49 Hz + 0.5 Hz/s with harmonics and noise, 6400 S/s', nominal: 50, rate: 6400, f0: 49, ramp: 0.5, harmonics: true, noise: 0.1, content: 1 },
  { name: '60 Hz ramp 61 Hz − 0.5 Hz/s, 7680 S/s', nominal: 60, rate: 7680, f0: 61, ramp: -0.5, content: 2 },
  { name: '60 Hz ramp 59 Hz + 0.5 Hz/s with harmonics and noise, 4000 S/s', nominal: 60, rate: 4000, f0: 59, ramp: 0.5, harmonics: true, noise: 0.1, content: 0 },
  // Faster than the 128-point grid can take without folding: through the anti-alias filter (anti-alias.ts).
  { name: '60 Hz at 59.91 Hz with harmonics and noise, 15360 S/s (256 per cycle)', nominal: 60, rate: 15360, f0: 59.91, harmonics: true, noise: 0.1, content: 1 },
  { name: '60 Hz system at 69 Hz (class A upper edge), 15360 S/s', nominal: 60, rate: 15360, f0: 69, content: 0 },
  { name: '50 Hz system at 42.5 Hz (class A lower edge), 12800 S/s (256 per cycle)', nominal: 50, rate: 12800, f0: 42.5, content: 2 },
  { name: '50 Hz ramp 49 Hz + 0.5 Hz/s with harmonics and noise, 64000 S/s', nominal: 50, rate: 64000, f0: 49, ramp: 0.5, harmonics: true, noise: 0.1, content: 0 },
];

function specOf(c: Case): WaveSpec {
  return {
    rate: c.rate,
    f0: c.f0,
    rampHzPerS: c.ramp ?? 0,
    seconds: c.ramp === undefined ? 1.5 : 4,
    ...CONTENT[c.content]!,
    harmonics: c.harmonics === true ? HARMONICS : [],
    noisePercent: c.noise ?? 0,
    seed: Math.round(c.f0 * 100) + c.rate,
  };
}

describe('WaveformEstimator accuracy on every basic window', () => {
  for (const c of CASES) {
    for (const block of [20, 100, 'whole'] as const) {
      test(`${c.name}, ${block === 'whole' ? 'one long block' : `${block} ms blocks`}: u2/u0 ±0.02 pp, |V1| ±0.05 %, TVE < 1 %, f ±5 mHz`, () => {
        const e = measure(specOf(c), c.nominal, block);
        expect(e.windows).toBeGreaterThanOrEqual(5);
        expect(e.u2).toBeLessThan(U2_U0_ABS_PP);
        expect(e.u0).toBeLessThan(U2_U0_ABS_PP);
        expect(e.pos).toBeLessThan(POS_REL_PERCENT);
        expect(e.tve).toBeLessThan(TVE_LIMIT);
        expect(e.freq).toBeLessThan(FREQ_ABS_HZ);
      });
    }
  }
});

describe('WaveformEstimator windows', () => {
  const spec: WaveSpec = { ...specOf(CASES[5]!), harmonics: HARMONICS, seconds: 2 };

  test('results do not depend on how the samples are split into blocks', () => {
    const wave = makeWave(spec);
    const a = runFrames(toFrames(TS0, spec.rate, wave, null, 77), 60);
    const b = runFrames(toFrames(TS0, spec.rate, wave, null, wave.phases[0].length), 60);
    expect(a.length).toBe(b.length);
    for (let k = 0; k < a.length; k++) {
      expect(Math.abs(a[k]!.ts - b[k]!.ts)).toBeLessThan(1e-3);
      for (let j = 0; j < 6; j++) expect(Math.abs(a[k]!.v![j]! - b[k]!.v![j]!)).toBeLessThan(1e-9 * spec.pos.mag);
    }
  });

  test('windows are contiguous and each spans 12 cycles of its own frequency at 60 Hz (IEC 61000-4-30 §4.4)', () => {
    const w = runFrames(toFrames(TS0, spec.rate, makeWave(spec), null, 384), 60);
    // 1e-3 ms: a few units of the last place of an epoch-ms double (2.4e-4 ms in 2026).
    for (let k = 1; k < w.length; k++) expect(Math.abs(w[k]!.ts - (w[k - 1]!.ts + w[k - 1]!.durationMs))).toBeLessThan(1e-3);
    for (const x of w) expect(Math.abs((x.durationMs / 1000) * x.freq - 12)).toBeLessThan(1e-9);
  });

  test.each([
    [50, 49.5, 202.02],
    [50, 50.5, 198.02],
    [60, 59.5, 201.681],
    [60, 60.5, 198.347],
  ] as const)('a %i Hz system at %f Hz has basic windows of %f ms (CHECKS.md §3, computed with mathjs; printed to 3 decimals)', (nominal, f, ms) => {
    const s: WaveSpec = { rate: 6000, f0: f, seconds: 1.5, ...CONTENT[1]! };
    const w = runFrames(toFrames(TS0, s.rate, makeWave(s), null, 600), nominal);
    expect(w.length).toBeGreaterThan(4);
    for (const x of w) expect(Math.abs(x.durationMs - ms)).toBeLessThan(5e-4);
  });

  test('windows span 10 cycles at 50 Hz and the first starts within the first millisecond of the data', () => {
    const s: WaveSpec = { ...specOf(CASES[0]!) };
    const w = runFrames(toFrames(TS0, s.rate, makeWave(s), null, 128), 50);
    expect(w[0]!.ts - TS0).toBeGreaterThanOrEqual(0);
    expect(w[0]!.ts - TS0).toBeLessThan(1);
    for (const x of w) expect(Math.abs((x.durationMs / 1000) * x.freq - 10)).toBeLessThan(1e-9);
  });

  test('THD of a known harmonic mix is √(Σ harmonic²)/fundamental per phase within 0.01 percentage points (IEC 61000-4-7 THD definition, from memory)', () => {
    const s: WaveSpec = { ...specOf(CASES[8]!), noisePercent: 0 };
    const w = runFrames(toFrames(TS0, s.rate, makeWave(s), null, 640), 50);
    const ph = phaseFromSequence(s.zero, s.pos, s.neg);
    const hRms = s.pos.mag * Math.sqrt(HARMONICS.reduce((acc, h) => acc + (h.percent / 100) ** 2, 0));
    for (const x of w) {
      for (let p = 0; p < 3; p++) {
        const fund = Math.hypot(ph[2 * p]!, ph[2 * p + 1]!);
        expect(Math.abs(x.vThd![p]! - (100 * hRms) / fund)).toBeLessThan(0.01);
      }
    }
  });

  // THD counts harmonics 2..40 only (IEC 61000-4-7 / IEC 61000-4-30 §5.9 definition, from memory): content above is not
  // part of it, and must not fold onto those harmonics when the input is sampled faster than the 128-point grid.
  for (const [nominal, rate, f0, order] of [
    [60, 15360, 60, 100], // 6 kHz: on the 128-point grid it would fold onto the 28th harmonic
    [60, 15360, 59.91, 120], // 7.2 kHz, just below the input's Nyquist frequency: would fold onto the 8th
    [50, 64000, 50, 250], // 12.5 kHz: would fold onto the 6th
  ] as const) {
    test(`THD ignores a 5 % ${order}th harmonic at ${rate} S/s (${nominal} Hz system): the known mix reads within 0.01 pp, |V1| within 0.05 %`, () => {
      const s: WaveSpec = { ...specOf(CASES[8]!), rate, f0, noisePercent: 0, harmonics: [...HARMONICS, { order, percent: 5, deg: 40 }] };
      const w = runFrames(toFrames(TS0, s.rate, makeWave(s), null, Math.round(rate / 50)), nominal);
      const ph = phaseFromSequence(s.zero, s.pos, s.neg);
      const hRms = s.pos.mag * Math.sqrt(HARMONICS.reduce((acc, h) => acc + (h.percent / 100) ** 2, 0));
      const seq = new Float64Array(6);
      expect(w.length).toBeGreaterThanOrEqual(5);
      for (const x of w) {
        for (let p = 0; p < 3; p++) {
          const fund = Math.hypot(ph[2 * p]!, ph[2 * p + 1]!);
          expect(Math.abs(x.vThd![p]! - (100 * hRms) / fund)).toBeLessThan(0.01);
        }
        fortescueInto(x.v!, seq);
        expect(100 * Math.abs(Math.hypot(seq[2]!, seq[3]!) / s.pos.mag - 1)).toBeLessThan(POS_REL_PERCENT);
      }
    });
  }

  test('true RMS includes the harmonics: √(fundamental² + Σ harmonic²) within 0.01 % (Parseval, common practice)', () => {
    const s: WaveSpec = { ...specOf(CASES[11]!), noisePercent: 0 };
    const w = runFrames(toFrames(TS0, s.rate, makeWave(s), null, 80), 60);
    const ph = phaseFromSequence(s.zero, s.pos, s.neg);
    const hSq = s.pos.mag ** 2 * HARMONICS.reduce((acc, h) => acc + (h.percent / 100) ** 2, 0);
    for (const x of w) {
      for (let p = 0; p < 3; p++) {
        const expected = Math.sqrt(ph[2 * p]! ** 2 + ph[2 * p + 1]! ** 2 + hSq);
        expect(Math.abs(x.vRms![p]! / expected - 1)).toBeLessThan(1e-4);
      }
    }
  });

  test('currents alone are estimated with the same accuracy and voltage fields are null', () => {
    const s = specOf(CASES[6]!);
    const wave = makeWave(s);
    const w = runFrames(toFrames(TS0, s.rate, null, wave, 768), 60);
    const seq = new Float64Array(6);
    expect(w.length).toBeGreaterThan(4);
    for (const x of w) {
      expect(x.v).toBeNull();
      fortescueInto(x.i!, seq);
      expect(Math.abs((100 * Math.hypot(seq[4]!, seq[5]!)) / Math.hypot(seq[2]!, seq[3]!) - (100 * s.neg.mag) / s.pos.mag)).toBeLessThan(U2_U0_ABS_PP);
    }
  });
});

describe('WaveformEstimator discontinuities', () => {
  const spec: WaveSpec = { ...specOf(CASES[4]!), seconds: 3 };

  test('a timestamp jump flags gap on the first window after it only, and alignment restarts at the new block', () => {
    const frames = toFrames(TS0, spec.rate, makeWave(spec), null, 768);
    // Remove 0.5 s of data in the middle: the frames after it keep their true timestamps.
    const cut = [...frames.slice(0, 10), ...frames.slice(15)];
    const w = runFrames(cut, 60);
    const gaps = w.map((x) => x.gap);
    const first = gaps.indexOf(true);
    expect(first).toBeGreaterThan(0);
    expect(gaps.filter((g) => g).length).toBe(1);
    expect(w[first]!.flagged).toBe(true);
    const resumeTs = frames[15]!.ts;
    expect(w[first]!.ts).toBeGreaterThanOrEqual(resumeTs);
    expect(w[first]!.ts - resumeTs).toBeLessThan(1);
    expect(w.slice(0, first).every((x) => !x.flagged)).toBe(true);
  });

  test('a block continuing the previous one within half a sample is not a gap', () => {
    const frames = toFrames(TS0, spec.rate, makeWave(spec), null, 768).map((f, k) => ({ ...f, ts: f.ts + (k % 2 === 0 ? 0.04 : -0.04) * (1000 / spec.rate) }));
    expect(runFrames(frames, 60).some((x) => x.gap)).toBe(false);
  });

  test('a sample-rate change is a gap', () => {
    const a = makeWave({ ...spec, seconds: 1 });
    const b = makeWave({ ...spec, rate: 6000, seconds: 1 });
    const frames = [...toFrames(TS0, spec.rate, a, null, 768), ...toFrames(TS0 + 1000, 6000, b, null, 600)];
    const w = runFrames(frames, 60);
    expect(w.filter((x) => x.gap).length).toBe(1);
  });

  test('reset() forgets the stream so the next block starts without a gap flag', () => {
    const est = new WaveformEstimator({ nominalHz: 60, nominalVoltageLN: null });
    const frames = toFrames(TS0, spec.rate, makeWave(spec), null, 768);
    const seen: boolean[] = [];
    est.push(frames[0]!, () => undefined);
    est.reset();
    for (const f of frames.slice(5)) est.push(f, (w) => seen.push(w.gap));
    expect(seen.length).toBeGreaterThan(0);
    expect(seen.some((g) => g)).toBe(false);
  });
});

describe('WaveformEstimator dip, swell and interruption flags (IEC 61000-4-30 §5.4, §4.7)', () => {
  const U = 230;
  const base: WaveSpec = { rate: 6400, f0: 50, seconds: 3, zero: { mag: 0, deg: 0 }, pos: { mag: U, deg: 0 }, neg: { mag: 0, deg: 0 } };

  /** Scales phases `which` by `factor` between t0 and t1 (seconds). */
  function event(which: number[], factor: number, t0: number, t1: number): SamplesFrame[] {
    const w = makeWave(base);
    for (const p of which) for (let n = Math.round(t0 * base.rate); n < Math.round(t1 * base.rate); n++) w.phases[p]![n]! *= factor;
    return toFrames(TS0, base.rate, w, null, 640);
  }

  /**
   * Windows holding at least 30 ms of the event (1.5 cycles at 50 Hz, so one whole Urms(1/2) cycle,
   * which starts on a half-cycle mark, lies inside it), and windows at least 25 ms clear of it
   * (Urms(1/2) reaches half a cycle into the previous window); those in between are not judged.
   */
  function windowsAround(w: Kept[], t0: number, t1: number): { inside: Kept[]; outside: Kept[] } {
    const a = TS0 + t0 * 1000, b = TS0 + t1 * 1000;
    const overlapMs = (x: Kept): number => Math.min(b, x.ts + x.durationMs) - Math.max(a, x.ts);
    return { inside: w.filter((x) => overlapMs(x) >= 30), outside: w.filter((x) => overlapMs(x) <= -25) };
  }

  test('a 100 ms dip to 50 % on phase b flags the windows it touches as dip and no others', () => {
    const w = runFrames(event([1], 0.5, 1.13, 1.23), 50, U);
    const { inside, outside } = windowsAround(w, 1.13, 1.23);
    expect(inside.length).toBeGreaterThan(0);
    expect(inside.every((x) => x.dip && x.flagged && !x.interruption)).toBe(true);
    expect(outside.every((x) => !x.flagged)).toBe(true);
  });

  test('a swell to 120 % on phase a flags swell', () => {
    const w = runFrames(event([0], 1.2, 1.0, 1.3), 50, U);
    const { inside, outside } = windowsAround(w, 1.0, 1.3);
    expect(inside.length).toBeGreaterThan(0);
    expect(inside.every((x) => x.swell && !x.dip)).toBe(true);
    expect(outside.every((x) => !x.flagged)).toBe(true);
  });

  test('all three phases at 1 % for 0.5 s flag interruption', () => {
    const w = runFrames(event([0, 1, 2], 0.01, 1.0, 1.5), 50, U);
    const { inside } = windowsAround(w, 1.0, 1.5);
    expect(inside.length).toBeGreaterThan(1);
    expect(inside.every((x) => x.interruption && x.flagged)).toBe(true);
  });

  test('without a declared voltage nothing is flagged as dip, swell or interruption', () => {
    const w = runFrames(event([1], 0.5, 1.13, 1.23), 50, null);
    expect(w.some((x) => x.dip || x.swell || x.interruption || x.flagged)).toBe(false);
  });
});

describe('WaveformEstimator frequency lock', () => {
  test('after 0.6 s of noise only (voltage lost), the frequency is found again when the voltage returns 7 Hz away (beyond the ±5 Hz range of the half-window refinement)', () => {
    const rate = 6400;
    const content = CONTENT[1]!;
    const before = makeWave({ rate, f0: 50, seconds: 1, ...content });
    const lost = makeWave({ rate, f0: 50, seconds: 0.6, zero: { mag: 0, deg: 0 }, pos: { mag: 0, deg: 0 }, neg: { mag: 0, deg: 0 } });
    // Noise is specified relative to |X1|, which is zero here: add it directly (0.1 % of the nominal peak).
    const rand = gaussian(mulberry32(4));
    for (const p of lost.phases) for (let n = 0; n < p.length; n++) p[n] = 0.001 * 230 * Math.SQRT2 * rand();
    const afterSpec: WaveSpec = { rate, f0: 57, seconds: 1.4, ...content };
    const after = makeWave(afterSpec);
    const joined = (k: number): Float64Array => Float64Array.from([...before.phases[k]!, ...lost.phases[k]!, ...after.phases[k]!]);
    const wave = { spec: afterSpec, phasors: after.phasors, phases: [joined(0), joined(1), joined(2)] as [Float64Array, Float64Array, Float64Array] };
    const w = runFrames(toFrames(TS0, rate, wave, null, 128), 50);
    const resume = TS0 + 1600;
    // Allow the window holding the return and one more to settle.
    const settled = w.filter((x) => x.ts > resume + 2 * 250);
    expect(settled.length).toBeGreaterThan(2);
    for (const x of settled) expect(Math.abs(x.freq - 57)).toBeLessThan(FREQ_ABS_HZ);
  });

  test('while only noise is present the last good frequency is held', () => {
    const rate = 6400;
    const good = makeWave({ rate, f0: 50.3, seconds: 1, ...CONTENT[0]! });
    const rand = gaussian(mulberry32(8));
    const noise = (): Float64Array => Float64Array.from({ length: rate }, () => 0.3 * rand());
    const wave = { ...good, phases: good.phases.map((p) => Float64Array.from([...p, ...noise()])) as [Float64Array, Float64Array, Float64Array] };
    const w = runFrames(toFrames(TS0, rate, wave, null, 640), 50);
    const inNoise = w.filter((x) => x.ts > TS0 + 1000);
    expect(inNoise.length).toBeGreaterThan(2);
    for (const x of inNoise) expect(Math.abs(x.freq - 50.3)).toBeLessThan(FREQ_ABS_HZ);
  });
});

