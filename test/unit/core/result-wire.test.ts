/** The wire form of results: ten significant digits, ISO-8601 UTC times, every field present. */
import { describe, expect, it } from 'vitest';
import { resultToWire, roundForWire } from '../../../agent/core/result.js';

describe('roundForWire', () => {
  it('keeps ten significant digits exactly as Number.prototype.toPrecision(10) does (ECMAScript reference)', () => {
    let seed = 12345;
    const rand = (): number => ((seed = (seed * 1103515245 + 12345) % 2 ** 31) / 2 ** 31);
    for (let n = 0; n < 20000; n++) {
      const x = (rand() - 0.5) * 10 ** (rand() * 20 - 8);
      expect(roundForWire(x)).toBe(Number(x.toPrecision(10)));
    }
  });

  it('passes zero and non-finite values through unchanged', () => {
    expect(roundForWire(0)).toBe(0);
    expect(Number.isNaN(roundForWire(Number.NaN))).toBe(true);
  });
});

describe('resultToWire', () => {
  it('writes ts as ISO-8601 UTC with milliseconds and null for what was not measured', () => {
    const w = resultToWire({ ts: Date.UTC(2026, 2, 2, 14, 3, 7, 250), feeder: 'F1', window: '3s', durationMs: 3000, freq: 60.002, flagged: false, v: null, i: null, count: 30 });
    expect(w).toEqual({ ts: '2026-03-02T14:03:07.250Z', feeder: 'F1', window: '3s', durationMs: 3000, freq: 60.002, flagged: false, count: 30, v: null, i: null });
  });
});
