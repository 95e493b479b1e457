/**
 * Records for store tests. Values are invented, chosen to be awkward for a
 * store (many significant digits, tiny and large magnitudes, negative angles,
 * 0.1 + 0.2) rather than to describe a real feeder.
 */
import type { AlarmTransition, DisturbanceEvent } from '../../agent/core/detect/types.js';
import type { AggregateWindow, SequenceResult } from '../../agent/core/result.js';

export const MINUTE = 60_000;
export const HOUR = 3_600_000;
export const DAY = 86_400_000;
export const WINDOW_MS: Record<AggregateWindow, number> = { '3s': 3_000, '10min': 600_000, '2h': 7_200_000 };

/** A recent 2-h boundary: InfluxDB refuses points older than a retention policy, so store tests write near now. */
export function recentBase(daysBack = 1): number {
  return Math.floor((Date.now() - daysBack * DAY) / (2 * HOUR)) * 2 * HOUR;
}

/** A result with every field present and non-null; `seed` varies the values. */
export function fullResult(feeder: string, window: AggregateWindow, ts: number, seed = 0): SequenceResult {
  const s = seed * 0.001;
  return {
    ts,
    feeder,
    window,
    durationMs: WINDOW_MS[window],
    freq: 59.987654321 + s,
    flagged: seed % 2 === 1,
    v: {
      zero: [12.123456789012 + s, 33.25],
      pos: [7190.4123456789 + s, -0.000012345],
      neg: [94.2 + s, -179.99999999],
      u2: 1.3100000000000001 + s,
      u0: 0.1 + 0.2,
      rms: { a: 7212.4 + s, b: 7190.1, c: 7168.8 },
      thd: { a: 1.5e-9, b: 2.25, c: 3.125 },
      rmsLL: { ab: 12470.2 + s, bc: 12391, ca: 12440.7 },
      lvur: 0.3751 + s,
      pvur: 0.2999,
    },
    i: {
      zero: [3.1, 10.2],
      pos: [205.1 + s, -25],
      neg: [7.9, 160.3],
      u2: 3.85 + s,
      u0: 1.51,
      rms: { a: 212, b: 205.3, c: 198.6 + s },
      thd: { a: 4.5, b: 123456.789012345, c: 0 },
    },
    count: 15 + seed,
  };
}

/** No current, no frequency, magnitude-only voltage (angles null), no L-L values, no THD. */
export function sparseResult(feeder: string, window: AggregateWindow, ts: number): SequenceResult {
  return {
    ts,
    feeder,
    window,
    durationMs: WINDOW_MS[window],
    freq: null,
    flagged: true,
    v: {
      zero: null,
      pos: [7190.4, null],
      neg: [94.2, null],
      u2: 1.31,
      u0: null,
      rms: null,
      thd: null,
      rmsLL: { ab: 12470.2, bc: 12391, ca: 12440.7 },
      lvur: 0.37,
      pvur: null,
    },
    i: null,
    count: 1,
  };
}

/** Voltage and current present but with every measure null (not the same record as v: null). */
export function hollowResult(feeder: string, window: AggregateWindow, ts: number): SequenceResult {
  return {
    ts,
    feeder,
    window,
    durationMs: 0,
    freq: 50,
    flagged: false,
    v: { zero: null, pos: null, neg: null, u2: null, u0: null, rms: null, thd: null, rmsLL: null, lvur: null, pvur: null },
    i: { zero: null, pos: null, neg: null, u2: null, u0: null, rms: null, thd: null },
    count: 0,
  };
}

export function alarm(feeder: string, ts: number, over: Partial<AlarmTransition> = {}): AlarmTransition {
  return {
    ts,
    feeder,
    condition: 'voltage-unbalance',
    state: 'raised',
    level: 'warning',
    value: 2.125,
    limit: 2,
    phase: null,
    message: 'voltage u2 2.13 % above the 2 % warning limit (fictional test feeder) - "quoted", back\\slash, ünïcode',
    ...over,
  };
}

export function disturbance(feeder: string, ts: number, over: Partial<DisturbanceEvent> = {}): DisturbanceEvent {
  return {
    ts,
    feeder,
    type: 'AG',
    durationMs: 83.5,
    peakCurrent: 2150.25,
    peakPhase: 'a',
    i0OverI1: 0.91,
    i2OverI1: null,
    message: 'single line-to-ground fault on phase a (fictional)',
    ...over,
  };
}
