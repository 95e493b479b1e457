/**
 * Builds the per-quantity part of a result (sequence phasors, u2, u0, RMS
 * magnitudes, the NEMA and IEEE rates) from what a frame carries: full
 * phasors, or magnitudes only. The scratch buffers belong to the caller (one
 * set per feeder processor), so the arithmetic itself allocates nothing; the
 * result record is new, or the caller's own record overwritten (the *Into forms).
 */
import { angleDegAt, magnitudeAt } from '../complex/complex.js';
import type { LineTriple, PhaseTriple, PhasorOut, QuantityResult, VoltageResult } from '../result.js';
import { fortescueInto } from './fortescue.js';
import { ieeePvurPercent, nemaLvurPercent, sequenceMagnitudesFromZeroSumInto, u0Percent, u2FromLineMagnitudesPercent, u2Percent } from './unbalance.js';

/**
 * A sequence component smaller than this fraction of the largest input
 * magnitude is float noise (≈1e-16 relative) or far below any instrument's
 * resolution; it is written as [0, 0] so that no meaningless angle is reported.
 */
export const NEGLIGIBLE_COMPONENT_REL = 1e-7;

const INV_SQRT3 = 1 / Math.sqrt(3);

export class SequenceScratch {
  readonly seq = new Float64Array(6);
  readonly pair = new Float64Array(2);
  /** Phase magnitudes of the last set transformed, and its negligible-component floor. */
  ma = 0;
  mb = 0;
  mc = 0;
  floor = 0;
}

/** Transforms abc into s.seq and notes the phase magnitudes and the negligible floor. */
function transform(abc: Float64Array, s: SequenceScratch): void {
  fortescueInto(abc, s.seq);
  s.ma = magnitudeAt(abc, 0);
  s.mb = magnitudeAt(abc, 2);
  s.mc = magnitudeAt(abc, 4);
  s.floor = NEGLIGIBLE_COMPONENT_REL * Math.max(s.ma, s.mb, s.mc);
}

/** u2 (or u0) from the unrounded buffer, except where the component was declared negligible. */
function factor(num: PhasorOut, pos: PhasorOut, exact: number): number | null {
  return pos[0] > 0 ? (num[0] === 0 ? 0 : exact) : null;
}

/** A quantity record with every member present, as the *Into functions fill it. */
export interface QuantityRecord extends QuantityResult {
  zero: PhasorOut;
  pos: PhasorOut;
  neg: PhasorOut;
  rms: PhaseTriple;
}

export interface VoltageRecord extends QuantityRecord {
  rmsLL: LineTriple;
  lvur: number | null;
  pvur: number | null;
}

// One literal with every field: one stable object shape, whether a record is new or reused. The numbers start
// as NaN, a double: starting from 0 (a small integer to V8) would change the record's shape at its first write.
export function emptyQuantityRecord(): QuantityRecord {
  return { zero: [NaN, NaN], pos: [NaN, NaN], neg: [NaN, NaN], u2: null, u0: null, rms: { a: NaN, b: NaN, c: NaN }, thd: null };
}

export function emptyVoltageRecord(): VoltageRecord {
  return {
    zero: [NaN, NaN],
    pos: [NaN, NaN],
    neg: [NaN, NaN],
    u2: null,
    u0: null,
    rms: { a: NaN, b: NaN, c: NaN },
    thd: null,
    rmsLL: { ab: NaN, bc: NaN, ca: NaN },
    lvur: null,
    pvur: null,
  };
}

function componentInto(seq: Float64Array, k: number, floor: number, out: PhasorOut): void {
  const m = magnitudeAt(seq, 2 * k);
  if (m < floor) {
    out[0] = 0;
    out[1] = 0;
  } else {
    out[0] = m;
    out[1] = angleDegAt(seq, 2 * k);
  }
}

/** Sequence components, u2, u0 and phase magnitudes of abc into q. */
function sequenceInto(abc: Float64Array, s: SequenceScratch, q: QuantityRecord, thd: PhaseTriple | null): void {
  transform(abc, s);
  componentInto(s.seq, 0, s.floor, q.zero);
  componentInto(s.seq, 1, s.floor, q.pos);
  componentInto(s.seq, 2, s.floor, q.neg);
  q.u2 = factor(q.neg, q.pos, u2Percent(s.seq));
  q.u0 = factor(q.zero, q.pos, u0Percent(s.seq));
  q.rms.a = s.ma;
  q.rms.b = s.mb;
  q.rms.c = s.mc;
  q.thd = thd;
}

/** Sequence part of a phasor set abc (interleaved rectangular, RMS), written into q (overwritten whole). */
export function quantityFromPhasorsInto(abc: Float64Array, s: SequenceScratch, q: QuantityRecord, thd: PhaseTriple | null = null): QuantityRecord {
  sequenceInto(abc, s, q, thd);
  return q;
}

/** Voltage part from line-to-neutral phasors, written into v: adds L-L magnitudes and the NEMA/IEEE rates. */
export function voltageFromPhasorsInto(abc: Float64Array, s: SequenceScratch, v: VoltageRecord, thd: PhaseTriple | null = null): VoltageRecord {
  sequenceInto(abc, s, v, thd);
  const ab = hypot2(abc[0]! - abc[2]!, abc[1]! - abc[3]!);
  const bc = hypot2(abc[2]! - abc[4]!, abc[3]! - abc[5]!);
  const ca = hypot2(abc[4]! - abc[0]!, abc[5]! - abc[1]!);
  v.rmsLL.ab = ab;
  v.rmsLL.bc = bc;
  v.rmsLL.ca = ca;
  v.lvur = finiteOrNull(nemaLvurPercent(ab, bc, ca));
  v.pvur = finiteOrNull(ieeePvurPercent(s.ma, s.mb, s.mc));
  return v;
}

/** Sequence part of a phasor set abc (interleaved rectangular, RMS), as a new record. */
export function quantityFromPhasors(abc: Float64Array, s: SequenceScratch, thd: PhaseTriple | null = null): QuantityResult {
  return quantityFromPhasorsInto(abc, s, emptyQuantityRecord(), thd);
}

/** Voltage part from line-to-neutral phasors, as a new record. */
export function voltageFromPhasors(abc: Float64Array, s: SequenceScratch, thd: PhaseTriple | null = null): VoltageResult {
  return voltageFromPhasorsInto(abc, s, emptyVoltageRecord(), thd);
}

/**
 * Voltage part from magnitudes only. With line-to-line magnitudes, u2 follows
 * exactly from the IEC 61000-4-30 β formula and |V1|, |V2| from the triangle
 * (referred to line-to-neutral, ÷√3); u0 and all angles are unobservable.
 * With line-to-neutral magnitudes alone no sequence quantity is observable:
 * only the IEEE rate is given.
 */
export function voltageFromMagnitudes(vll: Float64Array | null, vln: Float64Array | null, s: SequenceScratch): VoltageResult {
  let pos: PhasorOut | null = null;
  let neg: PhasorOut | null = null;
  let u2: number | null = null;
  let lvur: number | null = null;
  if (vll !== null) {
    const ab = vll[0]!, bc = vll[1]!, ca = vll[2]!;
    const u = u2FromLineMagnitudesPercent(ab, bc, ca);
    if (Number.isFinite(u)) {
      sequenceMagnitudesFromZeroSumInto(ab, bc, ca, s.pair);
      pos = [s.pair[0]! * INV_SQRT3, null];
      neg = [s.pair[1]! * INV_SQRT3, null];
      u2 = s.pair[0]! > 0 ? u : null;
    }
    lvur = finiteOrNull(nemaLvurPercent(ab, bc, ca));
  }
  return {
    zero: null,
    pos,
    neg,
    u2,
    u0: null,
    rms: vln === null ? null : { a: vln[0]!, b: vln[1]!, c: vln[2]! },
    thd: null,
    rmsLL: vll === null ? null : { ab: vll[0]!, bc: vll[1]!, ca: vll[2]! },
    lvur,
    pvur: vln === null ? null : finiteOrNull(ieeePvurPercent(vln[0]!, vln[1]!, vln[2]!)),
  };
}

/**
 * Current part from phase magnitudes only. When the three currents sum to
 * zero (a three-wire feeder: no neutral or ground current) the same β formula
 * gives I2/I1 exactly, and the caller says so with `sumToZero`. Otherwise the
 * sequence components are unobservable from magnitudes (neutral current can
 * double the apparent I2/I1), and only the per-phase RMS is reported.
 */
export function currentFromMagnitudes(mags: Float64Array, s: SequenceScratch, sumToZero: boolean): QuantityResult {
  const a = mags[0]!, b = mags[1]!, c = mags[2]!;
  let pos: PhasorOut | null = null;
  let neg: PhasorOut | null = null;
  let u2: number | null = null;
  const u = sumToZero ? u2FromLineMagnitudesPercent(a, b, c) : Number.NaN;
  if (Number.isFinite(u)) {
    sequenceMagnitudesFromZeroSumInto(a, b, c, s.pair);
    pos = [s.pair[0]!, null];
    neg = [s.pair[1]!, null];
    u2 = s.pair[0]! > 0 ? u : null;
  }
  return { zero: null, pos, neg, u2, u0: null, rms: { a, b, c }, thd: null };
}

function finiteOrNull(x: number): number | null {
  return Number.isFinite(x) ? x : null;
}

function hypot2(x: number, y: number): number {
  return Math.sqrt(x * x + y * y);
}
