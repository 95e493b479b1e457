/**
 * Converts the configuration's retention durations (InfluxDB syntax: 90d, 52w,
 * 720h, INF) into days for the stores.
 */
import { AgentError } from '../core/errors.js';

/** "Keep forever" for a store that needs a number: a century is longer than any feeder. */
const FOREVER_DAYS = 36_500;

export function durationToDays(text: string, path: string): number {
  if (/^inf$/i.test(text)) return FOREVER_DAYS;
  const m = /^(\d+(?:\.\d+)?)(h|d|w)$/.exec(text);
  if (m === null) throw new AgentError('CFG_INVALID', `${path}: expected a duration such as 90d, 52w, 720h or INF, found "${text}"`, { details: { path } });
  const n = Number(m[1]);
  return m[2] === 'h' ? n / 24 : m[2] === 'w' ? n * 7 : n;
}
