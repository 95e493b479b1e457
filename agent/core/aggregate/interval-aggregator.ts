/**
 * Time aggregation of one feeder's results into 3-s, 10-min and 2-h values,
 * after IEC 61000-4-30 §4.5 (Ed.3; from memory, see shared CHECKS.md §3):
 *  - 150/180-cycle ("3-s") values: 15 consecutive basic windows (10/12-cycle
 *    values), resynchronised at every 10-min clock tick, so a group is cut
 *    short at the tick (§4.5.2). Phasor and RMS frames have no cycle
 *    structure; they are aggregated in 3-s buckets aligned to the clock
 *    (3 s divides 10 min, so these resynchronise at the ticks as well).
 *  - 10-min values: every input whose start lies in a 10-min interval
 *    aligned to the UTC clock (§4.5.3). The basic window that straddles the
 *    tick starts before it and is counted in the ending interval.
 *  - 2-h values: the 12 consecutive 10-min values of an interval aligned to
 *    2-hour UTC ticks (§4.5.4).
 * Each value is combined by RMS aggregation (rms-accumulator.ts).
 *
 * Flags (IEC 61000-4-30 §4.7): an aggregate is flagged when any input is
 * flagged (dip, swell, interruption, or a gap the estimator saw), and also
 * when its interval is not covered by data: a hole between inputs longer than
 * maxGapMs (frames) or than a rounding tolerance (basic windows, which are
 * contiguous by construction), or missing data at its start or end.
 *
 * Emission is driven by the data: an interval is emitted when a value at or
 * after its end arrives (a 3-s group of basic windows when its 15th window
 * arrives), or on closeBefore()/flush(). No interval is emitted twice; a
 * value that falls in an interval already emitted is ignored and counted in
 * `ignored`. `ts` of an aggregate is the interval start, `durationMs` its
 * length and `count` the number of values combined (fewer than expected for
 * a partial interval, which is then also flagged).
 *
 * Time comes only from the data: there is no clock read here.
 */
import type { SequenceResult } from '../result.js';
import { RmsAccumulator } from './rms-accumulator.js';

/** 3-s clock buckets for frames, ms. */
export const THREE_SECONDS_MS = 3_000;
/** Basic windows in one 150/180-cycle value (IEC 61000-4-30 §4.5.2: 150 cycles at 50 Hz = 15 × 10). */
export const BASIC_WINDOWS_PER_3S = 15;
export const TEN_MINUTES_MS = 600_000;
export const TWO_HOURS_MS = 7_200_000;
/** Default largest tolerated hole between phasor/RMS frames, ms. */
export const DEFAULT_MAX_GAP_MS = 1_000;
/**
 * Hole tolerated between consecutive basic windows (and consecutive 10-min
 * values), ms: far above the float rounding of window timestamps (µs), below
 * one sample period at any accepted sample rate.
 */
export const CONTINUITY_TOLERANCE_MS = 0.5;
/**
 * Hole tolerated between a 10-min tick and the first basic window after it:
 * windows are not realigned at the tick, so the first one can start up to one
 * window later; the longest basic window is 10/42.5 Hz = 12/51 Hz = 235.3 ms
 * (class A frequency range, IEC 61000-4-30 §5.1), rounded up.
 */
export const BASIC_EDGE_ALLOWANCE_MS = 250;
/** A value starting within this of a tick counts as at the tick (float rounding of computed timestamps). */
const TICK_EPSILON_MS = 0.001;

export interface IntervalAggregatorOptions {
  feeder: string;
  nominalHz: 50 | 60;
  /** Largest hole between phasor/RMS frames before an aggregate is flagged, ms (default 1000). */
  maxGapMs?: number;
}

type Emit = (agg: SequenceResult) => void;
type InputKind = SequenceResult['window'];
/** How a 3-s interval is delimited: by the clock (frames) or by counting basic windows. */
type ThreeSecondMode = 'clock' | 'basic-count';

/** One open interval at one level, with what its coverage check needs. */
class OpenInterval {
  readonly acc = new RmsAccumulator();
  open = false;
  mode: ThreeSecondMode = 'clock';
  /** Interval start (clock) or first window start (basic-count). */
  start = 0;
  /** Interval end (clock) or the 10-min tick that cuts the group (basic-count). */
  end = 0;
  firstTs = 0;
  firstKind: InputKind = 'frame';
  lastEnd = 0;
  lastDuration = 0;
  lastKind: InputKind = 'frame';
  holeFound = false;

  begin(mode: ThreeSecondMode, start: number, end: number): void {
    this.acc.reset();
    this.values = 0;
    this.open = true;
    this.mode = mode;
    this.start = start;
    this.end = end;
    this.holeFound = false;
  }

  /** Values noted since begin() (the accumulator may receive them later, merged from a shorter interval). */
  values = 0;

  /** Coverage bookkeeping for one value: first/last times and holes. */
  note(r: SequenceResult, maxGapMs: number): void {
    if (this.values === 0) {
      this.firstTs = r.ts;
      this.firstKind = r.window;
    } else if (r.ts - this.lastEnd > holeAllowance(r.window, maxGapMs)) {
      this.holeFound = true;
    }
    this.values++;
    const end = r.ts + r.durationMs;
    if (end > this.lastEnd || this.values === 1) this.lastEnd = end;
    this.lastDuration = r.durationMs;
    this.lastKind = r.window;
  }

  add(r: SequenceResult, maxGapMs: number): void {
    this.note(r, maxGapMs);
    this.acc.add(r);
  }

  /** Whether data are missing at the start or end of a clock interval. */
  clockEdgesMissing(maxGapMs: number): boolean {
    return this.firstTs - this.start > edgeAllowance(this.firstKind, maxGapMs) || this.end - this.lastEnd > edgeAllowance(this.lastKind, maxGapMs);
  }
}

function holeAllowance(kind: InputKind, maxGapMs: number): number {
  return kind === 'frame' ? maxGapMs : CONTINUITY_TOLERANCE_MS;
}

function edgeAllowance(kind: InputKind, maxGapMs: number): number {
  return kind === 'frame' ? maxGapMs : kind === 'basic' ? BASIC_EDGE_ALLOWANCE_MS : CONTINUITY_TOLERANCE_MS;
}

function tickStart(ts: number, length: number): number {
  return Math.floor((ts + TICK_EPSILON_MS) / length) * length;
}

function atOrAfter(ts: number, boundary: number): boolean {
  return ts + TICK_EPSILON_MS >= boundary;
}

export class IntervalAggregator {
  private readonly feeder: string;
  private readonly maxGapMs: number;
  /** Nominal basic-window length, ms: 10 cycles at 50 Hz = 12 cycles at 60 Hz = 200 ms. */
  private readonly nominalBasicMs: number;
  private readonly three = new OpenInterval();
  private readonly ten = new OpenInterval();
  private readonly two = new OpenInterval();
  /** End of the latest emitted interval: older values are ignored (never emit an interval twice). */
  private watermark = Number.NEGATIVE_INFINITY;
  /** Values ignored because they fell in an interval already emitted. */
  ignored = 0;

  constructor(opts: IntervalAggregatorOptions) {
    this.feeder = opts.feeder;
    this.maxGapMs = opts.maxGapMs ?? DEFAULT_MAX_GAP_MS;
    if (!(this.maxGapMs > 0)) throw new RangeError(`maxGapMs must be a positive number of milliseconds, got ${opts.maxGapMs}`);
    this.nominalBasicMs = ((opts.nominalHz === 50 ? 10 : 12) / opts.nominalHz) * 1000;
  }

  /** Adds a 'frame' or 'basic' result; emits every interval it completes. Aggregates given as input are ignored. */
  push(r: SequenceResult, emit: Emit): void {
    if ((r.window !== 'frame' && r.window !== 'basic') || !Number.isFinite(r.ts)) {
      this.ignored++;
      return;
    }
    // Older than an emitted interval, or than the open 10-min interval (whose predecessor was never opened).
    if (r.ts + CONTINUITY_TOLERANCE_MS < this.watermark || (this.ten.open && r.ts + TICK_EPSILON_MS < this.ten.start)) {
      this.ignored++;
      return;
    }
    // Close what this value lies beyond, shortest interval first.
    const three = this.three;
    if (three.open && atOrAfter(r.ts, three.end)) this.closeThree(emit);
    if (this.ten.open && atOrAfter(r.ts, this.ten.end)) this.closeTen(emit);
    if (this.two.open && atOrAfter(r.ts, this.two.end)) this.closeTwo(emit);

    // The 10-min interval opens first: a 3-s interval closing below merges into it.
    if (!this.ten.open) {
      const s = tickStart(r.ts, TEN_MINUTES_MS);
      this.ten.begin('clock', s, s + TEN_MINUTES_MS);
    }
    this.ten.note(r, this.maxGapMs);
    const mode: ThreeSecondMode = r.window === 'basic' ? 'basic-count' : 'clock';
    if (!three.open) {
      if (mode === 'clock') {
        const s = tickStart(r.ts, THREE_SECONDS_MS);
        three.begin(mode, s, s + THREE_SECONDS_MS);
      } else {
        three.begin(mode, r.ts, tickStart(r.ts, TEN_MINUTES_MS) + TEN_MINUTES_MS);
      }
    }
    // A 3-s interval holds one kind of input; a value of the other kind still counts in 10 min and 2 h.
    // 3-s intervals nest in 10-min ones (3 s divides 10 min; basic-window groups are cut at the tick), so
    // the 10-min sums are the 3-s sums merged when each 3-s interval closes: exact, and one merge per 3 s
    // instead of a second accumulation per value.
    if (three.mode === mode && atOrAfter(r.ts, three.start)) {
      three.add(r, this.maxGapMs);
      if (mode === 'basic-count' && three.acc.count >= BASIC_WINDOWS_PER_3S) this.closeThree(emit);
    } else {
      this.ten.acc.add(r);
    }
  }

  /** Closes every interval that ended at or before `ts` (data time, e.g. when the input went quiet). */
  closeBefore(ts: number, emit: Emit): void {
    const three = this.three;
    if (three.open) {
      const end = three.mode === 'clock' ? three.end : Math.min(three.end, three.lastEnd + (BASIC_WINDOWS_PER_3S - three.acc.count) * this.nominalBasicMs);
      if (end <= ts) this.closeThree(emit);
    }
    if (this.ten.open && this.ten.end <= ts) this.closeTen(emit);
    if (this.two.open && this.two.end <= ts) this.closeTwo(emit);
  }

  /** End of stream: emits the open intervals as they are (partial ones have a smaller count and are flagged). */
  flush(emit: Emit): void {
    if (this.three.open) this.closeThree(emit);
    if (this.ten.open) this.closeTen(emit);
    if (this.two.open) this.closeTwo(emit);
  }

  private closeThree(emit: Emit): void {
    const t = this.three;
    t.open = false;
    if (this.ten.open) this.ten.acc.merge(t.acc);
    if (t.mode === 'clock') {
      const missing = t.holeFound || t.clockEdgesMissing(this.maxGapMs);
      this.watermark = Math.max(this.watermark, t.end);
      emit(t.acc.build(this.feeder, '3s', t.start, THREE_SECONDS_MS, missing));
    } else {
      // Complete: 15 windows, or cut by the 10-min resynchronisation with data up to the tick.
      const complete = t.acc.count >= BASIC_WINDOWS_PER_3S || t.lastEnd >= t.end - CONTINUITY_TOLERANCE_MS;
      this.watermark = Math.max(this.watermark, t.lastEnd);
      emit(t.acc.build(this.feeder, '3s', t.start, t.lastEnd - t.start, t.holeFound || !complete));
    }
  }

  private closeTen(emit: Emit): void {
    const t = this.ten;
    t.open = false;
    const missing = t.holeFound || t.clockEdgesMissing(this.maxGapMs);
    this.watermark = Math.max(this.watermark, t.end);
    const agg = t.acc.build(this.feeder, '10min', t.start, TEN_MINUTES_MS, missing);
    emit(agg);
    // 2-h values are built from the 10-min values (IEC 61000-4-30 §4.5.4).
    const two = this.two;
    if (two.open && atOrAfter(agg.ts, two.end)) this.closeTwo(emit);
    if (!two.open) {
      const s = tickStart(agg.ts, TWO_HOURS_MS);
      two.begin('clock', s, s + TWO_HOURS_MS);
    }
    two.add(agg, this.maxGapMs);
  }

  private closeTwo(emit: Emit): void {
    const t = this.two;
    t.open = false;
    const missing = t.holeFound || t.clockEdgesMissing(this.maxGapMs);
    this.watermark = Math.max(this.watermark, t.end);
    emit(t.acc.build(this.feeder, '2h', t.start, TWO_HOURS_MS, missing));
  }
}
