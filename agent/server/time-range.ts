/**
 * Query-string time ranges: `from`/`to` as ISO-8601 or epoch milliseconds
 * (shared/ARCHITECTURE.md conventions), defaults relative to `now`, and the
 * aggregate window chosen from the span when the caller names none.
 */
import { AgentError } from '../core/errors.js';
import type { AggregateWindow } from '../core/result.js';
import type { TimeRange } from '../core/ports.js';

export const HOUR_MS = 3_600_000;
export const DAY_MS = 24 * HOUR_MS;

export const WINDOW_MS: Readonly<Record<AggregateWindow, number>> = Object.freeze({
  '3s': 3_000,
  '10min': 600_000,
  '2h': 7_200_000,
});

/** Spans up to 2 days read 3-s values, up to 60 days 10-min values, longer spans 2-h values (a few thousand points each way). */
export const AUTO_WINDOW_LIMITS = Object.freeze({ threeSecondMaxMs: 2 * DAY_MS, tenMinuteMaxMs: 60 * DAY_MS });

/** Largest number of intervals one trend request may cover: a 7-day 3-s trend (201,600) fits, a month of 3-s values does not. */
export const MAX_TREND_POINTS = 250_000;

function badParameter(name: string, message: string): AgentError {
  return new AgentError('API_BAD_PARAMETER', `${name}: ${message}`, { details: { parameter: name } });
}

/** Parses one instant; `name` goes into the error so the caller knows which parameter to fix. */
export function parseInstant(name: string, value: string | number | undefined): number | null {
  if (value === undefined || value === '') return null;
  if (typeof value === 'number') {
    if (!Number.isFinite(value)) throw badParameter(name, 'must be an ISO-8601 time or epoch milliseconds');
    return value;
  }
  const text = value.trim();
  let ms: number;
  if (/^-?\d+(\.\d+)?$/.test(text)) ms = Number(text);
  else if (/^\d{4}-\d{2}-\d{2}(T[\d:.]+(Z|[+-]\d{2}:?\d{2})?)?$/.test(text)) ms = Date.parse(text);
  else ms = Number.NaN;
  if (!Number.isFinite(ms)) {
    throw badParameter(name, `"${text.slice(0, 40)}" is not an ISO-8601 time (2026-03-02T14:03:07.250Z) or epoch milliseconds`);
  }
  // Year 1970..9999: anything else is a typo, not a time with data.
  if (ms < 0 || ms > 253_402_300_799_999) throw badParameter(name, 'is outside the years 1970-9999');
  return ms;
}

export function parseRange(query: { from?: string | number; to?: string | number }, now: number, defaultSpanMs: number): TimeRange {
  const to = parseInstant('to', query.to) ?? now;
  const from = parseInstant('from', query.from) ?? to - defaultSpanMs;
  if (!(from < to)) throw badParameter('from', 'must be earlier than to');
  return { from, to };
}

export function chooseWindow(range: TimeRange, requested: AggregateWindow | undefined): AggregateWindow {
  const span = range.to - range.from;
  const window: AggregateWindow =
    requested ?? (span <= AUTO_WINDOW_LIMITS.threeSecondMaxMs ? '3s' : span <= AUTO_WINDOW_LIMITS.tenMinuteMaxMs ? '10min' : '2h');
  const points = span / WINDOW_MS[window];
  if (points > MAX_TREND_POINTS) {
    throw badParameter('window', `${window} over this range would return about ${Math.round(points)} values (at most ${MAX_TREND_POINTS}); use a coarser window or a shorter range`);
  }
  return window;
}
