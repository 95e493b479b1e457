/** JSON forms of alarms and events for the API (ISO times, a caution where one applies). */
import type { AlarmTransition, DisturbanceEvent } from '../core/detect/types.js';
import { isoTime } from '../core/result.js';
import { SWITCHING_CAUTION, cautionFor } from './cautions.js';

export function alarmToWire(t: AlarmTransition): Record<string, unknown> {
  return {
    ts: isoTime(t.ts),
    feeder: t.feeder,
    condition: t.condition,
    state: t.state,
    level: t.level,
    value: t.value,
    limit: t.limit,
    phase: t.phase,
    message: t.message,
    caution: cautionFor(t.condition),
  };
}

export function eventToWire(e: DisturbanceEvent): Record<string, unknown> {
  return {
    ts: isoTime(e.ts),
    feeder: e.feeder,
    type: e.type,
    durationMs: e.durationMs,
    peakCurrent: e.peakCurrent,
    peakPhase: e.peakPhase,
    i0OverI1: e.i0OverI1,
    i2OverI1: e.i2OverI1,
    message: e.message,
    caution: SWITCHING_CAUTION,
  };
}
