/**
 * What detection reports: alarm state changes and classified disturbances
 * (shared/ARCHITECTURE.md, "Outputs").
 */

export const ALARM_CONDITIONS = ['voltage-unbalance', 'zero-sequence-voltage', 'current-unbalance', 'open-phase', 'stale-data'] as const;
export type AlarmCondition = (typeof ALARM_CONDITIONS)[number];

export type AlarmState = 'raised' | 'cleared';
export type AlarmLevel = 'warning' | 'alarm';
export type Phase = 'a' | 'b' | 'c';

/** One alarm state change; published retained on `<out>/<feeder>/alarm/<condition>`. */
export interface AlarmTransition {
  /** Epoch ms of the data that caused the change (never the wall clock, except for stale-data ticks). */
  ts: number;
  feeder: string;
  condition: AlarmCondition;
  state: AlarmState;
  level: AlarmLevel;
  /** The measured value that decided the change (percent for unbalance, a ratio for open-phase), or null. */
  value: number | null;
  limit: number | null;
  phase: Phase | null;
  /** Human-readable reason, with the caution that applies. */
  message: string;
}

export const FAULT_TYPES = ['AG', 'BG', 'CG', 'AB', 'BC', 'CA', 'ABG', 'BCG', 'CAG', 'ABC'] as const;
export type FaultType = (typeof FAULT_TYPES)[number];

/** A classified disturbance; published on `<out>/<feeder>/event`. */
export interface DisturbanceEvent {
  /** Start of the disturbance, epoch ms. */
  ts: number;
  feeder: string;
  type: FaultType;
  durationMs: number;
  /** Largest phase current seen during the disturbance, A. */
  peakCurrent: number;
  peakPhase: Phase;
  /** |I0|/|I1| and |I2|/|I1| at the peak, for the record. */
  i0OverI1: number | null;
  i2OverI1: number | null;
  message: string;
}
