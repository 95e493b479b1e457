/**
 * Open-phase evaluation of one result (a frame or a basic window): one phase
 * lost while the other two carry on (a blown fuse, a broken conductor, a
 * switch pole that failed to close). The verdict feeds a pickup/dropout timer
 * in the feeder detector; this file only judges a single snapshot.
 *
 * Signatures (shared/CHECKS.md §7):
 * - Currents: the lost phase carries (almost) nothing while the others carry
 *   load. For a three-wire (delta or ungrounded) load Ia = 0 and I0 = 0 give
 *   I1 = −I2, so |I2|/|I1| = 1 exactly (Glover, Sarma & Overbye, Ex. 8.2,
 *   vector open-phase-a-three-wire-load-currents); a grounded-wye load gives
 *   0.5 (published worked example "Examples" Ex. 2 (scribd 906678531); the phase-b-open check vector).
 * - Voltages (measured downstream of the open point): the lost phase
 *   collapses — to 0 on a grounded-wye static load, to 0.5 pu on a delta load
 *   (vectors open-phase-a-load-side-voltage-grounded-wye-no-backfeed,
 *   open-line-a-load-side-voltage-delta-or-ungrounded-static-load) — with
 *   |V2|/|V1| of 0.5 to 1.
 * - Loss of potential (a VT fuse or the voltage measurement lost): the voltage
 *   signature without any current signature while the currents are present
 *   and balanced (common practice for VT fuse-failure logic, CHECKS.md §7).
 *   That is not an open phase of the feeder and is reported as a diagnostic.
 * - Fault-level current (settings.fault.pickupA) blocks the evaluation: a
 *   fault also collapses voltages and unbalances currents.
 *
 * Limits, stated in docs/detection.md: an induction motor backfeeds the lost
 * phase (CHECKS.md §7: u2 ≈ 15 %, the phase near 0.74 pu), which the voltage
 * test does not catch — the current test does; two lost phases are not an
 * "open phase" here (a three-wire load then draws no current at all); the
 * current test needs load (minLoadA) to tell a lost phase from an unloaded one.
 */
import type { PhasorOut, SequenceResult } from '../result.js';
import type { OpenPhaseSettings } from './settings.js';
import type { Phase } from './types.js';

/**
 * Dip threshold, 90 % of the declared voltage (IEC 61000-4-30 §5.4, from
 * memory): a phase below it together with a large V2 is "low", which is the
 * second voltage signature (large V2 with a low phase voltage).
 */
export const LOW_PHASE_VOLTAGE_RATIO = 0.9;

/**
 * - 'unobservable': nothing usable (no channel, or currents too light to judge with no voltage signature): hold the state.
 * - 'fault-blocked': fault-level current: hold the state; the fault recorder takes over.
 * - 'healthy': evidence that all three phases are present.
 * - 'open-phase': one phase lost (see `basis`).
 * - 'loss-of-potential': the voltage signature alone while currents are present and balanced.
 */
export type OpenPhaseVerdict = 'unobservable' | 'fault-blocked' | 'healthy' | 'open-phase' | 'loss-of-potential';

/**
 * What decided an open-phase verdict:
 * - 'current': the current signature (voltages, if any, agree or were taken upstream of the open point);
 * - 'voltage-no-current': voltage signature, no current channel;
 * - 'voltage-light-load': voltage signature, currents measured but too light (below minLoadA) to confirm;
 * - 'voltage-unbalanced-current': voltage signature with unbalanced currents that show no single collapsed phase.
 */
export type OpenPhaseBasis = 'current' | 'voltage-no-current' | 'voltage-light-load' | 'voltage-unbalanced-current';

/** Caller-owned scratch the evaluation writes into (no allocation per frame). */
export class OpenPhaseFinding {
  verdict: OpenPhaseVerdict = 'unobservable';
  basis: OpenPhaseBasis | null = null;
  phase: Phase | null = null;
  /** The decisive ratio: |I2|/|I1| (or Ik/mean of the others when I2 is unobservable), Vk/reference, or |V2|/|V1|. */
  value: number | null = null;
  /** The setting the value was compared with. */
  limit: number | null = null;
  /** For messages: 'I2/I1', 'Ik/Iothers', 'Vk/Vnominal', 'Vk/Vothers', 'V2/V1'. */
  quantity: string | null = null;

  reset(verdict: OpenPhaseVerdict): void {
    this.verdict = verdict;
    this.basis = null;
    this.phase = null;
    this.value = null;
    this.limit = null;
    this.quantity = null;
  }
}

const PHASES: readonly Phase[] = ['a', 'b', 'c'];

function ratio(num: PhasorOut | null, den: PhasorOut | null): number | null {
  if (num === null || den === null || !(den[0] > 0)) return null;
  return num[0] / den[0];
}

/** Index of the one phase below `frac` × mean of the other two, with both others above `minOthers`; -1 if none. */
function collapsedPhase(x0: number, x1: number, x2: number, frac: number, minOthers: number): number {
  if (x1 > minOthers && x2 > minOthers && x0 < frac * 0.5 * (x1 + x2)) return 0;
  if (x0 > minOthers && x2 > minOthers && x1 < frac * 0.5 * (x0 + x2)) return 1;
  if (x0 > minOthers && x1 > minOthers && x2 < frac * 0.5 * (x0 + x1)) return 2;
  return -1;
}

/**
 * Judges one result. `faultPickupA` is null when fault detection is disabled
 * (then nothing blocks). `nominalVLN` is the declared line-to-neutral voltage
 * or null (then a phase is compared with the mean of the other two).
 * `currentsExpected`: the feeder measures currents (it sent some lately) but
 * this result has none. Its healthy voltages then prove nothing, as voltages
 * taken upstream of an open point stay healthy: no verdict, so that a frame
 * without currents neither resets nor clears a current-based open phase.
 */
export function evaluateOpenPhase(
  cfg: OpenPhaseSettings,
  faultPickupA: number | null,
  nominalVLN: number | null,
  r: SequenceResult,
  out: OpenPhaseFinding,
  currentsExpected = false,
): void {
  const iq = r.i;
  const irms = iq === null ? null : iq.rms;
  if (irms !== null && faultPickupA !== null && Math.max(irms.a, irms.b, irms.c) > faultPickupA) {
    out.reset('fault-blocked');
    return;
  }

  // Current signature.
  let currentsHealthy = false;
  let currentsLight = false;
  let currentsUnbalanced = false;
  let i21: number | null = null;
  let v21: number | null = null;
  let voltsPresent = false;
  if (irms !== null) {
    const k = collapsedPhase(irms.a, irms.b, irms.c, cfg.currentCollapseRatio, cfg.minLoadA);
    i21 = ratio(iq!.neg, iq!.pos);
    if (k >= 0 && (i21 === null || i21 >= cfg.negToPosCurrentRatio)) {
      out.reset('open-phase');
      out.basis = 'current';
      out.phase = PHASES[k]!;
      if (i21 !== null) {
        out.value = i21;
        out.limit = cfg.negToPosCurrentRatio;
        out.quantity = 'I2/I1';
      } else {
        const x = k === 0 ? irms.a : k === 1 ? irms.b : irms.c;
        const others = k === 0 ? irms.b + irms.c : k === 1 ? irms.a + irms.c : irms.a + irms.b;
        out.value = x / (0.5 * others);
        out.limit = cfg.currentCollapseRatio;
        out.quantity = 'Ik/Iothers';
      }
      return;
    }
    const loaded = irms.a > cfg.minLoadA && irms.b > cfg.minLoadA && irms.c > cfg.minLoadA;
    currentsHealthy = loaded && (i21 === null || i21 < cfg.negToPosCurrentRatio);
    currentsUnbalanced = loaded && !currentsHealthy;
    currentsLight = !loaded;
  }

  // Voltage signature (needs line-to-neutral magnitudes).
  const vq = r.v;
  const vrms = vq === null ? null : vq.rms;
  if (vrms !== null) {
    const va = vrms.a, vb = vrms.b, vc = vrms.c;
    const k = va <= vb && va <= vc ? 0 : vb <= vc ? 1 : 2;
    const vk = k === 0 ? va : k === 1 ? vb : vc;
    const othersMean = 0.5 * (k === 0 ? vb + vc : k === 1 ? va + vc : va + vb);
    const ref = nominalVLN ?? othersMean;
    v21 = ratio(vq!.neg, vq!.pos);
    const v21Large = v21 !== null && v21 >= cfg.negToPosVoltageRatio;
    // Exactly one phase collapsed: the other two stay above the collapse level (a three-phase outage is not an open phase).
    const collapseLevel = cfg.voltageCollapseRatio * ref;
    const collapsed = ref > 0 && vk < collapseLevel && (k === 0 ? vb >= collapseLevel && vc >= collapseLevel : k === 1 ? va >= collapseLevel && vc >= collapseLevel : va >= collapseLevel && vb >= collapseLevel);
    const collapsedSupported = collapsed && (v21 === null || v21Large);
    voltsPresent = ref > 0 && vk >= collapseLevel;
    const lowWithV2 = ref > 0 && v21Large && vk < LOW_PHASE_VOLTAGE_RATIO * ref;
    if (collapsedSupported || lowWithV2) {
      // A sagging phase that carries the largest current is a fault below the pickup (or a heavy single-phase load),
      // not a lost phase: an open phase takes current away from its phase. Nothing to conclude: hold.
      if (currentsUnbalanced && irms !== null && (k === 0 ? irms.a >= irms.b && irms.a >= irms.c : k === 1 ? irms.b >= irms.a && irms.b >= irms.c : irms.c >= irms.a && irms.c >= irms.b)) {
        out.reset('unobservable');
        return;
      }
      out.reset(irms !== null && currentsHealthy ? 'loss-of-potential' : 'open-phase');
      out.phase = PHASES[k]!;
      if (collapsedSupported) {
        out.value = vk / ref;
        out.limit = cfg.voltageCollapseRatio;
        out.quantity = nominalVLN === null ? 'Vk/Vothers' : 'Vk/Vnominal';
      } else {
        out.value = v21;
        out.limit = cfg.negToPosVoltageRatio;
        out.quantity = 'V2/V1';
      }
      if (out.verdict === 'open-phase') {
        out.basis = irms === null ? 'voltage-no-current' : currentsLight ? 'voltage-light-load' : 'voltage-unbalanced-current';
      }
      return;
    }
  }

  // No signature. "Healthy" needs evidence: loaded currents when currents are measured (voltages taken upstream of
  // an open point stay healthy, so they prove nothing then), otherwise all three line-to-neutral voltages present
  // (a dead feeder proves nothing about its fuses).
  // The value reported with a clearing is the present sequence ratio.
  if (irms !== null) {
    out.reset(currentsHealthy || currentsUnbalanced ? 'healthy' : 'unobservable');
    if (i21 !== null) {
      out.value = i21;
      out.limit = cfg.negToPosCurrentRatio;
      out.quantity = 'I2/I1';
    }
  } else {
    out.reset(voltsPresent && !currentsExpected ? 'healthy' : 'unobservable');
    if (v21 !== null) {
      out.value = v21;
      out.limit = cfg.negToPosVoltageRatio;
      out.quantity = 'V2/V1';
    }
  }
}
