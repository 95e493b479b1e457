/**
 * Reconnect back-off: exponential with "equal jitter", delay n in [cap/2, cap],
 * cap = min(maxMs, minMs * 2^n) (AWS Architecture Blog, "Exponential Backoff
 * And Jitter", 2015, from memory). The random source is pinned so each bound is exact.
 */
import { describe, expect, test } from 'vitest';
import { ExponentialBackoff } from '../../../agent/core/backoff.js';

function delays(random: number, n: number, minMs = 100, maxMs = 1_000): number[] {
  const b = new ExponentialBackoff({ minMs, maxMs }, () => random);
  return Array.from({ length: n }, () => b.next());
}

describe('ExponentialBackoff', () => {
  test('with the largest jitter each delay is its cap, doubling from minMs up to maxMs', () => {
    // random -> 1 (exclusive): cap/2 + cap/2 * 0.999999 rounds to the cap.
    expect(delays(0.999999, 7)).toEqual([100, 200, 400, 800, 1000, 1000, 1000]);
  });

  test('with no jitter each delay is half its cap, so the delays still grow', () => {
    expect(delays(0, 6)).toEqual([50, 100, 200, 400, 500, 500]);
  });

  test('a delay never exceeds maxMs, whatever the random draw', () => {
    for (const r of [0, 0.25, 0.5, 0.75, 0.999999]) {
      expect(Math.max(...delays(r, 40, 7, 30_000))).toBeLessThanOrEqual(30_000);
    }
  });

  test('delays keep their cap after thousands of attempts (no overflow of 2^n)', () => {
    const all = delays(0.999999, 5_000, 500, 30_000);
    expect(all.at(-1)).toBe(30_000);
    expect(all.every((d) => Number.isFinite(d))).toBe(true);
  });

  test('reset() starts again from the first delay and attempts() counts calls since', () => {
    const b = new ExponentialBackoff({ minMs: 100, maxMs: 1_000 }, () => 0.999999);
    b.next();
    b.next();
    b.next();
    expect(b.attempts()).toBe(3);
    b.reset();
    expect(b.attempts()).toBe(0);
    expect(b.next()).toBe(100);
  });

  test('minMs equal to maxMs gives a delay in [maxMs/2, maxMs] every time', () => {
    expect(delays(0.5, 4, 800, 800)).toEqual([600, 600, 600, 600]);
  });
});
