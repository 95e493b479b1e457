/**
 * Fault classification from sequence currents, checked against the published
 * and computed fault signatures of shared/CHECKS.md §6 (check-vectors.json,
 * source named per row) and against faults simulated with a textbook
 * sequence-network model (sequence-network.ts, computed with mathjs).
 *
 * Angle convention under test: δ20 = angle(I2) − angle(I0), δ21 = angle(I2) − angle(I1),
 * with I2 = (Ia + a²Ib + aIc)/3 and a = 1∠+120°.
 */
import { complex } from 'mathjs';
import { describe, expect, it } from 'vitest';
import { BALANCED_NEG_RATIO, classifyFault, groundFaultType, phaseToPhaseType } from '../../../agent/core/detect/fault-classifier.js';
import { DEFAULT_DETECTION } from '../../../agent/core/detect/settings.js';
import type { FaultType } from '../../../agent/core/detect/types.js';
import { FAULT_TYPES } from '../../../agent/core/detect/types.js';
import { currentFromMagnitudes, SequenceScratch } from '../../../agent/core/sequence/quantities.js';
import { checkVector, currents } from './results.js';
import type { Load, SourceNetwork } from './sequence-network.js';
import { faultPhaseCurrents } from './sequence-network.js';

const FAULT = DEFAULT_DETECTION.fault;

describe('classification of the published and computed fault signatures (shared/check-vectors.json)', () => {
  const rows: [string, FaultType, string][] = [
    ['fault-slg-a-g', 'AG', 'textbook SLG relations, Glover ch. 9 / Grainger & Stevenson ch. 12; computed with mathjs'],
    ['fault-slg-b-g', 'BG', 'same relations on phase b; computed with mathjs'],
    ['fault-slg-c-g', 'CG', 'same relations on phase c; computed with mathjs'],
    ['fault-ll-b-c-bolted', 'BC', 'LL relations, Weedy & Cory eq. 7.7; computed with mathjs'],
    ['fault-dlg-b-c-g-bolted', 'BCG', 'DLG relations (textbook, from memory); computed with mathjs'],
    ['fault-3ph-bolted', 'ABC', 'three-phase fault, positive sequence only; computed with mathjs'],
    ['handbook-bus3-three-phase-fault', 'ABC', 'Electric Power Engineering Handbook (Grigsby ed.) §4.3, published'],
    ['handbook-bus3-slg-a-fault', 'AG', 'Electric Power Engineering Handbook §4.3, published'],
    ['handbook-bus3-ll-b-c-fault', 'BC', 'handbook impedances, computed with mathjs'],
    ['handbook-bus3-dlg-b-c-g-fault', 'BCG', 'handbook impedances, computed with mathjs'],
  ];
  for (const [name, type, source] of rows) {
    it(`classifies ${name} as ${type} (${source})`, () => {
      const v = checkVector(name);
      expect(classifyFault(currents(v.inputs), FAULT).type).toBe(type);
    });
  }

  it('reports |I0|/|I1| and |I2|/|I1| of fault-dlg-b-c-g-bolted as 0.41667 and 0.58333 (check-vectors.json, computed with mathjs)', () => {
    const v = checkVector('fault-dlg-b-c-g-bolted');
    const c = classifyFault(currents(v.inputs), FAULT);
    expect(c.i0OverI1).toBeCloseTo(v.expected.zero_over_pos!, 6);
    expect(c.i2OverI1).toBeCloseTo(v.expected.neg_over_pos!, 6);
  });
});

describe('angle convention δ20 = angle(I2) − angle(I0) (shared/CHECKS.md §6.1 sign note)', () => {
  const rows: [string, number][] = [
    ['fault-slg-a-g', 0],
    ['fault-slg-b-g', -120],
    ['fault-slg-c-g', 120],
  ];
  for (const [name, deg] of rows) {
    it(`gives δ20 = ${deg}° for ${name}, equal to the vector's angle_neg_minus_zero_deg (computed with mathjs)`, () => {
      const v = checkVector(name);
      expect(v.expected.angle_neg_minus_zero_deg).toBe(deg);
      const c = classifyFault(currents(v.inputs), FAULT);
      expect(c.angleNegMinusZeroDeg).toBeCloseTo(deg, 6);
    });
  }

  it('places a B-G fault at δ20 = −120°, not +120° as angle(I0) − angle(I2) would (CHECKS.md §6.1)', () => {
    expect(groundFaultType(-120, 120)).toBe('BG');
    expect(groundFaultType(120, -120)).toBe('CG');
  });
});

describe('sector boundaries of the ground-fault signatures (±60° I2/I0 sectors, relay practice, CHECKS.md §6.1, no citable source)', () => {
  it('keeps a single-line-to-ground fault whose δ20 is 55° off centre in its own sector', () => {
    expect(groundFaultType(55, 0)).toBe('AG');
    expect(groundFaultType(-55, 0)).toBe('AG');
    expect(groundFaultType(-120 + 55, 120)).toBe('BG');
  });

  it('separates AG from BCG in the same I2/I0 sector by δ21 (0° against 180°)', () => {
    expect(groundFaultType(0, 10)).toBe('AG');
    expect(groundFaultType(0, 170)).toBe('BCG');
  });

  it('keeps a resistive BCG whose δ20 drifted to −80° (out of the AG sector) a BCG', () => {
    expect(groundFaultType(-80, 175)).toBe('BCG');
  });

  it('maps δ21 sectors of phase-to-phase faults: 180° BC, −60° CA, +60° AB (I2 = −I1 referred to the healthy phase)', () => {
    expect(phaseToPhaseType(180)).toBe('BC');
    expect(phaseToPhaseType(-60)).toBe('CA');
    expect(phaseToPhaseType(60)).toBe('AB');
    expect(phaseToPhaseType(119)).toBe('AB');
    expect(phaseToPhaseType(121)).toBe('BC');
  });
});

describe('simulated faults, every type on every phase (sequence-network model computed with mathjs)', () => {
  // Two 12.47 kV networks (7.2 kV line-to-neutral). X/R of 8 at a substation bus and about 2.5 at a feeder end,
  // Z0 ≈ 2.25–3 × Z1: typical distribution values (common practice; Glover ch. 9 example data are of this order).
  const networks: SourceNetwork[] = [
    { name: 'substation bus, X/R 8', vln: 7200, z1: complex(0.15, 1.2), z2: complex(0.15, 1.2), z0: complex(0.45, 2.7) },
    { name: 'feeder end, X/R 2.5', vln: 7200, z1: complex(1.2, 3.0), z2: complex(1.2, 3.0), z0: complex(3.6, 9.6) },
  ];
  const loads: Load[] = [
    { amps: 0, pfAngleDeg: 0, unbalance: 0 },
    // 400 A at pf 0.9 lagging with 5 % standing current unbalance: a heavily loaded feeder (common practice).
    { amps: 400, pfAngleDeg: 25.8, unbalance: 0.05 },
  ];
  const resistances: Record<string, readonly number[]> = {
    shunt: [0, 1, 5],
    // DLG ground resistance kept where |I0|/|I1| stays above groundRatio; higher values are covered below.
    dlg: [0, 0.5, 1],
  };
  for (const net of networks) {
    for (const load of loads) {
      for (const type of FAULT_TYPES) {
        const rfs = type.length === 3 && type !== 'ABC' ? resistances.dlg! : resistances.shunt!;
        for (const rf of rfs) {
          it(`classifies a ${type} fault at the ${net.name}, Rf ${rf} Ω, load ${load.amps} A as ${type}`, () => {
            const i = currents(faultPhaseCurrents(type, net, rf, load));
            expect(classifyFault(i, FAULT).type).toBe(type);
          });
        }
      }
    }
  }

  it('reports a DLG fault through 5 Ω to ground as phase-to-phase, since its |I0|/|I1| falls below groundRatio 0.1', () => {
    const net = networks[0]!;
    for (const [dlg, ll] of [['BCG', 'BC'], ['CAG', 'CA'], ['ABG', 'AB']] as const) {
      const c = classifyFault(currents(faultPhaseCurrents(dlg, net, 5, loads[1]!)), FAULT);
      expect(c.i0OverI1!).toBeLessThan(FAULT.groundRatio);
      expect(c.type).toBe(ll);
    }
  });

  it('classifies a resistive BCG (3 Ω to ground) whose δ20 has left the ±60° AG sector as BCG', () => {
    const c = classifyFault(currents(faultPhaseCurrents('BCG', networks[0]!, 3, loads[1]!)), FAULT);
    expect(c.i0OverI1!).toBeGreaterThan(FAULT.groundRatio);
    expect(c.angleNegMinusZeroDeg!).toBeLessThan(-60);
    expect(c.type).toBe('BCG');
  });
});

describe('three-phase and magnitude-only classification', () => {
  it(`calls a fault three-phase when |I2|/|I1| < ${BALANCED_NEG_RATIO} and there is no ground involvement`, () => {
    const c = classifyFault(currents({ a: [5000, -80], b: [5000 * 1.04, -200], c: [5000, 40] }), FAULT);
    expect(c.i2OverI1!).toBeLessThan(BALANCED_NEG_RATIO);
    expect(c.type).toBe('ABC');
  });

  it('classifies from phase magnitudes when only magnitudes were measured (rms frame): one phase above pickup is a ground fault', () => {
    const i = currentFromMagnitudes(new Float64Array([4500, 300, 310]), new SequenceScratch(), false);
    const c = classifyFault(i, FAULT);
    expect(c.method).toBe('phase-magnitudes');
    expect(c.type).toBe('AG');
  });

  it('classifies from phase magnitudes two phases above pickup as phase-to-phase, ground not observable', () => {
    const i = currentFromMagnitudes(new Float64Array([300, 4200, 4100]), new SequenceScratch(), false);
    expect(classifyFault(i, FAULT).type).toBe('BC');
  });
});
