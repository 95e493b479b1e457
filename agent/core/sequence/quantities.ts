/**
 * Builds the per-quantity part of a result (sequence phasors, u2, u0, RMS
 * magnitudes, the NEMA and IEEE rates) from what a frame carries: full
 * phasors, or magnitudes only. The scratch buffers belong to the caller (one
 * set per feeder processor), so the arithmetic itself allocates nothing; only
 * the result record is new.
 */
import { angleDegAt, magnitudeAt } from '../complex/complex.js';
import type { PhaseTriple, PhasorOut, QuantityResult, VoltageResult } from '../result.js';
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

function component(seq: Float64Array, k: number, floor: number): PhasorOut {
  const m = magnitudeAt(seq, 2 * k);
  return m < floor ? [0, 0] : [m, angleDegAt(seq, 2 * k)];
}

/** Sequence part of a phasor set abc (interleaved rectangular, RMS). */
export function quantityFromPhasors(abc: Float64Array, s: SequenceScratch, thd: PhaseTriple | null = null): QuantityResult {
  transform(abc, s);
  const zero = component(s.seq, 0, s.floor), pos = component(s.seq, 1, s.floor), neg = component(s.seq, 2, s.floor);
  return { zero, pos, neg, u2: factor(neg, pos, u2Percent(s.seq)), u0: factor(zero, pos, u0Percent(s.seq)), rms: { a: s.ma, b: s.mb, c: s.mc }, thd };
}

/** Voltage part from line-to-neutral phasors: adds L-L magnitudes and the NEMA/IEEE rates. */
export function voltageFromPhasors(abc: Float64Array, s: SequenceScratch, thd: PhaseTriple | null = null): VoltageResult {
  transform(abc, s);
  const zero = component(s.seq, 0, s.floor), pos = component(s.seq, 1, s.floor), neg = component(s.seq, 2, s.floor);
  const ab = hypot2(abc[0]! - abc[2]!, abc[1]! - abc[3]!);
  const bc = hypot2(abc[2]! - abc[4]!, abc[3]! - abc[5]!);
  const ca = hypot2(abc[4]! - abc[0]!, abc[5]! - abc[1]!);
  // One literal with every field: one stable object shape and no intermediate record.
  return {
    zero,
    pos,
    neg,
    u2: factor(neg, pos, u2Percent(s.seq)),
    u0: factor(zero, pos, u0Percent(s.seq)),
    rms: { a: s.ma, b: s.mb, c: s.mc },
    thd,
    rmsLL: { ab, bc, ca },
    lvur: finiteOrNull(nemaLvurPercent(ab, bc, ca)),
    pvur: finiteOrNull(ieeePvurPercent(s.ma, s.mb, s.mc)),
  };
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
