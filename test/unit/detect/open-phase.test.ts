/**
 * Open-phase verdict of a single result, on the default settings
 * (agent/core/detect/settings.ts): current collapse below 10 % of the other
 * two (common practice), minLoadA 5 A, |I2|/|I1| ≥ 0.4 (three-wire open phase
 * gives 1, Glover Ex. 8.2; grounded wye gives 0.5, published worked example "Examples" Ex. 2 (scribd 906678531)),
 * voltage collapse below 60 % of nominal (common practice), |V2|/|V1| ≥ 0.2.
 * Signatures from shared/CHECKS.md §7 and check-vectors.json, named per test.
 */
import { describe, expect, it } from 'vitest';
import { evaluateOpenPhase, OpenPhaseFinding } from '../../../agent/core/detect/open-phase.js';
import { DEFAULT_DETECTION } from '../../../agent/core/detect/settings.js';
import type { PolarSet } from './results.js';
import { balanced, checkVector, result, scaled, vectorWithInputs } from './results.js';

const OP = DEFAULT_DETECTION.openPhase;
const PICKUP_A = DEFAULT_DETECTION.fault.pickupA;
const VLN = 7200;

function judge(v: PolarSet | null, i: PolarSet | null, nominal: number | null = VLN): OpenPhaseFinding {
  const f = new OpenPhaseFinding();
  evaluateOpenPhase(OP, PICKUP_A, nominal, result({ ts: 0, v, i }), f);
  return f;
}

const HEALTHY_V = balanced(VLN);

/** Phase voltages (V) from V1 = v1∠0 pu and V2 = v2 pu opposite phase a (V2∠180°), zero V0. */
function fromSequence(v1: number, v2: number): PolarSet {
  const ph = (k: number): [number, number] => {
    const re = v1 * Math.cos((-120 * k * Math.PI) / 180) + v2 * Math.cos(((180 + 120 * k) * Math.PI) / 180);
    const im = v1 * Math.sin((-120 * k * Math.PI) / 180) + v2 * Math.sin(((180 + 120 * k) * Math.PI) / 180);
    return [VLN * Math.hypot(re, im), (Math.atan2(im, re) * 180) / Math.PI];
  };
  return { a: ph(0), b: ph(1), c: ph(2) };
}
const LOAD = balanced(200, -25.8);

describe('current signature', () => {
  it('names phase a with I2/I1 = 1 for vector open-phase-a-three-wire-load-currents (computed with mathjs; Glover Ex. 8.2 signature)', () => {
    const f = judge(HEALTHY_V, checkVector('open-phase-a-three-wire-load-currents').inputs);
    expect(f.verdict).toBe('open-phase');
    expect(f.basis).toBe('current');
    expect(f.phase).toBe('a');
    expect(f.value).toBeCloseTo(1, 9);
    expect(f.limit).toBe(OP.negToPosCurrentRatio);
  });

  it('names phase c for glover-ex8.2-open-line-c-currents (Glover, Sarma & Overbye Ex. 8.2, from memory; recomputed with mathjs)', () => {
    const f = judge(null, checkVector('glover-ex8.2-open-line-c-currents').inputs);
    expect(f.verdict).toBe('open-phase');
    expect(f.phase).toBe('c');
    expect(f.value).toBeCloseTo(1, 9);
  });

  it('names phase b with I2/I1 = 0.5 for the grounded-wye load with phase b open, 10∠0°, 0, 10∠120° A (published worked example "Examples" Ex. 2 (scribd 906678531))', () => {
    const f = judge(null, vectorWithInputs({ a: [10, 0], b: [0, 0], c: [10, 120] }).inputs);
    expect(f.verdict).toBe('open-phase');
    expect(f.phase).toBe('b');
    expect(f.value).toBeCloseTo(0.5, 9);
  });

  it('names phase a with I2/I1 = Z0/(Z0+Z2) = 2/3 for broken-conductor-a-grounded-loop (series-fault analysis, computed with mathjs)', () => {
    const f = judge(null, scaled(checkVector('broken-conductor-a-grounded-loop').inputs, 100));
    expect(f.phase).toBe('a');
    expect(f.value).toBeCloseTo(2 / 3, 7);
  });

  it('catches a motor-backfed open phase on the currents (the remaining lines carry ≈1.5 × load, CHECKS.md §7)', () => {
    const f = judge(null, { a: [2, 0], b: [300, -150], c: [300, 30] });
    expect(f.verdict).toBe('open-phase');
    expect(f.phase).toBe('a');
  });

  it('cannot judge a lightly loaded feeder (other phases at or below minLoadA 5 A): unobservable, no open phase', () => {
    const f = judge(HEALTHY_V, scaled(checkVector('open-phase-a-three-wire-load-currents').inputs, 0.04));
    expect(f.verdict).toBe('unobservable');
  });

  it('does not call a phase open when its current is 12 % of the others (above the 10 % collapse ratio)', () => {
    const f = judge(HEALTHY_V, { a: [24, -25.8], b: [200, -145.8], c: [200, 94.2] });
    expect(f.verdict).toBe('healthy');
  });

  it('is blocked by fault-level current above fault.pickupA', () => {
    const f = judge(HEALTHY_V, { a: [0, 0], b: [2500, -120], c: [200, 120] });
    expect(f.verdict).toBe('fault-blocked');
  });

  it('judges magnitude-only currents (rms frame) by the collapse alone when the magnitudes cannot form a triangle', () => {
    const f = new OpenPhaseFinding();
    const r = result({ ts: 0, i: { a: [0, 0], b: [100, 0], c: [120, 0] } });
    r.i = { ...r.i!, pos: null, neg: null, zero: null };
    evaluateOpenPhase(OP, PICKUP_A, VLN, r, f);
    expect(f.verdict).toBe('open-phase');
    expect(f.quantity).toBe('Ik/Iothers');
    expect(f.limit).toBe(OP.currentCollapseRatio);
  });
});

describe('voltage signature', () => {
  it('reports phase a open from voltages only for open-phase-a-load-side-voltage-grounded-wye-no-backfeed (computed with mathjs), saying current was not measured', () => {
    const f = judge(scaled(checkVector('open-phase-a-load-side-voltage-grounded-wye-no-backfeed').inputs, VLN), null);
    expect(f.verdict).toBe('open-phase');
    expect(f.basis).toBe('voltage-no-current');
    expect(f.phase).toBe('a');
    expect(f.value).toBeCloseTo(0, 9);
    expect(f.limit).toBe(OP.voltageCollapseRatio);
  });

  it('reports phase a open for open-line-a-load-side-voltage-delta-or-ungrounded-static-load (0.5 pu < 0.6, computed with mathjs)', () => {
    const f = judge(scaled(checkVector('open-line-a-load-side-voltage-delta-or-ungrounded-static-load').inputs, VLN), null);
    expect(f.verdict).toBe('open-phase');
    expect(f.value).toBeCloseTo(0.5, 9);
  });

  it('compares with the other two phases when the nominal voltage is unknown', () => {
    const f = judge(scaled(checkVector('open-phase-a-load-side-voltage-grounded-wye-no-backfeed').inputs, VLN), null, null);
    expect(f.verdict).toBe('open-phase');
    expect(f.quantity).toBe('Vk/Vothers');
  });

  it('reports a phase at 70 % of nominal with |V2|/|V1| = 0.22 ≥ 0.2 (large V2 with a low phase voltage) from V2/V1', () => {
    // V1 = 0.9 pu, V2 = 0.2 pu opposite phase a: Va = 0.7 pu, above the 0.6 collapse level.
    const f = judge(fromSequence(0.9, 0.2), null);
    expect(f.verdict).toBe('open-phase');
    expect(f.phase).toBe('a');
    expect(f.quantity).toBe('V2/V1');
    expect(f.value).toBeCloseTo(0.2 / 0.9, 9);
  });

  it('does not see a motor-backfed open phase on voltages (u2 15 %, phase at 0.739 pu; CHECKS.md §7, IEEE C37.96 from memory)', () => {
    // V1 = 0.739/0.85 pu, V2 = −0.15·V1: Va = V1 + V2 = 0.739 pu.
    const v1 = 0.739 / 0.85;
    const f = judge(fromSequence(v1, 0.15 * v1), null);
    expect(f.verdict).toBe('healthy');
  });

  it('does not call a three-phase outage an open phase (no phase is singled out)', () => {
    const f = judge(balanced(0.02 * VLN), null);
    expect(f.verdict).toBe('unobservable');
  });
});

describe('loss of potential (VT fuse-failure logic: voltage unbalance without current unbalance, common practice, CHECKS.md §7)', () => {
  it('reports loss of potential, not an open phase, when phase b voltage is gone and the currents are present and balanced', () => {
    const f = judge({ a: [VLN, 0], b: [30, -120], c: [VLN, 120] }, LOAD);
    expect(f.verdict).toBe('loss-of-potential');
    expect(f.phase).toBe('b');
  });

  it('reports an open phase from voltages when the currents are measured but too light to confirm', () => {
    const f = judge({ a: [VLN, 0], b: [30, -120], c: [VLN, 120] }, balanced(2, -25.8));
    expect(f.verdict).toBe('open-phase');
    expect(f.basis).toBe('voltage-light-load');
  });

  it('does not call a sagging phase that carries the largest current open (a fault below pickup): unobservable', () => {
    const f = judge({ a: [0.4 * VLN, 0], b: [VLN, -120], c: [VLN, 120] }, { a: [1500, -70], b: [200, -145.8], c: [200, 94.2] });
    expect(f.verdict).toBe('unobservable');
  });

  it('reports an open phase from voltages when the sagging phase carries the least current, at 12.5 % of the others (just above the collapse ratio) with |I2|/|I1| ≥ 0.4', () => {
    const f = judge({ a: [0.4 * VLN, 0], b: [VLN, -120], c: [VLN, 120] }, { a: [25, -25.8], b: [200, -145.8], c: [200, 94.2] });
    expect(f.verdict).toBe('open-phase');
    expect(f.basis).toBe('voltage-unbalanced-current');
  });

  it('prefers the current signature when both currents and voltages show the lost phase', () => {
    const f = judge({ a: [VLN, 0], b: [30, -120], c: [VLN, 120] }, { a: [200, -25.8], b: [0, 0], c: [200, 94.2] });
    expect(f.verdict).toBe('open-phase');
    expect(f.basis).toBe('current');
    expect(f.phase).toBe('b');
  });
});

describe('healthy evidence', () => {
  it('calls balanced loaded currents healthy even with voltages taken upstream of the open point', () => {
    expect(judge(HEALTHY_V, LOAD).verdict).toBe('healthy');
  });

  it('reports the present I2/I1 with a healthy verdict, for the clearing message', () => {
    const f = judge(HEALTHY_V, LOAD);
    expect(f.quantity).toBe('I2/I1');
    expect(f.value!).toBeLessThan(1e-9);
  });

  it('has nothing to judge without current or line-to-neutral voltage', () => {
    expect(judge(null, null).verdict).toBe('unobservable');
  });
});
