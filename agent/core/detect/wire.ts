/**
 * Wire forms of alarm transitions and disturbance events: the exact payloads
 * of `<out>/<feeder>/alarm/<condition>` and `<out>/<feeder>/event`
 * (shared ARCHITECTURE, "Outputs"). The HTTP API adds its caution field to
 * the same objects.
 */
import { isoTime, roundForWire } from '../result.js';
import type { AlarmTransition, DisturbanceEvent } from './types.js';

const r = (x: number | null): number | null => (x === null ? null : roundForWire(x));

export function alarmToWire(t: AlarmTransition): Record<string, unknown> {
  return {
    ts: isoTime(t.ts),
    feeder: t.feeder,
    condition: t.condition,
    state: t.state,
    level: t.level,
    value: r(t.value),
    limit: r(t.limit),
    phase: t.phase,
    message: t.message,
  };
}

export function eventToWire(e: DisturbanceEvent): Record<string, unknown> {
  return {
    ts: isoTime(e.ts),
    feeder: e.feeder,
    type: e.type,
    durationMs: roundForWire(e.durationMs),
    peakCurrent: roundForWire(e.peakCurrent),
    peakPhase: e.peakPhase,
    i0OverI1: r(e.i0OverI1),
    i2OverI1: r(e.i2OverI1),
    message: e.message,
  };
}
