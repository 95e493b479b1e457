/**
 * The Fortescue transform against an independent general-purpose complex
 * library (mathjs, from the npm registry) on thousands of random unbalanced
 * sets, plus the algebraic identities every correct implementation satisfies.
 */
import { complex, type Complex, add, multiply, divide, abs } from 'mathjs';
import { describe, expect, it } from 'vitest';
import { fortescueInto, inverseFortescueInto } from '../../../agent/core/sequence/fortescue.js';
import { u0Percent, u2Percent, u2FromLineMagnitudesPercent } from '../../../agent/core/sequence/unbalance.js';

/** Relative agreement asked of the transform against mathjs (issue target: 1e-9; doubles give ~1e-15). */
const REL_TOL = 1e-9;
const RANDOM_SETS = 5000;

/** Small deterministic PRNG (mulberry32) so a failure is reproducible. */
function prng(seed: number): () => number {
  let t = seed >>> 0;
  return () => {
    t = (t + 0x6d2b79f5) >>> 0;
    let r = Math.imul(t ^ (t >>> 15), 1 | t);
    r = (r + Math.imul(r ^ (r >>> 7), 61 | r)) ^ r;
    return ((r ^ (r >>> 14)) >>> 0) / 4294967296;
  };
}

const A = complex({ r: 1, phi: (2 * Math.PI) / 3 }) as Complex;
const A2 = multiply(A, A) as Complex;

function mathjsSequence(a: Complex, b: Complex, c: Complex): [Complex, Complex, Complex] {
  const third = (x: Complex): Complex => divide(x, 3) as Complex;
  const z = third(add(add(a, b), c) as Complex);
  const p = third(add(add(a, multiply(A, b)), multiply(A2, c)) as Complex);
  const n = third(add(add(a, multiply(A2, b)), multiply(A, c)) as Complex);
  return [z, p, n];
}

function randomSet(rand: () => number, out: Float64Array): [Complex, Complex, Complex] {
  const set: Complex[] = [];
  for (let k = 0; k < 3; k++) {
    // Magnitudes from 0 to 20 kV, any angle: voltages and fault currents alike.
    const m = 20000 * rand();
    const th = 2 * Math.PI * rand() - Math.PI;
    out[2 * k] = m * Math.cos(th);
    out[2 * k + 1] = m * Math.sin(th);
    set.push(complex(out[2 * k]!, out[2 * k + 1]!) as Complex);
  }
  return [set[0]!, set[1]!, set[2]!];
}

describe('Fortescue transform against mathjs (independent reference library)', () => {
  it(`agrees with mathjs to ${REL_TOL} relative on ${RANDOM_SETS} random unbalanced sets`, () => {
    const rand = prng(20261202);
    const abc = new Float64Array(6);
    const seq = new Float64Array(6);
    let worst = 0;
    for (let n = 0; n < RANDOM_SETS; n++) {
      const [a, b, c] = randomSet(rand, abc);
      fortescueInto(abc, seq);
      const ref = mathjsSequence(a, b, c);
      const scale = Math.max(abs(a) as unknown as number, abs(b) as unknown as number, abs(c) as unknown as number);
      for (let k = 0; k < 3; k++) {
        const err = Math.hypot(seq[2 * k]! - ref[k]!.re, seq[2 * k + 1]! - ref[k]!.im) / scale;
        worst = Math.max(worst, err);
      }
    }
    expect(worst).toBeLessThan(REL_TOL);
  });

  it('gives the same u2 and u0 as mathjs on random sets', () => {
    const rand = prng(7);
    const abc = new Float64Array(6);
    const seq = new Float64Array(6);
    for (let n = 0; n < 1000; n++) {
      const [a, b, c] = randomSet(rand, abc);
      fortescueInto(abc, seq);
      const [z, p, q] = mathjsSequence(a, b, c);
      const pm = abs(p) as unknown as number;
      expect(u2Percent(seq)).toBeCloseTo((100 * (abs(q) as unknown as number)) / pm, 6);
      expect(u0Percent(seq)).toBeCloseTo((100 * (abs(z) as unknown as number)) / pm, 6);
    }
  });
});

describe('Fortescue identities (textbook: Va = V0+V1+V2, Vb = V0+a²V1+aV2, Vc = V0+aV1+a²V2)', () => {
  it('recomposes any unbalanced set exactly from its three sequence sets', () => {
    const rand = prng(99);
    const abc = new Float64Array(6);
    const seq = new Float64Array(6);
    const back = new Float64Array(6);
    for (let n = 0; n < 2000; n++) {
      randomSet(rand, abc);
      fortescueInto(abc, seq);
      inverseFortescueInto(seq, back);
      for (let k = 0; k < 6; k++) expect(Math.abs(back[k]! - abc[k]!)).toBeLessThan(1e-9 * 20000);
    }
  });

  it('finds no negative or zero sequence in a balanced abc set of any magnitude and rotation', () => {
    const rand = prng(3);
    const abc = new Float64Array(6);
    const seq = new Float64Array(6);
    for (let n = 0; n < 500; n++) {
      const m = 1 + 10000 * rand();
      const th = 360 * rand();
      for (let k = 0; k < 3; k++) {
        const ang = ((th - 120 * k) * Math.PI) / 180;
        abc[2 * k] = m * Math.cos(ang);
        abc[2 * k + 1] = m * Math.sin(ang);
      }
      fortescueInto(abc, seq);
      expect(Math.hypot(seq[0]!, seq[1]!) / m).toBeLessThan(1e-12);
      expect(Math.hypot(seq[4]!, seq[5]!) / m).toBeLessThan(1e-12);
      expect(Math.hypot(seq[2]!, seq[3]!) / m).toBeCloseTo(1, 12);
    }
  });

  it('gives the same u2 from line-to-line magnitudes as from the full phasors (IEC 61000-4-30 §5.7.1 β formula is exact)', () => {
    const rand = prng(11);
    const abc = new Float64Array(6);
    const seq = new Float64Array(6);
    for (let n = 0; n < 2000; n++) {
      // Realistic supply: 1 pu ± 10 % magnitudes, ±5° angle errors.
      for (let k = 0; k < 3; k++) {
        const m = 0.9 + 0.2 * rand();
        const ang = ((-120 * k + 10 * rand() - 5) * Math.PI) / 180;
        abc[2 * k] = m * Math.cos(ang);
        abc[2 * k + 1] = m * Math.sin(ang);
      }
      fortescueInto(abc, seq);
      const ab = Math.hypot(abc[0]! - abc[2]!, abc[1]! - abc[3]!);
      const bc = Math.hypot(abc[2]! - abc[4]!, abc[3]! - abc[5]!);
      const ca = Math.hypot(abc[4]! - abc[0]!, abc[5]! - abc[1]!);
      expect(u2FromLineMagnitudesPercent(ab, bc, ca)).toBeCloseTo(u2Percent(seq), 9);
    }
  });
});
