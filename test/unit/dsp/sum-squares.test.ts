import { describe, expect, test } from 'vitest';
import { sumSquaresBetween } from '../../../agent/core/dsp/sum-squares.js';
import { mulberry32 } from './synthetic-waveforms.js';

describe('sumSquaresBetween', () => {
  const r = mulberry32(5);
  const x = Float64Array.from({ length: 64 }, () => r() - 0.5);

  test('adjacent fractional spans add up to the span that covers both (additivity of the integral)', () => {
    const whole = sumSquaresBetween(x, 3.3, 40.8);
    const parts = sumSquaresBetween(x, 3.3, 11.05) + sumSquaresBetween(x, 11.05, 11.4) + sumSquaresBetween(x, 11.4, 40.8);
    expect(Math.abs(whole - parts)).toBeLessThan(1e-12);
  });

  test('a span between cell edges n-0.5 .. m-0.5 is the plain sum of squares of samples n .. m-1', () => {
    let plain = 0;
    for (let n = 5; n < 20; n++) plain += x[n]! ** 2;
    expect(Math.abs(sumSquaresBetween(x, 4.5, 19.5) - plain)).toBeLessThan(1e-12);
  });

  test('mean square of a sinusoid over a whole number of periods starting between samples is A²/2 (RMS of a sinusoid, common practice) within 1e-6', () => {
    const rate = 7680, f = 59.3, A = 2;
    const s = Float64Array.from({ length: 2000 }, (_, n) => A * Math.cos((2 * Math.PI * f * n) / rate + 1));
    const start = 7.42, span = (12 * rate) / f;
    expect(Math.abs(sumSquaresBetween(s, start, start + span) / span - (A * A) / 2)).toBeLessThan(1e-6);
  });
});
