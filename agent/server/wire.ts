/** JSON forms of alarms and events for the API: the MQTT payloads plus the caution that applies. */
import type { AlarmTransition, DisturbanceEvent } from '../core/detect/types.js';
import { alarmToWire as alarmPayload, eventToWire as eventPayload } from '../core/detect/wire.js';
import { SWITCHING_CAUTION, cautionFor } from './cautions.js';

export function alarmToWire(t: AlarmTransition): Record<string, unknown> {
  return { ...alarmPayload(t), caution: cautionFor(t.condition) };
}

export function eventToWire(e: DisturbanceEvent): Record<string, unknown> {
  return { ...eventPayload(e), caution: SWITCHING_CAUTION };
}
