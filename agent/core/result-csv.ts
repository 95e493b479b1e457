/**
 * CSV form of result records: one row per result, a header that names each
 * column with its unit, values in the same precision as the JSON wire form.
 */
import type { LineTriple, PhaseTriple, PhasorOut, QuantityResult, SequenceResult, VoltageResult } from './result.js';
import { isoTime, roundForWire } from './result.js';

interface Column {
  readonly header: string;
  readonly get: (r: SequenceResult) => number | string | boolean | null;
}

const mag = (p: PhasorOut | null): number | null => (p === null ? null : p[0]);
const ang = (p: PhasorOut | null): number | null => (p === null ? null : p[1]);
const ph = (t: PhaseTriple | null, k: keyof PhaseTriple): number | null => (t === null ? null : t[k]);
const ll = (t: LineTriple | null, k: keyof LineTriple): number | null => (t === null ? null : t[k]);

function quantityColumns(prefix: 'v' | 'i', unit: 'V' | 'A', pick: (r: SequenceResult) => QuantityResult | null): Column[] {
  const cols: Column[] = [];
  for (const k of ['a', 'b', 'c'] as const) cols.push({ header: `${prefix}_rms_${k}_${unit}`, get: (r) => ph(pick(r)?.rms ?? null, k) });
  for (const s of ['zero', 'pos', 'neg'] as const) {
    cols.push({ header: `${prefix}_${s}_mag_${unit}`, get: (r) => mag(pick(r)?.[s] ?? null) });
    cols.push({ header: `${prefix}_${s}_ang_deg`, get: (r) => ang(pick(r)?.[s] ?? null) });
  }
  cols.push({ header: `${prefix}_u2_pct`, get: (r) => pick(r)?.u2 ?? null });
  cols.push({ header: `${prefix}_u0_pct`, get: (r) => pick(r)?.u0 ?? null });
  for (const k of ['a', 'b', 'c'] as const) cols.push({ header: `${prefix}_thd_${k}_pct`, get: (r) => ph(pick(r)?.thd ?? null, k) });
  return cols;
}

const voltage = (r: SequenceResult): VoltageResult | null => r.v;

export const RESULT_COLUMNS: readonly Column[] = [
  { header: 'ts_utc', get: (r) => isoTime(r.ts) },
  { header: 'feeder', get: (r) => r.feeder },
  { header: 'window', get: (r) => r.window },
  { header: 'duration_ms', get: (r) => r.durationMs },
  { header: 'freq_Hz', get: (r) => r.freq },
  { header: 'flagged', get: (r) => r.flagged },
  { header: 'count', get: (r) => r.count },
  ...quantityColumns('v', 'V', voltage),
  ...(['ab', 'bc', 'ca'] as const).map((k): Column => ({ header: `v_ll_${k}_V`, get: (r) => ll(voltage(r)?.rmsLL ?? null, k) })),
  { header: 'v_nema_lvur_pct', get: (r) => voltage(r)?.lvur ?? null },
  { header: 'v_ieee_pvur_pct', get: (r) => voltage(r)?.pvur ?? null },
  ...quantityColumns('i', 'A', (r) => r.i),
];

export function resultCsvHeader(): string {
  return RESULT_COLUMNS.map((c) => c.header).join(',');
}

function cell(v: number | string | boolean | null): string {
  if (v === null) return '';
  if (typeof v === 'number') return String(roundForWire(v));
  if (typeof v === 'boolean') return v ? '1' : '0';
  return /[",\n\r]/.test(v) ? `"${v.replace(/"/g, '""')}"` : v;
}

export function resultCsvRow(r: SequenceResult): string {
  let s = '';
  for (let k = 0; k < RESULT_COLUMNS.length; k++) {
    if (k > 0) s += ',';
    s += cell(RESULT_COLUMNS[k]!.get(r));
  }
  return s;
}
