/** One ordering for query answers of every store: oldest first, ties broken by the record's key. */
import type { AlarmTransition, DisturbanceEvent } from '../core/detect/types.js';

function cmp(a: string, b: string): number {
  return a < b ? -1 : a > b ? 1 : 0;
}

export function compareAlarms(x: AlarmTransition, y: AlarmTransition): number {
  return x.ts - y.ts || cmp(x.feeder, y.feeder) || cmp(x.condition, y.condition);
}

export function compareEvents(x: DisturbanceEvent, y: DisturbanceEvent): number {
  return x.ts - y.ts || cmp(x.feeder, y.feeder) || cmp(x.type, y.type);
}
