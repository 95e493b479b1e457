/**
 * InfluxDB 1.x line protocol for seqmon's records (docs/storage.md).
 * Timestamps are epoch milliseconds and every write says precision=ms: a
 * bare number is otherwise read as nanoseconds and the point lands in 1970.
 * Null values are left out of the field set (InfluxDB has no null field and
 * returns a missing field as null).
 */
import type { AlarmTransition, DisturbanceEvent } from '../../core/detect/types.js';
import type { SequenceResult } from '../../core/result.js';
import { SEQUENCE_COLUMNS, SEQUENCE_COLUMN_KINDS, newRow, sequenceToRow } from '../sequence-columns.js';
import { MEASUREMENT } from './influx-schema.js';

const TAG_SPECIAL = /[,= \\]/;

/** Tag keys/values: backslash-escape comma, equals sign and space (line protocol reference, "Special characters"). */
export function escapeTag(s: string): string {
  // Feeder ids, windows, conditions and fault types never need it; test before building a new string.
  return TAG_SPECIAL.test(s) ? s.replace(/[,= \\]/g, (c) => `\\${c}`) : s;
}

/** String field values: escape double quote and backslash. */
export function quoteField(s: string): string {
  return `"${s.replace(/["\\]/g, (c) => `\\${c}`)}"`;
}

/** A float field; JS shortest round-trip form (exponents included) parses back to the same double in InfluxDB. */
function float(x: number): string {
  return String(x);
}

const scratch = newRow();
const parts: string[] = [];
const FIELD_PREFIX = SEQUENCE_COLUMNS.map((c) => `${c}=`);

/**
 * One line per result. Fields are gathered in a reused array and joined once:
 * a flat string per line, where `+=` would leave a rope of ~80 pieces that
 * costs more to flatten for the request body than it took to build.
 */
export function sequenceLine(r: SequenceResult): string {
  const row = sequenceToRow(r, scratch);
  parts.length = 0;
  for (let k = 0; k < SEQUENCE_COLUMNS.length; k++) {
    const x = row[k];
    if (x === null) continue;
    const kind = SEQUENCE_COLUMN_KINDS[k];
    parts.push(FIELD_PREFIX[k] + (kind === 'boolean' ? (x === 1 ? 'true' : 'false') : kind === 'integer' ? `${x}i` : float(x)));
  }
  return `${MEASUREMENT.sequence},feeder=${escapeTag(r.feeder)},window=${escapeTag(r.window)} ${parts.join(',')} ${Math.round(r.ts)}`;
}

function nullable(name: string, x: number | string | null): string {
  if (x === null) return '';
  return typeof x === 'string' ? `,${name}=${quoteField(x)}` : `,${name}=${float(x)}`;
}

export function alarmLine(a: AlarmTransition): string {
  return (
    `${MEASUREMENT.alarm},condition=${escapeTag(a.condition)},feeder=${escapeTag(a.feeder)} ` +
    `state=${quoteField(a.state)},level=${quoteField(a.level)}${nullable('value', a.value)}${nullable('limit', a.limit)}` +
    `${nullable('phase', a.phase)},message=${quoteField(a.message)} ${Math.round(a.ts)}`
  );
}

export function eventLine(e: DisturbanceEvent): string {
  return (
    `${MEASUREMENT.event},feeder=${escapeTag(e.feeder)},type=${escapeTag(e.type)} ` +
    `duration_ms=${float(e.durationMs)},peak_current=${float(e.peakCurrent)},peak_phase=${quoteField(e.peakPhase)}` +
    `${nullable('i0_over_i1', e.i0OverI1)}${nullable('i2_over_i1', e.i2OverI1)},message=${quoteField(e.message)} ${Math.round(e.ts)}`
  );
}
