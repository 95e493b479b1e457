/**
 * A two-level limit alarm (warning and alarm) for one condition, such as
 * voltage u2 against 2 % / 3 %. Each level runs its own pickup/dropout timer
 * (delay-timer.ts) with hysteresis: a level picks up when the value stays
 * above its limit for pickupMs and clears only when the value stays below
 * (limit − hysteresis) for dropoutMs.
 *
 * What is published is the condition's *current level*, one retained message
 * per condition (shared/ARCHITECTURE.md, "Outputs"), so the latest transition
 * always describes the present state:
 *   - normal → warning:   raised / warning
 *   - warning → alarm:    raised / alarm    (escalation; the warning is subsumed, not cleared separately)
 *   - alarm → warning:    raised / warning  (de-escalation; the condition is still raised, at the lower level)
 *   - warning or alarm → normal: cleared / <the level that was raised>
 * A step therefore produces at most one change. With pickup and dropout
 * delays equal for both levels and warning ≤ alarm, the warning level always
 * picks up no later than the alarm level and clears no earlier.
 */
import type { DelayState } from './delay-timer.js';
import { DELAY_NORMAL, DELAY_RAISED, isRaised, stepDelay } from './delay-timer.js';
import type { LimitSettings } from './settings.js';
import type { AlarmLevel, AlarmState } from './types.js';

export interface LimitAlarmState {
  readonly warning: DelayState;
  readonly alarm: DelayState;
}

export interface LimitChange {
  readonly state: AlarmState;
  readonly level: AlarmLevel;
  /** The limit of that level (the value must have crossed limit − hysteresis to clear). */
  readonly limit: number;
}

export interface LimitStep {
  readonly state: LimitAlarmState;
  /** The change of the published level, or null. */
  readonly change: LimitChange | null;
}

export const LIMIT_NORMAL: LimitAlarmState = Object.freeze({ warning: DELAY_NORMAL, alarm: DELAY_NORMAL });

/** The state after a restart when the store says the condition is raised at `level`. */
export function restoredLimitState(level: AlarmLevel): LimitAlarmState {
  return level === 'alarm' ? { warning: DELAY_RAISED, alarm: DELAY_RAISED } : { warning: DELAY_RAISED, alarm: DELAY_NORMAL };
}

/** The level that is published for this state: the highest raised level, or null when neither is. */
export function publishedLevel(s: LimitAlarmState): AlarmLevel | null {
  if (isRaised(s.alarm)) return 'alarm';
  if (isRaised(s.warning)) return 'warning';
  return null;
}

/**
 * One step with the value observed at `now` (data time, epoch ms).
 * A null or non-finite value means "not observable" (no voltage channel,
 * current below its supervision level): the state is held, timers included,
 * and it does not count as normal.
 * Limits compare strictly: a value exactly at the limit neither picks up nor, at limit − hysteresis, drops out.
 */
export function stepLimitAlarm(cfg: LimitSettings, s: LimitAlarmState, value: number | null, now: number): LimitStep {
  if (value === null || !Number.isFinite(value)) return { state: s, change: null };
  const warning = stepDelay(s.warning, value > cfg.warning, value < cfg.warning - cfg.hysteresis, now, cfg);
  const alarm = stepDelay(s.alarm, value > cfg.alarm, value < cfg.alarm - cfg.hysteresis, now, cfg);
  if (warning === s.warning && alarm === s.alarm) return { state: s, change: null };
  const next: LimitAlarmState = { warning, alarm };
  const before = publishedLevel(s);
  const after = publishedLevel(next);
  if (before === after) return { state: next, change: null };
  if (after === null) return { state: next, change: { state: 'cleared', level: before!, limit: limitOf(cfg, before!) } };
  return { state: next, change: { state: 'raised', level: after, limit: limitOf(cfg, after) } };
}

function limitOf(cfg: LimitSettings, level: AlarmLevel): number {
  return level === 'alarm' ? cfg.alarm : cfg.warning;
}
