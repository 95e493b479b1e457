import { describe, expect, test } from 'vitest';
import { LagrangeResampler } from '../../../agent/core/dsp/lagrange-resampler.js';

describe('LagrangeResampler (six-point Lagrange interpolation)', () => {
  test('reproduces a polynomial of degree 5 exactly at fractional positions (exactness of degree-5 Lagrange interpolation, Abramowitz & Stegun 25.2)', () => {
    const p = (x: number): number => 0.3 - 1.2 * x + 0.05 * x ** 2 + 0.004 * x ** 3 - 2e-4 * x ** 4 + 3e-6 * x ** 5;
    const src = Float64Array.from({ length: 40 }, (_, n) => p(n));
    const r = new LagrangeResampler(16);
    r.plan(3.37, 1.913, 16);
    const out = new Float64Array(16);
    r.apply(src, out);
    for (let k = 0; k < 16; k++) expect(Math.abs(out[k]! - p(3.37 + 1.913 * k))).toBeLessThan(1e-9);
  });

  test('interpolates a 50 Hz sinusoid sampled at 4 kS/s within 1e-8 of its amplitude (the interpolation-weight analysis in the module comment gives 1.1e-9)', () => {
    const rate = 4000, f = 50;
    const src = Float64Array.from({ length: 400 }, (_, n) => Math.cos((2 * Math.PI * f * n) / rate + 0.3));
    const r = new LagrangeResampler(1024);
    const step = 300 / 1024;
    r.plan(10.25, step, 1024);
    const out = new Float64Array(1024);
    r.apply(src, out);
    for (let k = 0; k < 1024; k++) {
      const t = (10.25 + k * step) / rate;
      expect(Math.abs(out[k]! - Math.cos(2 * Math.PI * f * t + 0.3))).toBeLessThan(1e-8);
    }
  });

  test('planning more points than the capacity is refused', () => {
    const r = new LagrangeResampler(8);
    expect(() => r.plan(2, 1, 9)).toThrow(RangeError);
  });
});
