/**
 * The anti-alias low-pass ahead of the estimator's resampling.
 * References:
 *  - I0 values and the Kaiser design (length, β) for the same specification
 *    were computed once with NumPy 2.4.6 (numpy.i0) and SciPy
 *    (scipy.signal.kaiserord(80, 2·1344/15360) = (59, 7.857)), general-purpose
 *    reference libraries; Abramowitz & Stegun Table 9.8 lists the same I0
 *    values (from memory).
 *  - The filter is judged by its own frequency response, evaluated directly
 *    from its taps (DTFT), against the specification it was designed for.
 *    Kaiser's length formula is an estimate, good to about 2 dB (from memory):
 *    an 80 dB design is accepted at 76 dB (1.6e-4).
 */
import { describe, expect, test } from 'vitest';
import { ANTI_ALIAS_ATTENUATION_DB, antiAliasBands, besselI0, CentredFir, kaiserLowPass } from '../../../agent/core/dsp/anti-alias.js';

const ACCEPTED = 10 ** (-(ANTI_ALIAS_ATTENUATION_DB - 4) / 20);

/** |H(f)| of a centred FIR at sample rate `rate`. */
function gain(h: Float64Array, rate: number, f: number): number {
  const half = (h.length - 1) / 2;
  let re = 0, im = 0;
  for (let n = 0; n < h.length; n++) {
    const w = (2 * Math.PI * f * (n - half)) / rate;
    re += h[n]! * Math.cos(w);
    im -= h[n]! * Math.sin(w);
  }
  return Math.hypot(re, im);
}

describe('besselI0', () => {
  test.each([
    [0, 1],
    [1, 1.2660658777520082],
    [2, 2.279585302336067],
    [5, 27.239871823604442],
    [7.857, 374.0737108699652],
  ])('I0(%d) = %d (numpy.i0)', (x, expected) => {
    expect(Math.abs(besselI0(x) / expected - 1)).toBeLessThan(1e-14);
  });
});

describe('when the filter is needed', () => {
  test('not at 7680 S/s in a 60 Hz system: nothing above 4224 Hz (88 × 48 Hz) can be carried, so nothing folds onto harmonics 2..40', () => {
    expect(antiAliasBands(7680, 128, 40, 48, 72)).toBeNull();
  });

  test('not at 6400 S/s in a 50 Hz system (common recorder rate, 128 per cycle)', () => {
    expect(antiAliasBands(6400, 128, 40, 40, 60)).toBeNull();
  });

  test('at 15360 S/s in a 60 Hz system: pass the 40th harmonic at 72 Hz (2880 Hz), stop from the 88th at 48 Hz (4224 Hz)', () => {
    expect(antiAliasBands(15360, 128, 40, 48, 72)).toEqual({ passHz: 2880, stopHz: 4224 });
  });
});

describe('Kaiser-windowed low-pass', () => {
  const bands60 = { passHz: 2880, stopHz: 4224 };

  test('has the length SciPy gives for the same specification (59 taps at 15360 S/s)', () => {
    expect(kaiserLowPass(15360, bands60).length).toBe(59);
  });

  test('is symmetric (linear phase) and has a gain of exactly 1 at DC', () => {
    const h = kaiserLowPass(15360, bands60);
    for (let n = 0; n < h.length; n++) expect(h[n]).toBe(h[h.length - 1 - n]);
    expect(Math.abs(h.reduce((a, b) => a + b, 0) - 1)).toBeLessThan(1e-15);
  });

  for (const [rate, bands] of [
    [15360, bands60],
    [12800, { passHz: 2400, stopHz: 3520 }],
    [64000, { passHz: 2400, stopHz: 3520 }],
  ] as const) {
    test(`at ${rate} S/s passes 0..${bands.passHz} Hz within ${ACCEPTED.toExponential(1)} of 1 and stops ${bands.stopHz} Hz..Nyquist below it`, () => {
      const h = kaiserLowPass(rate, bands);
      let passDev = 0, stop = 0;
      for (let f = 0; f <= bands.passHz; f += 2) passDev = Math.max(passDev, Math.abs(gain(h, rate, f) - 1));
      for (let f = bands.stopHz; f <= rate / 2; f += 2) stop = Math.max(stop, gain(h, rate, f));
      expect(passDev).toBeLessThan(ACCEPTED);
      expect(stop).toBeLessThan(ACCEPTED);
    });
  }
});

describe('centred FIR', () => {
  test('refuses an even number of taps (it would have no centre)', () => {
    expect(() => new CentredFir(new Float64Array(4))).toThrow(RangeError);
  });

  test('refuses taps that are not symmetric (it computes with mirrored pairs)', () => {
    expect(() => new CentredFir(Float64Array.of(0.2, 0.5, 0.3))).toThrow(/symmetric/);
  });

  test('with a step computes exactly every step-th output of the full filter (decimation)', () => {
    const fir = new CentredFir(kaiserLowPass(64000, { passHz: 2400, stopHz: 3520 }));
    const x = Float64Array.from({ length: 3000 }, (_, n) => Math.sin(n * 0.013) + 0.3 * Math.sin(n * 0.9));
    const full = new Float64Array(x.length), every4 = new Float64Array(x.length);
    fir.apply(x, full, fir.half, x.length - fir.half);
    const from = Math.ceil(fir.half / 4), to = Math.floor((x.length - 1 - fir.half) / 4) + 1;
    fir.apply(x, every4, from, to, 4);
    for (let j = from; j < to; j++) expect(every4[j]).toBe(full[4 * j]);
  });

  test('leaves a passband sinusoid where it was: no delay, amplitude within the passband tolerance', () => {
    const rate = 15360, f = 60 * 7;
    const fir = new CentredFir(kaiserLowPass(rate, { passHz: 2880, stopHz: 4224 }));
    const x = Float64Array.from({ length: 2000 }, (_, n) => Math.cos((2 * Math.PI * f * n) / rate + 0.3));
    const y = new Float64Array(x.length);
    fir.apply(x, y, fir.half, x.length - fir.half);
    for (let n = fir.half; n < x.length - fir.half; n++) expect(Math.abs(y[n]! - x[n]!)).toBeLessThan(ACCEPTED);
  });
});
