/**
 * CSV export of a trend for load-balancing work (RFC 4180 layout, one header
 * row with units in the column names, preceded by a caution comment line).
 */
import type { SequenceResult } from '../core/result.js';
import { isoTime } from '../core/result.js';
import { CSV_CAUTION } from './cautions.js';
import { DECIMALS, TREND_NUMERIC_COLUMNS, fixed } from './trend-columns.js';

const HEADER_NAMES: Record<string, string> = {
  ia: 'i_a_A', ib: 'i_b_A', ic: 'i_c_A',
  va: 'v_a_V', vb: 'v_b_V', vc: 'v_c_V',
  v1: 'v_pos_V', v2: 'v_neg_V', v0: 'v_zero_V',
  i1: 'i_pos_A', i2: 'i_neg_A', i0: 'i_zero_A',
  vU2: 'v_u2_pct', vU0: 'v_u0_pct', iU2: 'i_u2_pct', iU0: 'i_u0_pct',
  freq: 'freq_Hz',
};

export function csvHeader(): string {
  return ['ts_utc', ...TREND_NUMERIC_COLUMNS.map((c) => HEADER_NAMES[c.key]), 'flagged'].join(',');
}

export function csvPreamble(feeder: string, window: string, from: number, to: number): string {
  return `# ${CSV_CAUTION}\n# feeder=${feeder} window=${window} from=${isoTime(from)} to=${isoTime(to)} (phase values are RMS, voltages line-to-neutral)\n`;
}

export function csvRow(r: SequenceResult): string {
  let line = isoTime(r.ts);
  for (const c of TREND_NUMERIC_COLUMNS) {
    const x = c.pick(r);
    line += x === null ? ',' : `,${fixed(x, DECIMALS[c.unit])}`;
  }
  return `${line},${r.flagged ? 1 : 0}\n`;
}

export function trendCsv(feeder: string, window: string, from: number, to: number, results: readonly SequenceResult[]): string {
  const parts: string[] = [csvPreamble(feeder, window, from, to), csvHeader(), '\n'];
  for (const r of results) parts.push(csvRow(r));
  return parts.join('');
}
