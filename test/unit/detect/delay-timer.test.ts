/**
 * Pickup/dropout timing of one condition (definite-time delay, IEEE C37.2
 * device 62; common practice). Times are data times in ms.
 */
import { describe, expect, it } from 'vitest';
import type { DelayState } from '../../../agent/core/detect/delay-timer.js';
import { DELAY_NORMAL, isRaised, stepDelay } from '../../../agent/core/detect/delay-timer.js';

const T = { pickupMs: 1000, dropoutMs: 5000 };

function run(steps: [number, boolean][], start: DelayState = DELAY_NORMAL): DelayState[] {
  const states: DelayState[] = [];
  let s = start;
  for (const [now, on] of steps) {
    s = stepDelay(s, on, !on, now, T);
    states.push(s);
  }
  return states;
}

describe('stepDelay', () => {
  it('picks up on the first observation at exactly since + pickupMs, not 1 ms earlier', () => {
    const s = run([[0, true], [999, true], [1000, true]]);
    expect(s.map((x) => x.phase)).toEqual(['pending', 'pending', 'raised']);
    expect(s[2]!.since).toBe(1000);
  });

  it('restarts the pickup timer when the condition goes away while pending', () => {
    const s = run([[0, true], [900, false], [1000, true], [1999, true], [2000, true]]);
    expect(s.map((x) => x.phase)).toEqual(['pending', 'normal', 'pending', 'pending', 'raised']);
  });

  it('drops out on the first observation at exactly since + dropoutMs', () => {
    const s = run([[0, true], [1000, true], [2000, false], [6999, false], [7000, false]]);
    expect(s.map((x) => x.phase)).toEqual(['pending', 'raised', 'clearing', 'clearing', 'normal']);
  });

  it('returns to raised when the condition comes back during the dropout delay', () => {
    const s = run([[0, true], [1000, true], [2000, false], [3000, true], [7000, false], [11999, false], [12000, false]]);
    expect(s.map((x) => x.phase)).toEqual(['pending', 'raised', 'clearing', 'raised', 'clearing', 'clearing', 'normal']);
  });

  it('raises on the first observation when pickupMs is 0 and clears at once when dropoutMs is 0', () => {
    let s = stepDelay(DELAY_NORMAL, true, false, 10, { pickupMs: 0, dropoutMs: 0 });
    expect(s.phase).toBe('raised');
    s = stepDelay(s, false, true, 20, { pickupMs: 0, dropoutMs: 0 });
    expect(s).toBe(DELAY_NORMAL);
  });

  it('keeps a raised condition raised while the input is inside the hysteresis band (neither exceeded nor receded)', () => {
    let s = run([[0, true], [1000, true]]).at(-1)!;
    s = stepDelay(s, false, false, 2000, T);
    expect(s.phase).toBe('raised');
    expect(isRaised(s)).toBe(true);
  });

  it('returns the same state object when nothing changes (no allocation per step)', () => {
    const pending = stepDelay(DELAY_NORMAL, true, false, 0, T);
    expect(stepDelay(pending, true, false, 500, T)).toBe(pending);
    expect(stepDelay(DELAY_NORMAL, false, true, 500, T)).toBe(DELAY_NORMAL);
  });
});
