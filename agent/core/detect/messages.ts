/**
 * Alarm, event and diagnostic texts. Each says what the condition means for
 * equipment and people and ends with the caution that applies: actions follow
 * the utility's switching procedures, local codes and licensed practice.
 * Built only when a state changes, never per frame.
 */
import type { FaultClassification } from './fault-classifier.js';
import type { OpenPhaseBasis } from './open-phase.js';
import type { AlarmLevel, FaultType, Phase } from './types.js';

export const CAUTION = "Act only under the utility's switching procedures, local codes and licensed practice.";

export function fmt(x: number, digits = 3): string {
  if (!Number.isFinite(x)) return String(x);
  return Number(x.toPrecision(digits)).toString();
}

export function fmtDuration(ms: number): string {
  if (ms >= 120_000 && ms % 60_000 === 0) return `${ms / 60_000} min`;
  if (ms >= 1000) return `${fmt(ms / 1000)} s`;
  return `${fmt(ms)} ms`;
}

const LIMIT_EFFECTS = {
  'voltage-unbalance':
    'Unbalanced voltage overheats three-phase motors (NEMA MG-1 derates them above 1 %; winding temperature rise grows by about 2·u2² percent) and can trip drives.',
  'zero-sequence-voltage':
    'Zero-sequence voltage suggests a ground fault, a broken or high-resistance neutral, or heavy single-phase loading; a lost neutral can put touch voltage on neutral-bonded metal and overvoltage on single-phase loads.',
  'current-unbalance':
    'Negative-sequence current heats motors, generators and transformers and can operate negative-sequence or ground protection (ANSI 46, 51N).',
} as const;

const LIMIT_NAMES = {
  'voltage-unbalance': 'Voltage unbalance u2',
  'zero-sequence-voltage': 'Zero-sequence voltage u0',
  'current-unbalance': 'Current unbalance i2',
} as const;

export type LimitCondition = keyof typeof LIMIT_EFFECTS;

export interface LimitMessageArgs {
  readonly condition: LimitCondition;
  readonly change: 'raised' | 'escalated' | 'de-escalated' | 'cleared';
  readonly level: AlarmLevel;
  readonly value: number;
  readonly limit: number;
  readonly hysteresis: number;
  readonly pickupMs: number;
  readonly dropoutMs: number;
}

export function limitMessage(a: LimitMessageArgs): string {
  const name = LIMIT_NAMES[a.condition];
  const v = `${fmt(a.value)} %`;
  switch (a.change) {
    case 'raised':
      return `${name} ${v} has stayed above the ${a.level} limit of ${fmt(a.limit)} % for ${fmtDuration(a.pickupMs)}. ${LIMIT_EFFECTS[a.condition]} ${CAUTION}`;
    case 'escalated':
      return `${name} ${v} has stayed above the alarm limit of ${fmt(a.limit)} % for ${fmtDuration(a.pickupMs)} (escalated from warning). ${LIMIT_EFFECTS[a.condition]} ${CAUTION}`;
    case 'de-escalated':
      return `${name} ${v}: the alarm level has cleared but the warning limit of ${fmt(a.limit)} % is still exceeded. ${LIMIT_EFFECTS[a.condition]} ${CAUTION}`;
    case 'cleared':
      return `${name} ${v} has stayed below ${fmt(a.limit - a.hysteresis)} % (${a.level} limit ${fmt(a.limit)} % less ${fmt(a.hysteresis)} points hysteresis) for ${fmtDuration(a.dropoutMs)}; ${a.level} cleared. ${CAUTION}`;
  }
}

const OPEN_PHASE_HAZARD =
  'A blown fuse, broken conductor or failed switch pole is likely. The open conductor can stay energised by backfeed from motors, capacitors or transformer windings: treat it as live. Three-phase motors left single-phasing overheat within minutes.';

const BASIS_NOTE: Record<OpenPhaseBasis, string> = {
  current: 'Seen on the currents.',
  'voltage-no-current': 'Seen on the voltages; current was not measured, so a lost voltage measurement (VT fuse) cannot be ruled out.',
  'voltage-light-load': 'Seen on the voltages; the load current is too light to confirm, so a lost voltage measurement (VT fuse) cannot be ruled out.',
  'voltage-unbalanced-current': 'Seen on the voltages, with unbalanced currents.',
};

export function openPhaseRaisedMessage(phase: Phase, quantity: string, value: number, limit: number, basis: OpenPhaseBasis, pickupMs: number): string {
  const rel = quantity === 'I2/I1' || quantity === 'V2/V1' ? '≥' : '<';
  return `Open phase ${phase}: ${quantity} ${fmt(value)} ${rel} ${fmt(limit)} for ${fmtDuration(pickupMs)}. ${BASIS_NOTE[basis]} ${OPEN_PHASE_HAZARD} ${CAUTION}`;
}

export function openPhaseClearedMessage(phase: Phase | null, dropoutMs: number): string {
  return `Open phase${phase === null ? '' : ` ${phase}`} cleared: all three phases present for ${fmtDuration(dropoutMs)}. Confirm the cause was found and repaired before relying on it. ${CAUTION}`;
}

export function staleRaisedMessage(feeder: string, ageMs: number, afterMs: number): string {
  return `No valid data from feeder ${feeder} for ${fmtDuration(ageMs)} (limit ${fmtDuration(afterMs)}): unbalance, open-phase and fault detection are blind for this feeder, so the absence of alarms says nothing about its condition. Check the meter, its communications and its clock. ${CAUTION}`;
}

export function staleClearedMessage(feeder: string): string {
  return `Data from feeder ${feeder} has resumed; detection is running again.`;
}

export function lossOfPotentialMessage(phase: Phase, quantity: string, value: number): string {
  return `Phase ${phase} voltage lost (${quantity} ${fmt(value)}) while the currents are present and balanced: loss of potential (VT fuse or voltage measurement), not an open phase of the feeder; no open-phase alarm is raised for it. Voltage-based unbalance values are unreliable until it is repaired. VT secondary circuits can carry dangerous voltage. ${CAUTION}`;
}

export function lossOfPotentialClearedMessage(): string {
  return 'Voltage measurement restored: the three phase voltages agree with the currents again.';
}

const FAULT_NAMES: Record<FaultType, string> = {
  AG: 'phase a to ground',
  BG: 'phase b to ground',
  CG: 'phase c to ground',
  AB: 'phase a to phase b',
  BC: 'phase b to phase c',
  CA: 'phase c to phase a',
  ABG: 'phases a and b to ground',
  BCG: 'phases b and c to ground',
  CAG: 'phases c and a to ground',
  ABC: 'three-phase',
};

export function faultEventMessage(c: FaultClassification, peak: number, phase: Phase, durationMs: number): string {
  const parts: string[] = [`Fault ${c.type} (${FAULT_NAMES[c.type]}), peak ${fmt(peak, 4)} A on phase ${phase}, ${fmtDuration(durationMs)}.`];
  if (c.method === 'phase-magnitudes') {
    parts.push('Classified from phase-current magnitudes only (no angles); ground involvement of a two-phase fault is not observable this way.');
  } else {
    const ratios: string[] = [];
    if (c.i0OverI1 !== null) ratios.push(`I0/I1 ${fmt(c.i0OverI1)}`);
    if (c.i2OverI1 !== null) ratios.push(`I2/I1 ${fmt(c.i2OverI1)}`);
    if (c.angleNegMinusZeroDeg !== null) ratios.push(`angle(I2)-angle(I0) ${fmt(c.angleNegMinusZeroDeg)}°`);
    if (c.angleNegMinusPosDeg !== null) ratios.push(`angle(I2)-angle(I1) ${fmt(c.angleNegMinusPosDeg)}°`);
    parts.push(`Classified from sequence currents: ${ratios.join(', ')}.`);
  }
  parts.push('Confirm with the protection records; patrol, test and re-energise only with the circuit proven safe.', CAUTION);
  return parts.join(' ');
}
