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

const scratch = newRow();
/** Per column, what goes before its value: "name=", with the separating comma for every column but the first present. */
const FIELD_PREFIX = SEQUENCE_COLUMNS.map((c) => asciiBytes(`,${c}=`));
const NEWLINE = 0x0a;

function asciiBytes(s: string): Uint8Array {
  const out = new Uint8Array(s.length);
  for (let j = 0; j < s.length; j++) out[j] = s.charCodeAt(j);
  return out;
}

/**
 * The lines of one write request, encoded straight into bytes. Numbers,
 * field names and seqmon's tag values are ASCII and are copied character by
 * character, so a batch of thousands of results builds no string per line
 * and needs no UTF-8 pass over the body: building ~45 field strings per line
 * and joining them was most of the store's own cost, and on a small machine
 * that cost is taken from the server's share of the CPU.
 */
export class LineBatch {
  private bytes: Uint8Array<ArrayBuffer>;
  private used = 0;
  /** End (exclusive) of each line; the next line starts one byte later, after the newline. */
  private readonly ends: number[] = [];

  constructor(capacity = 64 * 1024) {
    this.bytes = new Uint8Array(Math.max(256, capacity));
  }

  /** Number of lines. */
  get count(): number {
    return this.ends.length;
  }

  /** Bytes of the body. */
  get byteLength(): number {
    return this.used;
  }

  /** The request body: the lines separated by newlines. Valid until the next add. */
  body(): Uint8Array<ArrayBuffer> {
    return this.bytes.subarray(0, this.used);
  }

  /** The lines one by one (for the spool). */
  lines(): string[] {
    const out: string[] = [];
    const view = Buffer.from(this.bytes.buffer, this.bytes.byteOffset, this.used);
    let start = 0;
    for (const end of this.ends) {
      out.push(view.toString('utf8', start, end));
      start = end + 1;
    }
    return out;
  }

  /** One line per result (docs/storage.md): measurement, feeder and window tags, the non-null columns, ms time. */
  addSequence(r: SequenceResult): void {
    this.beginLine();
    this.text(MEASUREMENT.sequence);
    this.text(',feeder=');
    this.text(escapeTag(r.feeder));
    this.text(',window=');
    this.text(escapeTag(r.window));
    const row = sequenceToRow(r, scratch);
    let first = true;
    for (let k = 0; k < SEQUENCE_COLUMNS.length; k++) {
      const x = row[k];
      if (x === null) continue;
      this.prefix(FIELD_PREFIX[k]!, first);
      first = false;
      const kind = SEQUENCE_COLUMN_KINDS[k];
      if (kind === 'boolean') this.text(x === 1 ? 'true' : 'false');
      else if (kind === 'integer') {
        this.text(String(x));
        this.text('i');
      } else this.text(float(x));
    }
    this.text(' ');
    this.text(String(Math.round(r.ts)));
    this.ends.push(this.used);
  }

  /** A line given as text (alarms and events: rare, and their messages may hold any character). */
  addText(line: string): void {
    this.beginLine();
    this.text(line);
    this.ends.push(this.used);
  }

  private beginLine(): void {
    if (this.ends.length > 0) {
      this.ensure(1);
      this.bytes[this.used++] = NEWLINE;
    }
  }

  /** "name=" after a comma; the first field of a line follows a space instead. */
  private prefix(p: Uint8Array, first: boolean): void {
    this.ensure(p.length + 1);
    if (first) this.bytes[this.used++] = 0x20;
    for (let j = first ? 1 : 0; j < p.length; j++) this.bytes[this.used++] = p[j]!;
  }

  private text(s: string): void {
    const n = s.length;
    this.ensure(n);
    const b = this.bytes;
    let at = this.used;
    for (let j = 0; j < n; j++) {
      const c = s.charCodeAt(j);
      if (c >= 0x80) {
        // Not ASCII: let the UTF-8 encoder write the rest of the string.
        this.used = at;
        this.utf8(s.slice(j));
        return;
      }
      b[at++] = c;
    }
    this.used = at;
  }

  private utf8(s: string): void {
    this.ensure(Buffer.byteLength(s, 'utf8'));
    this.used += Buffer.from(this.bytes.buffer, this.bytes.byteOffset, this.bytes.byteLength).write(s, this.used, 'utf8');
  }

  private ensure(n: number): void {
    if (this.used + n <= this.bytes.length) return;
    const grown = new Uint8Array(Math.max(this.used + n, 2 * this.bytes.length));
    grown.set(this.bytes.subarray(0, this.used));
    this.bytes = grown;
  }
}

/** A float field; JS shortest round-trip form (exponents included) parses back to the same double in InfluxDB. */
function float(x: number): string {
  return String(x);
}

/** The line of one result, as text (the store writes through LineBatch; this is the same encoding). */
export function sequenceLine(r: SequenceResult): string {
  const batch = new LineBatch(1024);
  batch.addSequence(r);
  return batch.lines()[0]!;
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
