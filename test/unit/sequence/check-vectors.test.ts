/**
 * Sequence components and unbalance measures against the outside check
 * vectors in test/fixtures/check-vectors.json (a copy of the project's shared
 * check-vector file). Each vector names its source (textbook example, handbook
 * table, standard formula, or values computed with mathjs) and provenance
 * ("published", "from memory", "computed with mathjs"); the test title carries
 * the vector name and its source so a failure points at the reference.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { angleDiffDeg, magnitudeAt, angleDegAt, polarToRectInto } from '../../../agent/core/complex/complex.js';
import { fortescueInto } from '../../../agent/core/sequence/fortescue.js';
import { currentFromMagnitudes, quantityFromPhasors, SequenceScratch } from '../../../agent/core/sequence/quantities.js';
import {
  betaFromLineMagnitudes,
  ieeePvurPercent,
  nemaLvurPercent,
  sequenceMagnitudesFromZeroSumInto,
  u0Percent,
  u2FromLineMagnitudesPercent,
  u2Percent,
} from '../../../agent/core/sequence/unbalance.js';

type Polar = [number, number];
interface Vector {
  name: string;
  kind: 'phase-phasors' | 'line-to-line-phasors' | 'line-to-line-magnitudes';
  source: string;
  provenance: string;
  inputs: { a: Polar; b: Polar; c: Polar };
  expected: {
    zero: Polar;
    pos: Polar;
    neg: Polar;
    neg_over_pos: number | null;
    zero_over_pos: number | null;
    angle_neg_minus_zero_deg?: number;
    max_dev_from_avg_of_input_magnitudes_percent?: number;
    beta?: number;
    u2_percent?: number;
    nema_lvur_percent?: number;
  };
  tolerance: {
    mag_rel: number;
    mag_abs_per_unit_of_largest_input?: number;
    deg_abs: number;
    ratio_abs: number;
    angle_ignored_when_mag_below_rel_to_largest_input: number;
    u2_percent_abs?: number;
    beta_abs?: number;
  };
  published_answer?: Partial<Record<'zero' | 'pos' | 'neg', Polar>>;
}

const vectors = JSON.parse(readFileSync(new URL('../../fixtures/check-vectors.json', import.meta.url), 'utf8')) as Vector[];
const phasorVectors = vectors.filter((v) => v.kind !== 'line-to-line-magnitudes');
const magnitudeVectors = vectors.filter((v) => v.kind === 'line-to-line-magnitudes');

function toRect(v: Vector): Float64Array {
  const abc = new Float64Array(6);
  polarToRectInto(v.inputs.a[0], v.inputs.a[1], abc, 0);
  polarToRectInto(v.inputs.b[0], v.inputs.b[1], abc, 2);
  polarToRectInto(v.inputs.c[0], v.inputs.c[1], abc, 4);
  return abc;
}

const largestInput = (v: Vector): number => Math.max(v.inputs.a[0], v.inputs.b[0], v.inputs.c[0]);

function expectComponent(seq: Float64Array, k: number, expected: Polar, v: Vector): void {
  const big = largestInput(v);
  const m = magnitudeAt(seq, 2 * k);
  const absTol = Math.max(v.tolerance.mag_rel * expected[0], (v.tolerance.mag_abs_per_unit_of_largest_input ?? 1e-7) * big);
  expect(Math.abs(m - expected[0])).toBeLessThanOrEqual(absTol);
  if (expected[0] >= v.tolerance.angle_ignored_when_mag_below_rel_to_largest_input * big) {
    expect(Math.abs(angleDiffDeg(angleDegAt(seq, 2 * k), expected[1]))).toBeLessThanOrEqual(v.tolerance.deg_abs);
  }
}

/** Half a unit in the last printed digit of a published number (how precise the printed answer is). */
function halfLastDigit(x: number): number {
  const s = String(x);
  const dot = s.indexOf('.');
  const decimals = dot === -1 ? 0 : s.length - dot - 1;
  return 0.5 * 10 ** -decimals;
}

describe('Fortescue transform against the check vectors', () => {
  it.each(phasorVectors.map((v) => [`${v.name} (${v.source.slice(0, 80)})`, v] as const))('%s', (_title, v) => {
    const seq = new Float64Array(6);
    fortescueInto(toRect(v), seq);
    expectComponent(seq, 0, v.expected.zero, v);
    expectComponent(seq, 1, v.expected.pos, v);
    expectComponent(seq, 2, v.expected.neg, v);
    if (v.expected.neg_over_pos === null) {
      // No positive sequence at all: the ratio is undefined and the result says so.
      expect(quantityFromPhasors(toRect(v), new SequenceScratch()).u2).toBeNull();
    } else {
      expect(Math.abs(u2Percent(seq) / 100 - v.expected.neg_over_pos)).toBeLessThanOrEqual(v.tolerance.ratio_abs);
    }
    if (v.expected.zero_over_pos !== null) {
      expect(Math.abs(u0Percent(seq) / 100 - v.expected.zero_over_pos)).toBeLessThanOrEqual(v.tolerance.ratio_abs);
    }
    if (v.expected.angle_neg_minus_zero_deg !== undefined) {
      const d = angleDiffDeg(angleDegAt(seq, 4), angleDegAt(seq, 0));
      expect(Math.abs(angleDiffDeg(d, v.expected.angle_neg_minus_zero_deg))).toBeLessThanOrEqual(v.tolerance.deg_abs);
    }
    if (v.expected.max_dev_from_avg_of_input_magnitudes_percent !== undefined && v.kind === 'phase-phasors') {
      const pvur = ieeePvurPercent(v.inputs.a[0], v.inputs.b[0], v.inputs.c[0]);
      expect(pvur).toBeCloseTo(v.expected.max_dev_from_avg_of_input_magnitudes_percent, 6);
    }
  });
});

/*
 * Printed answers are only as precise as printed. Answers read in a published
 * copy must agree to ±0.5 in the last printed digit; answers recalled from
 * memory get ±1 digit, because the books rounded intermediate values (e.g.
 * input angles printed to 0.1°) before printing the result.
 */
describe('Fortescue transform against the printed textbook answers', () => {
  const published = phasorVectors.filter((v) => v.published_answer !== undefined);
  it.each(published.map((v) => [`${v.name}: ${v.provenance.slice(0, 90)}`, v] as const))('%s', (_title, v) => {
    const seq = new Float64Array(6);
    fortescueInto(toRect(v), seq);
    const digits = v.provenance.startsWith('from memory') ? 2 : 1;
    (['zero', 'pos', 'neg'] as const).forEach((name, k) => {
      const p = v.published_answer![name];
      if (p === undefined) return;
      expect(Math.abs(magnitudeAt(seq, 2 * k) - p[0])).toBeLessThanOrEqual(digits * halfLastDigit(p[0]) + 1e-12);
      if (p[0] > 0) expect(Math.abs(angleDiffDeg(angleDegAt(seq, 2 * k), p[1]))).toBeLessThanOrEqual(digits * halfLastDigit(p[1]) + 1e-9);
    });
  });
});

describe('u2 from line-to-line magnitudes (IEC 61000-4-30 §5.7.1 β formula) against the check vectors', () => {
  it.each(magnitudeVectors.map((v) => [`${v.name} (${v.source.slice(0, 80)})`, v] as const))('%s', (_title, v) => {
    const [ab, bc, ca] = [v.inputs.a[0], v.inputs.b[0], v.inputs.c[0]];
    expect(Math.abs(betaFromLineMagnitudes(ab, bc, ca) - v.expected.beta!)).toBeLessThanOrEqual(v.tolerance.beta_abs!);
    expect(Math.abs(u2FromLineMagnitudesPercent(ab, bc, ca) - v.expected.u2_percent!)).toBeLessThanOrEqual(v.tolerance.u2_percent_abs!);
    expect(nemaLvurPercent(ab, bc, ca)).toBeCloseTo(v.expected.nema_lvur_percent!, 5);
    const pair = new Float64Array(2);
    sequenceMagnitudesFromZeroSumInto(ab, bc, ca, pair);
    expect(Math.abs(pair[0]! - v.expected.pos[0])).toBeLessThanOrEqual(v.tolerance.mag_rel * v.expected.pos[0] + 1e-9 * ab);
    expect(Math.abs(pair[1]! - v.expected.neg[0])).toBeLessThanOrEqual(v.tolerance.mag_rel * v.expected.pos[0] + 1e-9 * ab);
  });
});

describe('result convention for negligible components (shared check-vector convention)', () => {
  it('writes a component below 1e-7 of the largest input as [0, 0] so no meaningless angle is reported', () => {
    // Glover, Sarma & Overbye Example 8.1: balanced 277 V set, V0 = V2 = 0.
    const abc = new Float64Array(6);
    polarToRectInto(277, 0, abc, 0);
    polarToRectInto(277, -120, abc, 2);
    polarToRectInto(277, 120, abc, 4);
    const q = quantityFromPhasors(abc, new SequenceScratch());
    expect(q.zero).toEqual([0, 0]);
    expect(q.neg).toEqual([0, 0]);
    expect(q.pos![0]).toBeCloseTo(277, 9);
    expect(q.u2).toBe(0);
    expect(q.u0).toBe(0);
  });

  it('reports u2 and u0 as null when there is no positive sequence (a balanced acb set is pure negative sequence)', () => {
    // check-vectors.json worked-examples-acb-balanced-set: neg_over_pos = null.
    const abc = new Float64Array(6);
    polarToRectInto(10, 0, abc, 0);
    polarToRectInto(10, 120, abc, 2);
    polarToRectInto(10, -120, abc, 4);
    const q = quantityFromPhasors(abc, new SequenceScratch());
    expect(q.u2).toBeNull();
    expect(q.u0).toBeNull();
    expect(q.neg![0]).toBeCloseTo(10, 9);
  });
});

describe('current unbalance from phase-current magnitudes alone', () => {
  it('gives I2/I1 exactly for a three-wire feeder (currents sum to zero): open line c, Glover, Sarma & Overbye Example 8.2', () => {
    // Ia = 10∠0°, Ib = 10∠180°, Ic = 0: |I2|/|I1| = 1 exactly.
    const q = currentFromMagnitudes(new Float64Array([10, 10, 0]), new SequenceScratch(), true);
    expect(q.u2).toBeCloseTo(100, 9);
    expect(q.pos![0]).toBeCloseTo(10 / Math.sqrt(3), 9);
    expect(q.pos![1]).toBeNull();
  });

  it('reports no I2/I1 when the currents may not sum to zero (four-wire feeder), since neutral current would falsify it', () => {
    // check-vectors.json open-phase-b grounded wye: true |I2|/|I1| = 0.5, but the magnitudes (10, 0, 10) alone would say 1.0.
    const q = currentFromMagnitudes(new Float64Array([10, 0, 10]), new SequenceScratch(), false);
    expect(q.u2).toBeNull();
    expect(q.neg).toBeNull();
    expect(q.rms).toEqual({ a: 10, b: 0, c: 10 });
  });
});
