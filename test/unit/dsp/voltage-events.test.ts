import { describe, expect, test } from 'vitest';
import { VoltageEventDetector } from '../../../agent/core/dsp/voltage-events.js';

// Thresholds 90 % / 110 % / 5 % of Udin with 2 % hysteresis: typical values of IEC 61000-4-30 §5.4 (from memory).
const U = 230;

function window(d: VoltageEventDetector, values: [number, number, number][]): { dip: boolean; swell: boolean; interruption: boolean } {
  d.beginWindow();
  for (const [a, b, c] of values) d.step(a, b, c);
  return { dip: d.dipSeen, swell: d.swellSeen, interruption: d.interruptionSeen };
}

describe('VoltageEventDetector (polyphase rules of IEC 61000-4-30 §5.4, from memory)', () => {
  test('a dip starts when one channel falls below 90 % of the declared voltage', () => {
    const d = new VoltageEventDetector(U);
    expect(window(d, [[U, U, U], [U, 0.89 * U, U]]).dip).toBe(true);
  });

  test('a channel at exactly 90 % is not a dip', () => {
    const d = new VoltageEventDetector(U);
    expect(window(d, [[0.9 * U, U, U]]).dip).toBe(false);
  });

  test('a dip ends only when every channel is back at or above 92 % (2 % hysteresis), so a window at 91 % stays flagged', () => {
    const d = new VoltageEventDetector(U);
    window(d, [[0.8 * U, U, U]]);
    expect(window(d, [[0.91 * U, U, U]]).dip).toBe(true);
    window(d, [[0.92 * U, U, U]]);
    expect(window(d, [[0.95 * U, U, U]]).dip).toBe(false);
  });

  test('a swell starts when one channel rises above 110 %', () => {
    const d = new VoltageEventDetector(U);
    expect(window(d, [[U, U, 1.11 * U]]).swell).toBe(true);
  });

  test('an interruption needs every channel below 5 %; one channel below 5 % is a dip only', () => {
    const d = new VoltageEventDetector(U);
    expect(window(d, [[0.01 * U, U, U]])).toEqual({ dip: true, swell: false, interruption: false });
    const e = new VoltageEventDetector(U);
    expect(window(e, [[0.01 * U, 0.02 * U, 0.04 * U]])).toEqual({ dip: true, swell: false, interruption: true });
  });
});
