/**
 * Two-level limit alarm with hysteresis, on the default voltage-unbalance
 * settings: warning 2 % (IEC 61000-2-2 / EN 50160, from memory), alarm 3 %
 * (ANSI C84.1 Annex D, published, CHECKS.md §2.1), hysteresis 0.2 points,
 * pickup and dropout 60 s (agent/core/detect/settings.ts).
 */
import { describe, expect, it } from 'vitest';
import type { LimitAlarmState, LimitChange } from '../../../agent/core/detect/limit-alarm.js';
import { LIMIT_NORMAL, publishedLevel, restoredLimitState, stepLimitAlarm } from '../../../agent/core/detect/limit-alarm.js';
import { DEFAULT_DETECTION } from '../../../agent/core/detect/settings.js';

const CFG = DEFAULT_DETECTION.voltageUnbalance;
const STEP = 3000; // one 3-s aggregate

interface Logged extends LimitChange {
  ts: number;
}

/** Feeds values one per 3 s starting at t0 and logs the changes. */
function feed(values: (number | null)[], t0 = 0, start: LimitAlarmState = LIMIT_NORMAL): { log: Logged[]; state: LimitAlarmState } {
  let s = start;
  const log: Logged[] = [];
  values.forEach((v, k) => {
    const ts = t0 + k * STEP;
    const r = stepLimitAlarm(CFG, s, v, ts);
    s = r.state;
    if (r.change !== null) log.push({ ...r.change, ts });
  });
  return { log, state: s };
}

const repeat = (v: number | null, n: number): (number | null)[] => Array.from({ length: n }, () => v);

describe('stepLimitAlarm', () => {
  it('raises the warning at exactly pickupMs (60 s) after the value first exceeded 2 %', () => {
    const { log } = feed(repeat(2.5, 22));
    expect(log).toEqual([{ state: 'raised', level: 'warning', limit: 2, ts: 60_000 }]);
  });

  it('does not raise when the value falls back under the limit at the very observation that would complete the pickup', () => {
    const { log } = feed([...repeat(2.5, 20), 1.9, ...repeat(2.5, 10)]);
    expect(log).toEqual([]);
  });

  it('never raises for a value hovering at the limit (2.01 / 1.99 % alternating): each dip restarts the pickup', () => {
    const values = Array.from({ length: 200 }, (_, k) => (k % 2 === 0 ? 2.01 : 1.99));
    expect(feed(values).log).toEqual([]);
  });

  it('once raised, does not chatter while the value hovers inside the hysteresis band (1.85–2.05 %)', () => {
    const values = [...repeat(2.5, 21), ...Array.from({ length: 200 }, (_, k) => (k % 2 === 0 ? 2.05 : 1.85))];
    const { log } = feed(values);
    expect(log).toEqual([{ state: 'raised', level: 'warning', limit: 2, ts: 60_000 }]);
  });

  it('clears only after the value stayed below limit − hysteresis (1.8 %) for dropoutMs', () => {
    const values = [...repeat(2.5, 21), ...repeat(1.79, 21)];
    const { log } = feed(values);
    // Raised at 60 s; first value below 1.8 % at 63 s; cleared 60 s later at 123 s.
    expect(log).toEqual([
      { state: 'raised', level: 'warning', limit: 2, ts: 60_000 },
      { state: 'cleared', level: 'warning', limit: 2, ts: 123_000 },
    ]);
  });

  it('does not clear at exactly limit − hysteresis (the comparison is strict)', () => {
    const { log } = feed([...repeat(2.5, 21), ...repeat(1.8, 40)]);
    expect(log.map((l) => l.state)).toEqual(['raised']);
  });

  it('escalates warning → alarm as one "raised/alarm" transition while the warning stays raised', () => {
    const values = [...repeat(2.5, 21), ...repeat(3.5, 21)];
    const { log, state } = feed(values);
    expect(log).toEqual([
      { state: 'raised', level: 'warning', limit: 2, ts: 60_000 },
      { state: 'raised', level: 'alarm', limit: 3, ts: 123_000 },
    ]);
    expect(publishedLevel(state)).toBe('alarm');
  });

  it('reports a jump straight above the alarm limit as a single "raised/alarm", without a separate warning', () => {
    const { log } = feed(repeat(4, 21));
    expect(log).toEqual([{ state: 'raised', level: 'alarm', limit: 3, ts: 60_000 }]);
  });

  it('de-escalates alarm → warning as "raised/warning", then clears as "cleared/warning"', () => {
    const values = [...repeat(4, 21), ...repeat(2.5, 21), ...repeat(1, 21)];
    const { log } = feed(values);
    expect(log).toEqual([
      { state: 'raised', level: 'alarm', limit: 3, ts: 60_000 },
      // 2.5 % from 63 s (below 3 − 0.2), alarm level drops out 60 s later.
      { state: 'raised', level: 'warning', limit: 2, ts: 123_000 },
      { state: 'cleared', level: 'warning', limit: 2, ts: 186_000 },
    ]);
  });

  it('clears from the alarm level in one "cleared/alarm" when the value falls below both levels at once', () => {
    const values = [...repeat(4, 21), ...repeat(1, 21)];
    const { log } = feed(values);
    expect(log).toEqual([
      { state: 'raised', level: 'alarm', limit: 3, ts: 60_000 },
      { state: 'cleared', level: 'alarm', limit: 3, ts: 123_000 },
    ]);
  });

  it('holds the state on null (unobservable), neither clearing a raised alarm nor counting as normal', () => {
    const { log, state } = feed([...repeat(2.5, 21), ...repeat(null, 100)]);
    expect(log).toHaveLength(1);
    expect(publishedLevel(state)).toBe('warning');
  });

  it('continues a pending pickup across null values (no information is not a return to normal)', () => {
    const { log } = feed([2.5, null, null, null, ...repeat(2.5, 17)]);
    expect(log).toEqual([{ state: 'raised', level: 'warning', limit: 2, ts: 60_000 }]);
  });

  it('restores a raised alarm without a transition and clears it through the normal dropout', () => {
    const { log } = feed(repeat(1, 21), 0, restoredLimitState('alarm'));
    expect(log).toEqual([{ state: 'cleared', level: 'alarm', limit: 3, ts: 60_000 }]);
  });
});
