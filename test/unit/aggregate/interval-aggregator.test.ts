import { sqrt, mean } from 'mathjs';
import { describe, expect, test } from 'vitest';
import { IntervalAggregator, TEN_MINUTES_MS, TWO_HOURS_MS } from '../../../agent/core/aggregate/interval-aggregator.js';
import type { SequenceResult, VoltageResult } from '../../../agent/core/result.js';

// 2026-03-02T14:00:00Z: a 2-hour tick (14 is even), hence also a 10-min and a 3-s tick.
const T0 = Date.UTC(2026, 2, 2, 14, 0, 0);
// The reference values are printed to 7 significant digits (CHECKS.md §3): compare to ±0.5 in the last digit.
const PRINTED_7_DIGITS = 5e-7;

interface Spec {
  ts: number;
  window?: 'frame' | 'basic';
  durationMs?: number;
  u2?: number | null;
  freq?: number | null;
  posDeg?: number;
  flagged?: boolean;
}

function voltage(u2: number | null, posDeg: number): VoltageResult {
  return {
    zero: [1, 10],
    pos: [230, posDeg],
    neg: u2 === null ? null : [(230 * u2) / 100, -50],
    u2,
    u0: 0.4,
    rms: { a: 230, b: 231, c: 229 },
    thd: null,
    rmsLL: null,
    lvur: null,
    pvur: 0.43,
  };
}

function value(s: Spec): SequenceResult {
  const window = s.window ?? 'frame';
  return {
    ts: s.ts,
    feeder: 'F1',
    window,
    durationMs: s.durationMs ?? (window === 'basic' ? 200 : 0),
    freq: s.freq === undefined ? 50 : s.freq,
    flagged: s.flagged ?? false,
    v: voltage(s.u2 === undefined ? 1 : s.u2, s.posDeg ?? 0),
    i: null,
    count: 1,
  };
}

function collector(): { out: SequenceResult[]; emit: (a: SequenceResult) => void; of: (w: string) => SequenceResult[] } {
  const out: SequenceResult[] = [];
  return { out, emit: (a) => out.push(a), of: (w) => out.filter((a) => a.window === w) };
}

function basicWindows(agg: IntervalAggregator, emit: (a: SequenceResult) => void, start: number, n: number, extra: Partial<Spec> = {}): number {
  let ts = start;
  for (let k = 0; k < n; k++) {
    agg.push(value({ ts, window: 'basic', durationMs: 200, ...extra }), emit);
    ts += 200;
  }
  return ts;
}

describe('RMS aggregation of values (IEC 61000-4-30 §4.5)', () => {
  test('three values u2 = 1, 2, 3 aggregate to 2.160247 (CHECKS.md §3, computed with mathjs)', () => {
    const agg = new IntervalAggregator({ feeder: 'F1', nominalHz: 50 });
    const c = collector();
    [1, 2, 3].forEach((u2, k) => agg.push(value({ ts: T0 + 500 * k, u2 }), c.emit));
    agg.push(value({ ts: T0 + 3000 }), c.emit);
    const [three] = c.of('3s');
    expect(three!.count).toBe(3);
    expect(Math.abs(three!.v!.u2! - 2.160247)).toBeLessThan(PRINTED_7_DIGITS);
  });

  test('the 15-value example aggregates to 1.012094 while its arithmetic mean is 1.000 (CHECKS.md §3, computed with mathjs)', () => {
    const values = [1.0, 1.2, 0.8, 1.1, 0.9, 1.0, 1.3, 0.7, 1.0, 1.0, 1.05, 0.95, 1.2, 0.8, 1.0];
    const agg = new IntervalAggregator({ feeder: 'F1', nominalHz: 50 });
    const c = collector();
    values.forEach((u2, k) => agg.push(value({ ts: T0 + 200 * k, window: 'basic', u2, freq: 50 * u2 }), c.emit));
    const [three] = c.of('3s');
    expect(three!.count).toBe(15);
    expect(Math.abs(three!.v!.u2! - 1.012094)).toBeLessThan(PRINTED_7_DIGITS);
    // Frequency is an arithmetic mean, not RMS: 50 × mean(values) = 50 × 1.000 (CHECKS.md §3).
    expect(Math.abs(three!.freq! - 50)).toBeLessThan(1e-9);
  });

  test('sequence-component angles of an aggregate are those of the last value in the interval', () => {
    const agg = new IntervalAggregator({ feeder: 'F1', nominalHz: 60 });
    const c = collector();
    [10, 50, -170].forEach((deg, k) => agg.push(value({ ts: T0 + 1000 * k, posDeg: deg }), c.emit));
    agg.flush(c.emit);
    expect(c.of('3s')[0]!.v!.pos![1]).toBe(-170);
  });

  test('null inputs are skipped and a field null in every input stays null', () => {
    const agg = new IntervalAggregator({ feeder: 'F1', nominalHz: 50 });
    const c = collector();
    agg.push(value({ ts: T0, u2: 3, freq: null }), c.emit);
    agg.push(value({ ts: T0 + 500, u2: null, freq: null }), c.emit);
    agg.push(value({ ts: T0 + 1000, u2: 4, freq: null }), c.emit);
    agg.push(value({ ts: T0 + 3000 }), c.emit);
    const [three] = c.of('3s');
    // √((3² + 4²)/2), two values, not three (IEC 61000-4-30 §4.5 RMS rule applied to the values present).
    expect(three!.v!.u2!).toBeCloseTo(Math.sqrt(12.5), 12);
    expect(three!.freq).toBeNull();
    expect(three!.v!.rmsLL).toBeNull();
    expect(three!.i).toBeNull();
  });
});

describe('interval alignment', () => {
  test('3-s values of frames start on 3-s clock ticks and last 3000 ms', () => {
    const agg = new IntervalAggregator({ feeder: 'F1', nominalHz: 60 });
    const c = collector();
    for (let t = T0 + 1234; t < T0 + 20_000; t += 100) agg.push(value({ ts: t }), c.emit);
    const threes = c.of('3s');
    expect(threes.length).toBeGreaterThan(4);
    for (const a of threes) {
      expect(a.ts % 3000).toBe(0);
      expect(a.durationMs).toBe(3000);
    }
  });

  test('10-min and 2-h values start on UTC 10-min and 2-hour ticks', () => {
    const agg = new IntervalAggregator({ feeder: 'F1', nominalHz: 50 });
    const c = collector();
    const start = T0 - 37_000;
    for (let t = start; t < T0 + TWO_HOURS_MS + 1000; t += 1000) agg.push(value({ ts: t }), c.emit);
    expect(c.of('10min').length).toBe(13);
    for (const a of c.of('10min')) expect(a.ts % TEN_MINUTES_MS).toBe(0);
    const twos = c.of('2h');
    expect(twos.map((a) => a.ts)).toEqual([T0 - TWO_HOURS_MS, T0]);
  });

  test('a 3-s group of basic windows is cut at the 10-min tick and the next group starts after it (resynchronisation, IEC 61000-4-30 §4.5.2)', () => {
    const agg = new IntervalAggregator({ feeder: 'F1', nominalHz: 50 });
    const c = collector();
    const tick = T0 + TEN_MINUTES_MS;
    // 21 windows before the tick: one full group of 15, then 6 windows, the 6th straddling the tick.
    const first = tick - 21 * 200 + 150;
    const next = basicWindows(agg, c.emit, first, 21);
    expect(c.of('3s').length).toBe(1);
    basicWindows(agg, c.emit, next, 15);
    const threes = c.of('3s');
    expect(threes.map((a) => a.count)).toEqual([15, 6, 15]);
    expect(threes[1]!.ts).toBe(first + 15 * 200);
    expect(threes[1]!.flagged).toBe(false);
    expect(threes[2]!.ts).toBe(next);
    // The straddling window belongs to the ending 10-min interval.
    const [ten] = c.of('10min');
    expect(ten!.ts).toBe(T0);
    expect(ten!.count).toBe(21);
  });

  test('2-h value is the RMS of its twelve 10-min values (CHECKS.md §3; reference computed with mathjs)', () => {
    const agg = new IntervalAggregator({ feeder: 'F1', nominalHz: 50 });
    const c = collector();
    const perTen = Array.from({ length: 12 }, (_, k) => 0.5 + 0.25 * k);
    for (let t = T0; t <= T0 + TWO_HOURS_MS; t += 1000) {
      const k = Math.min(11, Math.floor((t - T0) / TEN_MINUTES_MS));
      agg.push(value({ ts: t, u2: perTen[k]! }), c.emit);
    }
    const [two] = c.of('2h');
    expect(two!.count).toBe(12);
    expect(two!.flagged).toBe(false);
    const expected = sqrt(mean(perTen.map((x) => x * x))) as number;
    expect(Math.abs(two!.v!.u2! - expected)).toBeLessThan(1e-12);
  });
});

describe('flags (IEC 61000-4-30 §4.7)', () => {
  test('a flagged basic window flags the 3-s, 10-min and 2-h values that contain it, and only those', () => {
    const agg = new IntervalAggregator({ feeder: 'F1', nominalHz: 50 });
    const c = collector();
    let ts = basicWindows(agg, c.emit, T0, 20);
    agg.push(value({ ts, window: 'basic', flagged: true }), c.emit);
    ts += 200;
    basicWindows(agg, c.emit, ts, 10);
    agg.flush(c.emit);
    expect(c.of('3s').map((a) => a.flagged)).toEqual([false, true, true]);
    expect(c.of('10min')[0]!.flagged).toBe(true);
    expect(c.of('2h')[0]!.flagged).toBe(true);
  });

  test('a hole between frames longer than maxGapMs flags the aggregate', () => {
    const agg = new IntervalAggregator({ feeder: 'F1', nominalHz: 60, maxGapMs: 1000 });
    const c = collector();
    for (const t of [0, 500, 1000, 2500, 2900]) agg.push(value({ ts: T0 + t }), c.emit);
    agg.push(value({ ts: T0 + 3000 }), c.emit);
    expect(c.of('3s')[0]!.flagged).toBe(true);
  });

  test('frames 1000 ms apart with maxGapMs 1000 cover a 3-s interval and do not flag it', () => {
    const agg = new IntervalAggregator({ feeder: 'F1', nominalHz: 60, maxGapMs: 1000 });
    const c = collector();
    for (const t of [0, 1000, 2000, 3000]) agg.push(value({ ts: T0 + t }), c.emit);
    expect(c.of('3s')[0]!.flagged).toBe(false);
  });

  test('a hole between basic windows flags the 3-s group although no window is flagged', () => {
    const agg = new IntervalAggregator({ feeder: 'F1', nominalHz: 50 });
    const c = collector();
    const ts = basicWindows(agg, c.emit, T0, 7);
    basicWindows(agg, c.emit, ts + 400, 8);
    expect(c.of('3s')[0]!.flagged).toBe(true);
  });
});

describe('emission', () => {
  test('nothing is emitted before a value at or after the end of the interval arrives', () => {
    const agg = new IntervalAggregator({ feeder: 'F1', nominalHz: 50 });
    const c = collector();
    for (let t = 0; t < 3000; t += 100) agg.push(value({ ts: T0 + t }), c.emit);
    expect(c.out.length).toBe(0);
    agg.push(value({ ts: T0 + 3000 }), c.emit);
    expect(c.of('3s').length).toBe(1);
  });

  test('closeBefore emits the intervals that ended at or before the given time and no others', () => {
    const agg = new IntervalAggregator({ feeder: 'F1', nominalHz: 50 });
    const c = collector();
    for (let t = 0; t < 2000; t += 100) agg.push(value({ ts: T0 + t }), c.emit);
    agg.closeBefore(T0 + 2999, c.emit);
    expect(c.out.length).toBe(0);
    agg.closeBefore(T0 + 3000, c.emit);
    expect(c.of('3s').length).toBe(1);
    expect(c.of('10min').length).toBe(0);
  });

  test('closeBefore closes a short group of basic windows once its remaining windows are overdue, flagged for missing coverage', () => {
    const agg = new IntervalAggregator({ feeder: 'F1', nominalHz: 60 });
    const c = collector();
    const end = basicWindows(agg, c.emit, T0, 5);
    // Ten more windows of 200 ms were due by end + 2000 ms.
    agg.closeBefore(end + 1999, c.emit);
    expect(c.of('3s').length).toBe(0);
    agg.closeBefore(end + 2000, c.emit);
    expect(c.of('3s').map((a) => [a.count, a.flagged])).toEqual([[5, true]]);
  });

  test('a frame arriving during a group of basic windows counts in the 10-min value but not in the 3-s value', () => {
    const agg = new IntervalAggregator({ feeder: 'F1', nominalHz: 50 });
    const c = collector();
    const ts = basicWindows(agg, c.emit, T0, 7);
    agg.push(value({ ts: ts + 10 }), c.emit);
    basicWindows(agg, c.emit, ts, 8);
    agg.flush(c.emit);
    expect(c.of('3s')[0]!.count).toBe(15);
    expect(c.of('10min')[0]!.count).toBe(16);
  });

  test('flush emits open intervals as partial: count below the full count and flagged for missing coverage', () => {
    const agg = new IntervalAggregator({ feeder: 'F1', nominalHz: 50 });
    const c = collector();
    basicWindows(agg, c.emit, T0, 20);
    agg.flush(c.emit);
    expect(c.of('3s').map((a) => [a.count, a.flagged])).toEqual([[15, false], [5, true]]);
    expect(c.of('10min')[0]!.count).toBe(20);
    expect(c.of('10min')[0]!.flagged).toBe(true);
  });

  test('an interval is never emitted twice, and values older than an emitted interval are ignored', () => {
    const agg = new IntervalAggregator({ feeder: 'F1', nominalHz: 50 });
    const c = collector();
    for (let t = 0; t <= 3000; t += 100) agg.push(value({ ts: T0 + t }), c.emit);
    agg.push(value({ ts: T0 + 1500 }), c.emit);
    agg.flush(c.emit);
    agg.flush(c.emit);
    agg.push(value({ ts: T0 + 4000 }), c.emit);
    const starts = c.of('3s').map((a) => a.ts);
    expect(new Set(starts).size).toBe(starts.length);
    expect(agg.ignored).toBe(2);
  });
});

describe('10-min values over uneven 3-s intervals', () => {
  test('equal the RMS of every value in the 10 minutes, however unevenly the values fall into 3-s intervals and whatever is null (IEC 61000-4-30 §4.5, checked with mathjs)', () => {
    const agg = new IntervalAggregator({ feeder: 'F1', nominalHz: 50 });
    const c = collector();
    const u2s: number[] = [];
    const freqs: number[] = [];
    let ts = T0;
    let k = 0;
    // Irregular spacing (50..950 ms) so 3-s intervals hold different counts; every 7th u2 missing.
    while (ts < T0 + TEN_MINUTES_MS) {
      const u2 = k % 7 === 3 ? null : 0.5 + ((k * 37) % 100) / 40;
      const freq = 49.9 + ((k * 13) % 20) / 100;
      agg.push(value({ ts, u2, freq }), c.emit);
      if (u2 !== null) u2s.push(u2);
      freqs.push(freq);
      ts += 50 + ((k * 181) % 901);
      k++;
    }
    agg.push(value({ ts: T0 + TEN_MINUTES_MS + 100 }), c.emit);
    const [ten] = c.of('10min');
    expect(ten!.count).toBe(k);
    expect(ten!.v!.u2!).toBeCloseTo(sqrt(mean(u2s.map((u) => u * u))) as number, 12);
    expect(ten!.freq!).toBeCloseTo(mean(freqs) as number, 12);
    // The 10-min value is the merge of its 3-s values: their counts add up to it.
    expect(c.of('3s').filter((a) => a.ts < T0 + TEN_MINUTES_MS).reduce((n, a) => n + a.count, 0)).toBe(k);
  });
});
