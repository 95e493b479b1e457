import { complex, fft as mathjsFft, type Complex } from 'mathjs';
import { describe, expect, test } from 'vitest';
import { Fft } from '../../../agent/core/dsp/fft.js';
import { mulberry32 } from './synthetic-waveforms.js';

// Double-precision FFTs of these sizes agree to ~1e-13 relative; 1e-9 leaves room and still catches any wrong twiddle.
const REL_TOL = 1e-9;

function randomComplex(n: number, seed: number): Float64Array {
  const r = mulberry32(seed);
  const x = new Float64Array(2 * n);
  for (let k = 0; k < x.length; k++) x[k] = 2 * r() - 1;
  return x;
}

function maxAbs(x: Float64Array): number {
  let m = 0;
  for (const v of x) m = Math.max(m, Math.abs(v));
  return m;
}

describe('Fft facade over fft.js', () => {
  test.each([8, 64, 1024])('forward transform of size %i matches the mathjs fft (reference library)', (n) => {
    const f = new Fft(n);
    f.input.set(randomComplex(n, n));
    const out = f.forward();
    const ref = mathjsFft(Array.from({ length: n }, (_, k) => complex(f.input[2 * k]!, f.input[2 * k + 1]!))) as unknown as Complex[];
    const scale = maxAbs(out);
    for (let k = 0; k < n; k++) {
      expect(Math.abs(out[2 * k]! - ref[k]!.re)).toBeLessThan(REL_TOL * scale);
      expect(Math.abs(out[2 * k + 1]! - ref[k]!.im)).toBeLessThan(REL_TOL * scale);
    }
  });

  test('forward transform of size 32 matches a direct DFT X[k] = Σ x[n]·e^{-j2πkn/N} (Oppenheim & Schafer, eq. 8.11)', () => {
    const n = 32;
    const f = new Fft(n);
    const x = randomComplex(n, 7);
    const out = new Float64Array(2 * n);
    f.forwardInto(x, out);
    for (let k = 0; k < n; k++) {
      let re = 0, im = 0;
      for (let m = 0; m < n; m++) {
        const th = (-2 * Math.PI * k * m) / n;
        re += x[2 * m]! * Math.cos(th) - x[2 * m + 1]! * Math.sin(th);
        im += x[2 * m]! * Math.sin(th) + x[2 * m + 1]! * Math.cos(th);
      }
      expect(Math.abs(out[2 * k]! - re)).toBeLessThan(REL_TOL * n);
      expect(Math.abs(out[2 * k + 1]! - im)).toBeLessThan(REL_TOL * n);
    }
  });

  test('inverse of the forward transform returns the input (identity)', () => {
    const n = 256;
    const f = new Fft(n);
    const x = randomComplex(n, 3);
    const spec = new Float64Array(2 * n), back = new Float64Array(2 * n);
    f.forwardInto(x, spec);
    f.inverseInto(spec, back);
    for (let k = 0; k < 2 * n; k++) expect(Math.abs(back[k]! - x[k]!)).toBeLessThan(1e-12);
  });

  test('real forward transform equals the complex transform of the same signal with zero imaginary part', () => {
    const n = 128;
    const f = new Fft(n);
    const r = mulberry32(11);
    const real = new Float64Array(n);
    for (let k = 0; k < n; k++) real[k] = r() - 0.5;
    const viaReal = new Float64Array(2 * n);
    f.realForwardInto(real, viaReal);
    for (let k = 0; k < n; k++) {
      f.input[2 * k] = real[k]!;
      f.input[2 * k + 1] = 0;
    }
    const viaComplex = f.forward();
    for (let k = 0; k < 2 * n; k++) expect(Math.abs(viaReal[k]! - viaComplex[k]!)).toBeLessThan(1e-12);
  });

  test.each([0, 1, 3, 1000])('size %i is refused because fft.js needs a power of two of at least 2', (n) => {
    expect(() => new Fft(n)).toThrow(RangeError);
  });

  test('an output buffer of the wrong length is refused instead of being written past its end', () => {
    const f = new Fft(16);
    expect(() => f.forwardInto(new Float64Array(32), new Float64Array(16))).toThrow(RangeError);
  });
});
