/**
 * The flat column layout of a stored SequenceResult, shared by the SQLite
 * table `sequence` and the InfluxDB measurement `sequence` (docs/storage.md),
 * so SQL and InfluxQL users read the same names. Nested nulls are kept
 * apart: `has_v`/`has_i` say whether v/i existed at all, a phasor is null when
 * its magnitude column is null, and a triple is null when its columns are.
 */
import type { AggregateWindow, PhasorOut, PhaseTriple, QuantityResult, SequenceResult, VoltageResult } from '../core/result.js';

export type ColumnKind = 'float' | 'integer' | 'boolean';

const QUANTITY_COLUMNS = ['zero_mag', 'zero_ang', 'pos_mag', 'pos_ang', 'neg_mag', 'neg_ang', 'u2', 'u0', 'rms_a', 'rms_b', 'rms_c', 'thd_a', 'thd_b', 'thd_c'];
const VOLTAGE_ONLY_COLUMNS = ['rms_ab', 'rms_bc', 'rms_ca', 'lvur', 'pvur'];

/** Column names in storage order; a row is a value array in this order. */
export const SEQUENCE_COLUMNS: readonly string[] = [
  'duration_ms',
  'freq',
  'flagged',
  'count',
  'has_v',
  'has_i',
  ...QUANTITY_COLUMNS.map((c) => `v_${c}`),
  ...VOLTAGE_ONLY_COLUMNS.map((c) => `v_${c}`),
  ...QUANTITY_COLUMNS.map((c) => `i_${c}`),
];

export const SEQUENCE_COLUMN_KINDS: readonly ColumnKind[] = SEQUENCE_COLUMNS.map((c) =>
  c === 'flagged' || c === 'has_v' || c === 'has_i' ? 'boolean' : c === 'count' ? 'integer' : 'float',
);

const FLAGGED = 2;
const COUNT = 3;
const HAS_V = 4;
const HAS_I = 5;
const V0 = 6;
const I0 = V0 + QUANTITY_COLUMNS.length + VOLTAGE_ONLY_COLUMNS.length;

/** A stored value: booleans are kept as 0/1 so the same row binds to SQLite directly. */
export type ColumnValue = number | null;

function putPhasor(row: ColumnValue[], k: number, p: PhasorOut | null): void {
  row[k] = p === null ? null : p[0];
  row[k + 1] = p === null ? null : p[1];
}

function putTriple(row: ColumnValue[], k: number, t: PhaseTriple | null): void {
  row[k] = t === null ? null : t.a;
  row[k + 1] = t === null ? null : t.b;
  row[k + 2] = t === null ? null : t.c;
}

function putQuantity(row: ColumnValue[], at: number, q: QuantityResult): void {
  putPhasor(row, at, q.zero);
  putPhasor(row, at + 2, q.pos);
  putPhasor(row, at + 4, q.neg);
  row[at + 6] = q.u2;
  row[at + 7] = q.u0;
  putTriple(row, at + 8, q.rms);
  putTriple(row, at + 11, q.thd);
}

/**
 * Writes the columns of `r` into `row` from index `offset` on (callers keep
 * one row and reuse it, so a write loop allocates nothing per result).
 */
export function sequenceToRow(r: SequenceResult, row: ColumnValue[], offset = 0): ColumnValue[] {
  row.fill(null, offset, offset + SEQUENCE_COLUMNS.length);
  row[offset] = r.durationMs;
  row[offset + 1] = r.freq;
  row[offset + FLAGGED] = r.flagged ? 1 : 0;
  row[offset + COUNT] = r.count;
  row[offset + HAS_V] = r.v === null ? 0 : 1;
  row[offset + HAS_I] = r.i === null ? 0 : 1;
  if (r.v !== null) {
    putQuantity(row, offset + V0, r.v);
    const ll = r.v.rmsLL;
    const at = offset + V0 + QUANTITY_COLUMNS.length;
    row[at] = ll === null ? null : ll.ab;
    row[at + 1] = ll === null ? null : ll.bc;
    row[at + 2] = ll === null ? null : ll.ca;
    row[at + 3] = r.v.lvur;
    row[at + 4] = r.v.pvur;
  }
  if (r.i !== null) putQuantity(row, offset + I0, r.i);
  return row;
}

export function newRow(): ColumnValue[] {
  return new Array<ColumnValue>(SEQUENCE_COLUMNS.length).fill(null);
}

/** Reads a column value; undefined (a field InfluxDB never saw) counts as null. */
function num(row: ArrayLike<unknown>, k: number): number | null {
  const x = row[k];
  return typeof x === 'number' ? x : null;
}

function flag(row: ArrayLike<unknown>, k: number): boolean {
  const x = row[k];
  return x === true || x === 1;
}

function phasorAt(row: ArrayLike<unknown>, k: number): PhasorOut | null {
  const mag = num(row, k);
  return mag === null ? null : [mag, num(row, k + 1)];
}

function tripleAt(row: ArrayLike<unknown>, k: number): PhaseTriple | null {
  const a = num(row, k);
  const b = num(row, k + 1);
  const c = num(row, k + 2);
  return a === null || b === null || c === null ? null : { a, b, c };
}

function quantityAt(row: ArrayLike<unknown>, at: number): QuantityResult {
  return {
    zero: phasorAt(row, at),
    pos: phasorAt(row, at + 2),
    neg: phasorAt(row, at + 4),
    u2: num(row, at + 6),
    u0: num(row, at + 7),
    rms: tripleAt(row, at + 8),
    thd: tripleAt(row, at + 11),
  };
}

function voltageAt(row: ArrayLike<unknown>, at: number): VoltageResult {
  const ll = at + QUANTITY_COLUMNS.length;
  const ab = num(row, ll);
  const bc = num(row, ll + 1);
  const ca = num(row, ll + 2);
  // Built in one literal (no spread of quantityAt) so every result has the same hidden class: reads of long ranges stay fast.
  return {
    zero: phasorAt(row, at),
    pos: phasorAt(row, at + 2),
    neg: phasorAt(row, at + 4),
    u2: num(row, at + 6),
    u0: num(row, at + 7),
    rms: tripleAt(row, at + 8),
    thd: tripleAt(row, at + 11),
    rmsLL: ab === null || bc === null || ca === null ? null : { ab, bc, ca },
    lvur: num(row, ll + 3),
    pvur: num(row, ll + 4),
  };
}

/** Rebuilds a SequenceResult from a row in SEQUENCE_COLUMNS order starting at `o`, with every field present. */
export function rowToSequence(feeder: string, window: AggregateWindow, ts: number, row: ArrayLike<unknown>, o = 0): SequenceResult {
  return {
    ts,
    feeder,
    window,
    durationMs: num(row, o) ?? 0,
    freq: num(row, o + 1),
    flagged: flag(row, o + FLAGGED),
    v: flag(row, o + HAS_V) ? voltageAt(row, o + V0) : null,
    i: flag(row, o + HAS_I) ? quantityAt(row, o + I0) : null,
    count: num(row, o + COUNT) ?? 0,
  };
}
