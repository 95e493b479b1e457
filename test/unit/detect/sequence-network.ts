/**
 * A small sequence-network fault model for tests, computed with mathjs (the
 * project's reference library), independent of the code under test.
 *
 * Textbook connections at the fault (Glover, Sarma & Overbye, Power System
 * Analysis and Design, ch. 9; Grainger & Stevenson, Power System Analysis,
 * ch. 12; same relations in shared/CHECKS.md §6), with the prefault voltage
 * E of the fault's "symmetrical" phase k (the faulted phase of an SLG, the
 * healthy phase of an LL or DLG fault):
 *   three-phase:  I1 = E/(Z1 + Rf),                I2 = I0 = 0
 *   SLG k-g:      I0 = I1 = I2 = E/(Z1 + Z2 + Z0 + 3Rf)
 *   LL  (others): I1 = −I2 = E/(Z1 + Z2 + Rf),     I0 = 0
 *   DLG (others): I1 = E/(Z1 + Z2‖(Z0 + 3Rf)), I2 = −I1(Z0 + 3Rf)/(Z2 + Z0 + 3Rf), I0 = −I1·Z2/(Z2 + Z0 + 3Rf)
 * (for the DLG, Rf is the resistance from the joined phases to ground).
 * Components referred to phase k are turned into phase currents with
 * I_k = I0+I1+I2, I_{k+1} = I0+a²I1+aI2, I_{k+2} = I0+aI1+a²I2 (a = 1∠120°,
 * phases in the order a, b, c). Prefault load is added by superposition as
 * a positive-sequence set plus an optional negative-sequence part.
 */
import type { Complex } from 'mathjs';
import { abs, add, arg, complex, divide, multiply } from 'mathjs';
import type { FaultType } from '../../../agent/core/detect/types.js';
import type { PolarSet } from './results.js';

export interface SourceNetwork {
  readonly name: string;
  /** Prefault line-to-neutral voltage of phase a, V (angle 0). */
  readonly vln: number;
  readonly z1: Complex;
  readonly z2: Complex;
  readonly z0: Complex;
}

export interface Load {
  /** Positive-sequence load current, A. */
  readonly amps: number;
  /** Power factor angle, degrees (positive = lagging). */
  readonly pfAngleDeg: number;
  /** Standing negative-sequence load current as a fraction of amps (load unbalance). */
  readonly unbalance: number;
}

const A = complex({ r: 1, phi: (2 * Math.PI) / 3 });
const A2 = multiply(A, A) as Complex;
const ZERO = complex(0, 0);

function par(x: Complex, y: Complex): Complex {
  return divide(multiply(x, y), add(x, y)) as Complex;
}

/** Index of the symmetrical phase of a fault type (0 = a, 1 = b, 2 = c). */
export function symmetricalPhase(t: FaultType): number {
  switch (t) {
    case 'AG':
    case 'BC':
    case 'BCG':
    case 'ABC':
      return 0;
    case 'BG':
    case 'CA':
    case 'CAG':
      return 1;
    case 'CG':
    case 'AB':
    case 'ABG':
      return 2;
  }
}

/** Sequence currents [I0, I1, I2] of the fault, referred to its symmetrical phase. */
export function faultSequenceCurrents(t: FaultType, net: SourceNetwork, rf: number): [Complex, Complex, Complex] {
  const k = symmetricalPhase(t);
  const e = multiply(complex(net.vln, 0), k === 0 ? complex(1, 0) : k === 1 ? A2 : A) as Complex;
  const r = complex(rf, 0);
  const r3 = complex(3 * rf, 0);
  if (t === 'ABC') return [ZERO, divide(e, add(net.z1, r)) as Complex, ZERO];
  if (t.length === 2 && t.endsWith('G')) {
    const i = divide(e, add(add(add(net.z1, net.z2), net.z0), r3)) as Complex;
    return [i, i, i];
  }
  if (t.length === 2) {
    const i1 = divide(e, add(add(net.z1, net.z2), r)) as Complex;
    return [ZERO, i1, multiply(-1, i1) as Complex];
  }
  const z0g = add(net.z0, r3) as Complex;
  const i1 = divide(e, add(net.z1, par(net.z2, z0g))) as Complex;
  const den = add(net.z2, z0g) as Complex;
  const i2 = multiply(-1, divide(multiply(i1, z0g), den)) as Complex;
  const i0 = multiply(-1, divide(multiply(i1, net.z2), den)) as Complex;
  return [i0, i1, i2];
}

/** Phase currents (a, b, c) of the fault plus the load, as [magnitude, angleDeg]. */
export function faultPhaseCurrents(t: FaultType, net: SourceNetwork, rf: number, load: Load): PolarSet {
  const [i0, i1, i2] = faultSequenceCurrents(t, net, rf);
  const k = symmetricalPhase(t);
  const fault: Complex[] = [ZERO, ZERO, ZERO];
  fault[k] = add(add(i0, i1), i2) as Complex;
  fault[(k + 1) % 3] = add(add(i0, multiply(A2, i1)), multiply(A, i2)) as Complex;
  fault[(k + 2) % 3] = add(add(i0, multiply(A, i1)), multiply(A2, i2)) as Complex;
  const il1 = complex({ r: load.amps, phi: (-load.pfAngleDeg * Math.PI) / 180 });
  const il2 = complex({ r: load.amps * load.unbalance, phi: (137 * Math.PI) / 180 });
  const loadPh = [add(il1, il2), add(multiply(A2, il1), multiply(A, il2)), add(multiply(A, il1), multiply(A2, il2))] as Complex[];
  const polar = (x: Complex): [number, number] => [abs(x) as unknown as number, (arg(x) * 180) / Math.PI];
  return { a: polar(add(fault[0]!, loadPh[0]!) as Complex), b: polar(add(fault[1]!, loadPh[1]!) as Complex), c: polar(add(fault[2]!, loadPh[2]!) as Complex) };
}

/**
 * Phase voltages (a, b, c) at the fault: V1 = E − Z1·I1, V2 = −Z2·I2, V0 = −Z0·I0
 * referred to the symmetrical phase (same textbook network), as [magnitude, angleDeg].
 */
export function faultPhaseVoltages(t: FaultType, net: SourceNetwork, rf: number): PolarSet {
  const [i0, i1, i2] = faultSequenceCurrents(t, net, rf);
  const k = symmetricalPhase(t);
  const e = multiply(complex(net.vln, 0), k === 0 ? complex(1, 0) : k === 1 ? A2 : A) as Complex;
  const v1 = add(e, multiply(-1, multiply(net.z1, i1))) as Complex;
  const v2 = multiply(-1, multiply(net.z2, i2)) as Complex;
  const v0 = multiply(-1, multiply(net.z0, i0)) as Complex;
  const ph: Complex[] = [ZERO, ZERO, ZERO];
  ph[k] = add(add(v0, v1), v2) as Complex;
  ph[(k + 1) % 3] = add(add(v0, multiply(A2, v1)), multiply(A, v2)) as Complex;
  ph[(k + 2) % 3] = add(add(v0, multiply(A, v1)), multiply(A2, v2)) as Complex;
  const polar = (x: Complex): [number, number] => [abs(x) as unknown as number, (arg(x) * 180) / Math.PI];
  return { a: polar(ph[0]!), b: polar(ph[1]!), c: polar(ph[2]!) };
}
