/**
 * How long each kind of record is kept. Defaults follow common practice for
 * power-quality trending: 3-s values for about a month of troubleshooting,
 * 10-min values for the multi-year reviews that EN 50160 / IEC 61000-4-30
 * weekly assessments are drawn from, 2-h values for a decade of planning.
 */
import { AgentError } from '../core/errors.js';
import type { AggregateWindow } from '../core/result.js';

export interface RetentionDays {
  readonly '3s': number;
  readonly '10min': number;
  readonly '2h': number;
  /** Alarm transitions and disturbance events. */
  readonly records: number;
}

export const DEFAULT_RETENTION: RetentionDays = Object.freeze({ '3s': 35, '10min': 1825, '2h': 3650, records: 3650 });

export const DAY_MS = 86_400_000;

/** Merges overrides over the defaults; each must be at least one hour (InfluxDB's smallest retention policy). */
export function resolveRetention(overrides: Partial<RetentionDays> | undefined): RetentionDays {
  const out = { ...DEFAULT_RETENTION, ...(overrides ?? {}) };
  for (const key of ['3s', '10min', '2h', 'records'] as const) {
    const d = out[key];
    if (typeof d !== 'number' || !Number.isFinite(d) || d < 1 / 24) {
      throw new AgentError('STORE_OPEN_FAILED', `retention.${key} must be a number of days >= 1/24 (one hour), found ${String(d)}`, {
        details: { field: `retention.${key}` },
      });
    }
  }
  return Object.freeze(out);
}

export function retentionMs(r: RetentionDays, window: AggregateWindow | 'records'): number {
  return r[window] * DAY_MS;
}
