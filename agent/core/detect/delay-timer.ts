/**
 * Pickup/dropout timing for one condition: the state a protection relay's
 * definite-time element goes through (IEEE C37.2 device 62, time-delay
 * relay; common practice). A condition must persist for the pickup delay
 * before it is raised and be gone for the dropout delay before it clears, so
 * a value hovering at a limit cannot make the alarm chatter.
 *
 * The step is pure: it takes the state and returns the next one, allocating
 * only when the phase changes. Time is the data time the caller passes in.
 */

/** normal → pending → raised → clearing → normal; `pending` and `clearing` are the timed states. */
export type DelayPhase = 'normal' | 'pending' | 'raised' | 'clearing';

export interface DelayState {
  readonly phase: DelayPhase;
  /** When the current phase was entered (start of the pickup or dropout timer), epoch ms; -Infinity for the initial state. */
  readonly since: number;
}

export interface DelayTiming {
  /** The condition must hold this long (ms) before it is raised; 0 raises on the first observation. */
  readonly pickupMs: number;
  /** The condition must be gone this long (ms) before it clears; 0 clears on the first observation. */
  readonly dropoutMs: number;
}

export const DELAY_NORMAL: DelayState = Object.freeze({ phase: 'normal', since: Number.NEGATIVE_INFINITY });

/** A raised state restored after a restart: it was raised before, at an unknown time. */
export const DELAY_RAISED: DelayState = Object.freeze({ phase: 'raised', since: Number.NEGATIVE_INFINITY });

export function isRaised(s: DelayState): boolean {
  return s.phase === 'raised' || s.phase === 'clearing';
}

/**
 * One step.
 * - `exceeded`: the condition is present (for a limit: value above the limit). Looked at in `normal` and `pending`.
 * - `receded`: the condition is clearly gone (for a limit: value below limit − hysteresis). Looked at in `raised` and `clearing`.
 * A value between the two (inside the hysteresis band) therefore resets a pending pickup but keeps a raised condition raised.
 * An unobservable input is not a step: the caller keeps the state as it is.
 * A pickup completes on the first observation at or after since + pickupMs (exact to the ms of the data); likewise dropout.
 */
export function stepDelay(s: DelayState, exceeded: boolean, receded: boolean, now: number, t: DelayTiming): DelayState {
  switch (s.phase) {
    case 'normal':
      if (!exceeded) return s;
      return t.pickupMs <= 0 ? { phase: 'raised', since: now } : { phase: 'pending', since: now };
    case 'pending':
      if (!exceeded) return DELAY_NORMAL;
      return now - s.since >= t.pickupMs ? { phase: 'raised', since: now } : s;
    case 'raised':
      if (!receded) return s;
      return t.dropoutMs <= 0 ? DELAY_NORMAL : { phase: 'clearing', since: now };
    case 'clearing':
      if (!receded) return { phase: 'raised', since: now };
      return now - s.since >= t.dropoutMs ? DELAY_NORMAL : s;
  }
}
