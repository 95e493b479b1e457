/**
 * Names other InfluxDB tools rely on (docs/storage.md): one retention policy
 * per aggregation window plus one for alarm transitions and events, and the
 * measurements written into them.
 */
import type { AggregateWindow } from '../../core/result.js';

export const RETENTION_POLICY: Readonly<Record<AggregateWindow | 'records', string>> = Object.freeze({
  '3s': 'trend_3s',
  '10min': 'trend_10min',
  '2h': 'trend_2h',
  records: 'records',
});

export const MEASUREMENT = Object.freeze({ sequence: 'sequence', alarm: 'alarm', event: 'event' });
