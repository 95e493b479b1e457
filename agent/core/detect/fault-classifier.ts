/**
 * Fault type from sequence currents (phase a reference, amplitude-invariant
 * Fortescue as in shared/ARCHITECTURE.md).
 *
 * Angle convention, used in code, tests and docs alike:
 *   δ20 = angle(I2) − angle(I0)    and    δ21 = angle(I2) − angle(I1),
 * each normalised to (−180°, 180°]. With a = 1∠+120° this gives B-G at
 * δ20 = −120° and C-G at +120° (shared/CHECKS.md §6.1 and its sign note;
 * vectors fault-slg-b-g, fault-slg-c-g). The opposite signs belong to
 * angle(I0) − angle(I2).
 *
 * Signatures of the fault component (CHECKS.md §6; Glover, Sarma & Overbye
 * ch. 9; Grainger & Stevenson ch. 12):
 *   type  δ20                       δ21     why
 *   AG    0                         0       I0 = I1 = I2 (any fault resistance)
 *   BG    −120                      +120    the same, referred to phase b
 *   CG    +120                      −120    the same, referred to phase c
 *   BCG   0, drifting to −90        180     I2/I0 = (Z0+3Rg)/Z2; I2 opposite I1
 *   CAG   −120, drifting to −210    −60
 *   ABG   +120, drifting to +30     +60
 *   BC    —                         180     I2 = −I1 (any fault resistance)
 *   CA    —                         −60
 *   AB    —                         +60
 *   ABC   I2 and I0 both small against I1
 *
 * Method:
 * 1. Ground involvement: |I0|/|I1| > groundRatio (settings.fault).
 * 2. Three-phase: no ground and |I2|/|I1| < BALANCED_NEG_RATIO.
 * 3. Phase-to-phase: the nearest δ21 signature (120° sectors around 180°, −60°, +60°).
 * 4. Ground faults: the standard I2/I0 sectors of ±60° (AG|BCG around 0°,
 *    BG|CAG around −120°, CG|ABG around +120°; relay practice, CHECKS.md §6.1)
 *    settled by δ21, which is 180° apart between the single and the double
 *    line-to-ground fault of a sector. Both angles are scored together, and a
 *    double line-to-ground fault is scored against the whole range its δ20
 *    drifts over as the ground resistance grows (from angle(Z0) − angle(Z2)
 *    down to −angle(Z2); −90°…+30° covers networks with X/R ≥ 0), so a
 *    resistive BCG whose δ20 has left the AG sector is still a BCG.
 *    δ21 moves with load current (load adds to I1 only); δ20 does not, since
 *    load carries neither I2 nor I0 — hence δ20 leads the single-line cases.
 *
 * When only magnitudes were measured (no angles, no I0), the type follows from
 * which phases exceed the fault pickup; ground involvement of a two-phase fault
 * is then not observable and it is reported as phase-to-phase.
 */
import { normalizeDeg } from '../complex/complex.js';
import type { PhasorOut, QuantityResult } from '../result.js';
import type { FaultSettings } from './settings.js';
import type { FaultType } from './types.js';

/**
 * |I2|/|I1| below this, with no ground involvement, is a three-phase fault: a
 * balanced fault adds only positive sequence, and standing load unbalance is
 * diluted by the fault current (common practice).
 */
export const BALANCED_NEG_RATIO = 0.1;

export type ClassificationMethod = 'sequence-angles' | 'sequence-ratios' | 'phase-magnitudes';

export interface FaultClassification {
  readonly type: FaultType;
  readonly method: ClassificationMethod;
  readonly i0OverI1: number | null;
  readonly i2OverI1: number | null;
  /** δ20 = angle(I2) − angle(I0), degrees; null when not used or not observable. */
  readonly angleNegMinusZeroDeg: number | null;
  /** δ21 = angle(I2) − angle(I1), degrees; null when not observable. */
  readonly angleNegMinusPosDeg: number | null;
}

interface GroundSignature {
  readonly type: FaultType;
  /** δ20 range [lo, hi] (degrees, lo ≤ hi, may extend past ±180). */
  readonly d20lo: number;
  readonly d20hi: number;
  readonly d21: number;
}

const GROUND_SIGNATURES: readonly GroundSignature[] = [
  { type: 'AG', d20lo: 0, d20hi: 0, d21: 0 },
  { type: 'BG', d20lo: -120, d20hi: -120, d21: 120 },
  { type: 'CG', d20lo: 120, d20hi: 120, d21: -120 },
  { type: 'BCG', d20lo: -90, d20hi: 30, d21: 180 },
  { type: 'CAG', d20lo: -210, d20hi: -90, d21: -60 },
  { type: 'ABG', d20lo: 30, d20hi: 150, d21: 60 },
];

const PHASE_PHASE_SIGNATURES: readonly { readonly type: FaultType; readonly d21: number }[] = [
  { type: 'BC', d21: 180 },
  { type: 'CA', d21: -60 },
  { type: 'AB', d21: 60 },
];

/** Angular distance |x − c| in degrees, in [0, 180]. */
function distance(x: number, c: number): number {
  return Math.abs(normalizeDeg(x - c));
}

/** Angular distance from x to the arc [lo, hi] (0 inside). */
function distanceToArc(x: number, lo: number, hi: number): number {
  const mid = 0.5 * (lo + hi);
  const half = 0.5 * (hi - lo);
  return Math.max(0, distance(x, mid) - half);
}

function angleOf(p: PhasorOut | null): number | null {
  return p === null || p[1] === null || !(p[0] > 0) ? null : p[1];
}

/** Nearest ground-fault signature for the two angles. */
export function groundFaultType(d20: number, d21: number): FaultType {
  let best = GROUND_SIGNATURES[0]!;
  let bestScore = Infinity;
  for (const s of GROUND_SIGNATURES) {
    const score = distanceToArc(d20, s.d20lo, s.d20hi) + distance(d21, s.d21);
    if (score < bestScore) {
      bestScore = score;
      best = s;
    }
  }
  return best.type;
}

/** Nearest phase-to-phase signature for δ21. */
export function phaseToPhaseType(d21: number): FaultType {
  let best = PHASE_PHASE_SIGNATURES[0]!;
  let bestScore = Infinity;
  for (const s of PHASE_PHASE_SIGNATURES) {
    const score = distance(d21, s.d21);
    if (score < bestScore) {
      bestScore = score;
      best = s;
    }
  }
  return best.type;
}

/** Faulted phases by magnitude: those above the pickup (at least the largest one). */
function typeFromMagnitudes(a: number, b: number, c: number, pickupA: number): FaultType {
  let fa = a > pickupA, fb = b > pickupA, fc = c > pickupA;
  if (!fa && !fb && !fc) {
    fa = a >= b && a >= c;
    fb = !fa && b >= c;
    fc = !fa && !fb;
  }
  if (fa && fb && fc) return 'ABC';
  if (fa && fb) return 'AB';
  if (fb && fc) return 'BC';
  if (fc && fa) return 'CA';
  return fa ? 'AG' : fb ? 'BG' : 'CG';
}

/** Classifies the currents of one result taken during a fault. */
export function classifyFault(i: QuantityResult, cfg: FaultSettings): FaultClassification {
  const pos = i.pos, neg = i.neg, zero = i.zero;
  const i1 = pos === null ? 0 : pos[0];
  const i2OverI1 = pos !== null && neg !== null && i1 > 0 ? neg[0] / i1 : null;
  const i0OverI1 = pos !== null && zero !== null && i1 > 0 ? zero[0] / i1 : null;
  const a1 = angleOf(pos), a2 = angleOf(neg), a0 = angleOf(zero);

  if (i2OverI1 !== null && i0OverI1 !== null) {
    const ground = i0OverI1 > cfg.groundRatio;
    if (!ground && i2OverI1 < BALANCED_NEG_RATIO) {
      return { type: 'ABC', method: 'sequence-ratios', i0OverI1, i2OverI1, angleNegMinusZeroDeg: null, angleNegMinusPosDeg: null };
    }
    if (a1 !== null && a2 !== null) {
      const d21 = normalizeDeg(a2 - a1);
      if (!ground) return { type: phaseToPhaseType(d21), method: 'sequence-angles', i0OverI1, i2OverI1, angleNegMinusZeroDeg: null, angleNegMinusPosDeg: d21 };
      if (a0 !== null) {
        const d20 = normalizeDeg(a2 - a0);
        return { type: groundFaultType(d20, d21), method: 'sequence-angles', i0OverI1, i2OverI1, angleNegMinusZeroDeg: d20, angleNegMinusPosDeg: d21 };
      }
    }
  }
  const rms = i.rms;
  const type = rms === null ? 'ABC' : typeFromMagnitudes(rms.a, rms.b, rms.c, cfg.pickupA);
  return { type, method: 'phase-magnitudes', i0OverI1, i2OverI1, angleNegMinusZeroDeg: null, angleNegMinusPosDeg: null };
}
