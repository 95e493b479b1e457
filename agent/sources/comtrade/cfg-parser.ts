/**
 * Reads a COMTRADE configuration (.cfg) file: IEEE C37.111-1991, -1999
 * (= IEC 60255-24:2001) and -2013 (= IEC 60255-24:2013). Line layout per
 * shared/CHECKS.md §8.2. The reader is strict about what the data depend on
 * (counts, scaling factors, rates, times, the data format) and lenient where
 * the standard's revisions differ or the layout is uncertain: 1991 analog
 * lines without primary/secondary/PS, 1991 three-field status lines, missing
 * channel-count suffix letters, a missing timemult line, missing 2013 time
 * lines. Each leniency is recorded in `warnings`.
 */
import { invalid, unsupported } from './errors.js';
import { parseComtradeDateTime, parseUtcOffset } from './time.js';
import {
  COMTRADE_REVISIONS,
  DAT_FORMATS,
  type AnalogChannel,
  type ComtradeConfig,
  type ComtradeRevision,
  type ComtradeTime,
  type DatFormat,
  type SampleRate,
  type StatusChannel,
} from './types.js';

/** Upper bounds that keep a corrupt header from asking for absurd allocations (far above any real recorder). */
const MAX_CHANNELS = 100_000;
const MAX_RATES = 1_000;
/** Samples per second; the fastest recorders sample at a few MHz. */
const MAX_RATE_HZ = 100_000_000;

class Lines {
  private pos = 0;
  constructor(readonly file: string, private readonly lines: readonly string[]) {}
  /** 1-based number of the next line. */
  get lineNo(): number {
    return this.pos + 1;
  }
  get done(): boolean {
    return this.pos >= this.lines.length;
  }
  peek(): string | undefined {
    return this.lines[this.pos];
  }
  next(what: string): string {
    const line = this.lines[this.pos];
    if (line === undefined) throw invalid({ file: this.file, line: this.pos + 1, field: what }, `the file ends before the ${what} line`);
    this.pos++;
    return line;
  }
}

/** Splits a CFG line into trimmed fields (readers must tolerate spaces around numbers, CHECKS.md §8.1). */
function fields(line: string): string[] {
  return line.split(',').map((f) => f.trim());
}

/** Splits text into lines on CR/LF, LF or CR and drops trailing blank lines. */
export function splitLines(text: string): string[] {
  const lines = text.split(/\r\n|\n|\r/);
  while (lines.length > 0 && lines[lines.length - 1]!.trim() === '') lines.pop();
  return lines;
}

interface Ctx {
  readonly file: string;
  readonly line: number;
}

function num(ctx: Ctx, field: string, text: string | undefined): number {
  if (text === undefined || text === '') throw invalid({ file: ctx.file, line: ctx.line, field }, `${field} is empty; a number is required`);
  const x = Number(text);
  if (!Number.isFinite(x)) throw invalid({ file: ctx.file, line: ctx.line, field }, `${field} "${text}" is not a number`);
  return x;
}

function optNum(ctx: Ctx, field: string, text: string | undefined): number | null {
  if (text === undefined || text === '') return null;
  return num(ctx, field, text);
}

function int(ctx: Ctx, field: string, text: string | undefined, min: number, max: number): number {
  const x = num(ctx, field, text);
  if (!Number.isInteger(x) || x < min || x > max) throw invalid({ file: ctx.file, line: ctx.line, field }, `${field} "${text}" must be a whole number in ${min}..${max}`);
  return x;
}

export interface CfgOptions {
  /** Name used in messages (the path as the user gave it). */
  readonly fileName: string;
}

export function parseCfg(text: string, options: CfgOptions): ComtradeConfig {
  const file = options.fileName;
  const warnings: string[] = [];
  const src = new Lines(file, splitLines(text.charCodeAt(0) === 0xfeff ? text.slice(1) : text));

  // Line 1: station_name,rec_dev_id,rev_year. rev_year is absent in 1991 files.
  let ctx: Ctx = { file, line: src.lineNo };
  const l1 = fields(src.next('station_name,rec_dev_id,rev_year'));
  if (l1.length > 3) throw invalid({ file, line: ctx.line, field: 'rev_year' }, `line 1 has ${l1.length} fields; expected station_name,rec_dev_id,rev_year`);
  const stationName = l1[0] ?? '';
  const deviceId = l1[1] ?? '';
  let revision: ComtradeRevision;
  const rev = l1[2];
  if (rev === undefined || rev === '') {
    revision = 1991;
  } else {
    const y = Number(rev);
    if (!(COMTRADE_REVISIONS as readonly number[]).includes(y)) {
      throw unsupported({ file, line: ctx.line, field: 'rev_year' }, `revision year "${rev}" is not one of 1991, 1999, 2013`);
    }
    revision = y as ComtradeRevision;
  }

  // Line 2: TT,##A,##D.
  ctx = { file, line: src.lineNo };
  const l2 = fields(src.next('TT,##A,##D'));
  if (l2.length !== 3) throw invalid({ file, line: ctx.line, field: 'TT' }, `expected TT,##A,##D (e.g. 7,4A,3D), found ${l2.length} field(s)`);
  const total = int(ctx, 'TT', l2[0], 0, MAX_CHANNELS);
  const nA = countWithSuffix(ctx, l2[1]!, 'A', '##A', warnings);
  const nD = countWithSuffix(ctx, l2[2]!, 'D', '##D', warnings);
  if (nA + nD !== total) throw invalid({ file, line: ctx.line, field: 'TT' }, `TT = ${total} but ##A + ##D = ${nA} + ${nD} = ${nA + nD}`);

  const analog: AnalogChannel[] = [];
  let shortAnalog = 0;
  for (let k = 1; k <= nA; k++) {
    ctx = { file, line: src.lineNo };
    const f = fields(src.next(`analog channel ${k}`));
    // 1999/2013: 13 fields; 1991: 10 fields (no primary, secondary, PS).
    if (f.length !== 13 && f.length !== 10) {
      throw invalid({ file, line: ctx.line, field: 'An' }, `analog channel line ${k} has ${f.length} fields; expected 13 (An,ch_id,ph,ccbm,uu,a,b,skew,min,max,primary,secondary,PS) or 10 in 1991 files`);
    }
    const index = int(ctx, 'An', f[0], 1, MAX_CHANNELS);
    if (index !== k) warnings.push(`${file}:${ctx.line}: analog channel number ${index} where ${k} was expected; channels are taken in file order`);
    const a = num(ctx, 'a', f[5]);
    const b = optNum(ctx, 'b', f[6]) ?? 0;
    const skewUs = optNum(ctx, 'skew', f[7]) ?? 0;
    const min = optNum(ctx, 'min', f[8]);
    const max = optNum(ctx, 'max', f[9]);
    if (min !== null && max !== null && min > max) throw invalid({ file, line: ctx.line, field: 'min' }, `min ${min} is greater than max ${max}`);
    let primary: number | null = null, secondary: number | null = null, ps: 'P' | 'S' | null = null;
    if (f.length === 13) {
      primary = optNum(ctx, 'primary', f[10]);
      secondary = optNum(ctx, 'secondary', f[11]);
      const psText = f[12]!.toUpperCase();
      if (psText === 'P' || psText === 'S') ps = psText;
      else if (psText !== '') throw invalid({ file, line: ctx.line, field: 'PS' }, `PS "${f[12]}" must be P or S`);
      if (ps === 'S') {
        if (primary === null || secondary === null) throw invalid({ file, line: ctx.line, field: 'primary' }, 'PS is S but primary or secondary is empty, so secondary values cannot be converted to primary');
        if (!(primary > 0) || !(secondary > 0)) throw invalid({ file, line: ctx.line, field: primary > 0 ? 'secondary' : 'primary' }, `primary ${primary} and secondary ${secondary} must both be positive`);
      }
    } else {
      shortAnalog++;
    }
    analog.push({ index, id: f[1]!, phase: f[2]!, circuit: f[3]!, unit: f[4]!, a, b, skewUs, min, max, primary, secondary, ps, line: ctx.line });
  }
  if (shortAnalog > 0 && revision !== 1991) {
    warnings.push(`${file}: ${shortAnalog} analog channel line(s) have the 10-field 1991 layout in a ${revision} file; their values are taken as primary`);
  }

  const status: StatusChannel[] = [];
  for (let k = 1; k <= nD; k++) {
    ctx = { file, line: src.lineNo };
    const f = fields(src.next(`status channel ${k}`));
    // 1999/2013: Dn,ch_id,ph,ccbm,y; 1991: Dn,ch_id,y (uncertain, CHECKS.md §8.2): accept 3, 4 or 5 fields.
    if (f.length < 3 || f.length > 5) {
      throw invalid({ file, line: ctx.line, field: 'Dn' }, `status channel line ${k} has ${f.length} fields; expected 5 (Dn,ch_id,ph,ccbm,y) or 3 in 1991 files`);
    }
    const index = int(ctx, 'Dn', f[0], 1, MAX_CHANNELS);
    if (index !== k) warnings.push(`${file}:${ctx.line}: status channel number ${index} where ${k} was expected; channels are taken in file order`);
    const yText = f[f.length - 1]!;
    let normalState: 0 | 1 | null = null;
    if (yText === '0' || yText === '1') normalState = Number(yText) as 0 | 1;
    else if (yText !== '') throw invalid({ file, line: ctx.line, field: 'y' }, `normal state y "${yText}" must be 0 or 1`);
    status.push({
      index,
      id: f[1]!,
      phase: f.length === 5 ? f[2]! : '',
      circuit: f.length >= 4 ? f[f.length - 2]! : '',
      normalState,
      line: ctx.line,
    });
  }

  // lf
  ctx = { file, line: src.lineNo };
  const lineFrequency = num(ctx, 'lf', fields(src.next('lf (line frequency)'))[0]);
  if (lineFrequency < 0) throw invalid({ file, line: ctx.line, field: 'lf' }, `line frequency ${lineFrequency} must not be negative`);

  // nrates, then nrates lines samp,endsamp.
  ctx = { file, line: src.lineNo };
  const nrates = int(ctx, 'nrates', fields(src.next('nrates'))[0], 0, MAX_RATES);
  const rates: SampleRate[] = [];
  const rateLines = nrates;
  for (let k = 0; k < rateLines; k++) rates.push(rateLine(src, file, rates));
  if (nrates === 0) {
    // 2013 writes one "0,endsamp" line after nrates = 0 (from memory, uncertain): take it when the next line is not a date.
    const peek = src.peek();
    if (peek !== undefined && !peek.includes('/')) rates.push(rateLine(src, file, rates));
  }

  const startTime = timeLine(src, file, revision, 'start time', warnings);
  const triggerTime = timeLine(src, file, revision, 'trigger time', warnings);

  // ft
  ctx = { file, line: src.lineNo };
  const ftText = fields(src.next('ft (data file type)'))[0]!;
  const format = ftText.toUpperCase() as DatFormat;
  if (!(DAT_FORMATS as readonly string[]).includes(format)) {
    throw unsupported({ file, line: ctx.line, field: 'ft' }, `data file type "${ftText}" is not ASCII, BINARY, BINARY32 or FLOAT32`);
  }
  if ((format === 'BINARY32' || format === 'FLOAT32') && revision !== 2013) {
    warnings.push(`${file}:${ctx.line}: ${format} is a 2013 data type in a ${revision} file; read as 2013 defines it`);
  }

  // timemult (1999+; absent in 1991 -> 1).
  let timeMult = 1;
  if (!src.done) {
    ctx = { file, line: src.lineNo };
    timeMult = num(ctx, 'timemult', fields(src.next('timemult'))[0]);
    if (!(timeMult > 0)) throw invalid({ file, line: ctx.line, field: 'timemult' }, `timemult ${timeMult} must be positive`);
  } else if (revision !== 1991) {
    warnings.push(`${file}: no timemult line; 1 assumed`);
  }

  let utcOffsetMinutes: number | null = null;
  let localCode: string | null = null;
  let timeQuality: number | null = null;
  let leapSecond: number | null = null;
  if (!src.done) {
    ctx = { file, line: src.lineNo };
    const f = fields(src.next('time_code,local_code'));
    const tc = parseUtcOffset(f[0] ?? '');
    if (tc === undefined) throw invalid({ file, line: ctx.line, field: 'time_code' }, `time_code "${f[0]}" is not an offset from UTC like -5h30, +1 or 0`);
    utcOffsetMinutes = tc;
    localCode = f[1] === undefined || f[1] === '' ? null : f[1];
    if (revision !== 2013) warnings.push(`${file}:${ctx.line}: 2013 time_code line in a ${revision} file; read as 2013 defines it`);
  } else if (revision === 2013) {
    warnings.push(`${file}: no time_code line; the recorded times are taken as UTC`);
  }
  if (!src.done) {
    ctx = { file, line: src.lineNo };
    const f = fields(src.next('tmq_code,leapsec'));
    const q = f[0] ?? '';
    if (q !== '') {
      if (!/^[0-9a-f]$/i.test(q)) throw invalid({ file, line: ctx.line, field: 'tmq_code' }, `time quality code "${q}" must be one hexadecimal digit`);
      timeQuality = parseInt(q, 16);
    }
    const ls = f[1] ?? '';
    if (ls !== '') leapSecond = int(ctx, 'leapsec', ls, 0, 3);
  }
  if (!src.done) {
    warnings.push(`${file}:${src.lineNo}: lines after the last CFG field were ignored`);
  }

  return {
    fileName: file,
    stationName,
    deviceId,
    revision,
    analog,
    status,
    lineFrequency,
    rates,
    startTime,
    triggerTime,
    format,
    timeMult,
    utcOffsetMinutes,
    localCode,
    timeQuality,
    leapSecond,
    warnings,
  };
}

function countWithSuffix(ctx: Ctx, text: string, suffix: 'A' | 'D', field: string, warnings: string[]): number {
  let body = text;
  if (body.toUpperCase().endsWith(suffix)) body = body.slice(0, -1);
  else warnings.push(`${ctx.file}:${ctx.line}: ${field} "${text}" has no trailing ${suffix}; read as a count`);
  return int(ctx, field, body.trim(), 0, MAX_CHANNELS);
}

function rateLine(src: Lines, file: string, previous: readonly SampleRate[]): SampleRate {
  const ctx = { file, line: src.lineNo };
  const f = fields(src.next('samp,endsamp'));
  if (f.length !== 2) throw invalid({ file, line: ctx.line, field: 'samp' }, `expected samp,endsamp, found ${f.length} field(s)`);
  const rate = num(ctx, 'samp', f[0]);
  if (rate < 0 || rate > MAX_RATE_HZ) throw invalid({ file, line: ctx.line, field: 'samp' }, `sampling rate ${rate} must be in 0..${MAX_RATE_HZ} Hz`);
  const endSample = int(ctx, 'endsamp', f[1], 0, Number.MAX_SAFE_INTEGER);
  const prev = previous.length === 0 ? 0 : previous[previous.length - 1]!.endSample;
  if (previous.length > 0 && endSample <= prev) {
    throw invalid({ file, line: ctx.line, field: 'endsamp' }, `endsamp ${endSample} must be greater than the previous rate's endsamp ${prev}`);
  }
  return { rate, endSample };
}

function timeLine(src: Lines, file: string, revision: ComtradeRevision, what: string, warnings: string[]): ComtradeTime {
  const line = src.lineNo;
  const f = fields(src.next(what));
  if (f.length !== 2) throw invalid({ file, line, field: what }, `expected the ${what} as dd/mm/yyyy,hh:mm:ss.ssssss, found "${f.join(',')}"`);
  const r = parseComtradeDateTime(f[0]!, f[1]!, revision);
  if (!r.ok) throw invalid({ file, line, field: `${what} ${r.field}` }, r.message);
  if (r.warning !== null) warnings.push(`${file}:${line}: ${r.warning}`);
  return r.time;
}
