/**
 * Reads COMTRADE data (.dat) in the four layouts of IEEE C37.111-2013 §7
 * (layouts per shared/CHECKS.md §8.3): ASCII (comma-separated, one record per
 * line, a record may wrap onto following lines), BINARY (int16 analogs),
 * BINARY32 (int32) and FLOAT32 (IEEE-754 single), binary records being
 * little-endian uint32 sample number, uint32 timestamp, the analogs, then
 * ⌈##D/16⌉ uint16 status words (first channel in the least significant bit).
 *
 * Missing values become NaN. Markers (uncertain in the sources, so all are
 * accepted): ASCII 99999 (1999, when outside the declared max) or an empty
 * field (2013); BINARY 0x8000; BINARY32 0x80000000; FLOAT32 NaN; a binary
 * timestamp of 0xFFFFFFFF.
 */
import { invalid } from './errors.js';
import { MISSING_STATUS, type ComtradeConfig, type ComtradeData } from './types.js';

export interface DatOptions {
  readonly fileName: string;
}

/** The ASCII missing-value marker of 1999 files (from memory, CHECKS.md §8.3). */
const ASCII_MISSING = 99999;
const INT16_MISSING = -0x8000;
const INT32_MISSING = -0x80000000;
const TIMESTAMP_MISSING = 0xffffffff;

/** Number of samples the CFG announces (last endsamp), or null when it does not say. */
export function declaredSampleCount(cfg: ComtradeConfig): number | null {
  const last = cfg.rates[cfg.rates.length - 1];
  return last === undefined || last.endSample === 0 ? null : last.endSample;
}

export function binaryRecordSize(cfg: ComtradeConfig): number {
  const width = cfg.format === 'BINARY' ? 2 : 4;
  return 8 + width * cfg.analog.length + 2 * Math.ceil(cfg.status.length / 16);
}

export function parseDat(cfg: ComtradeConfig, content: Uint8Array, options: DatOptions): ComtradeData {
  return cfg.format === 'ASCII' ? parseAsciiDat(cfg, Buffer.from(content.buffer, content.byteOffset, content.byteLength).toString('latin1'), options) : parseBinaryDat(cfg, content, options);
}

function allocate(cfg: ComtradeConfig, n: number) {
  return {
    sampleNumber: new Float64Array(n),
    timestamp: new Float64Array(n),
    analog: cfg.analog.map(() => new Float64Array(n)),
    status: cfg.status.map(() => new Uint8Array(n)),
  };
}

function checkCount(cfg: ComtradeConfig, file: string, found: number, warnings: string[]): void {
  const declared = declaredSampleCount(cfg);
  if (declared !== null && found !== declared) {
    warnings.push(
      found < declared
        ? `${file}: ${found} samples where the CFG announces ${declared}; the record looks truncated and is read as far as it goes`
        : `${file}: ${found} samples where the CFG announces ${declared}; the extra samples are read at the last rate`,
    );
  }
}

export function parseAsciiDat(cfg: ComtradeConfig, text: string, options: DatOptions): ComtradeData {
  const file = options.fileName;
  const warnings: string[] = [];
  const nA = cfg.analog.length, nD = cfg.status.length;
  const width = 2 + nA + nD;
  const lines = text.split(/\r\n|\n|\r/);
  const estimate = declaredSampleCount(cfg) ?? lines.length;
  let buf = allocate(cfg, Math.max(1, Math.min(estimate, lines.length)));
  let n = 0;
  const pending: string[] = [];
  let recordLine = 0;
  for (let li = 0; li < lines.length; li++) {
    const line = lines[li]!;
    if (line.trim() === '' || line === '\x1a') continue; // blank lines and a DOS end-of-file mark
    if (pending.length === 0) recordLine = li + 1;
    const parts = line.split(',');
    // A wrapped record continues on the next line: the line break stands in for a field separator.
    pending.push(...parts);
    if (pending.length < width) continue;
    // Trailing empty fields beyond the record width (a trailing comma) are tolerated.
    for (let k = width; k < pending.length; k++) {
      if (pending[k]!.trim() !== '') {
        throw invalid({ file, line: recordLine, field: 'record' }, `record has ${pending.length} fields; expected ${width} (n, timestamp, ${nA} analog, ${nD} status)`);
      }
    }
    if (n === buf.sampleNumber.length) buf = grow(cfg, buf, n * 2);
    readAsciiRecord(cfg, pending, n, buf, file, recordLine);
    n++;
    pending.length = 0;
  }
  if (pending.length > 0) {
    throw invalid({ file, line: recordLine, field: 'record' }, `the last record has ${pending.length} fields; expected ${width} (n, timestamp, ${nA} analog, ${nD} status)`);
  }
  checkCount(cfg, file, n, warnings);
  return finish(buf, n, warnings);
}

function readAsciiRecord(cfg: ComtradeConfig, f: string[], n: number, buf: ReturnType<typeof allocate>, file: string, line: number): void {
  const nA = cfg.analog.length;
  const sn = f[0]!.trim();
  const sampleNumber = Number(sn);
  if (sn === '' || !Number.isInteger(sampleNumber) || sampleNumber < 0) throw invalid({ file, line, field: 'n' }, `sample number "${sn}" must be a whole number`);
  buf.sampleNumber[n] = sampleNumber;
  const ts = f[1]!.trim();
  if (ts === '') buf.timestamp[n] = NaN;
  else {
    const t = Number(ts);
    if (!Number.isFinite(t)) throw invalid({ file, line, field: 'timestamp' }, `timestamp "${ts}" is not a number`);
    buf.timestamp[n] = t;
  }
  for (let k = 0; k < nA; k++) {
    const s = f[2 + k]!.trim();
    const ch = cfg.analog[k]!;
    if (s === '') {
      buf.analog[k]![n] = NaN;
      continue;
    }
    const x = Number(s);
    if (!Number.isFinite(x)) throw invalid({ file, line, field: `analog ${ch.index} (${ch.id})` }, `value "${s}" is not a number`);
    buf.analog[k]![n] = x === ASCII_MISSING && (ch.max === null || ch.max < ASCII_MISSING) ? NaN : x;
  }
  for (let k = 0; k < cfg.status.length; k++) {
    const s = f[2 + nA + k]!.trim();
    const ch = cfg.status[k]!;
    if (s === '0' || s === '1') buf.status[k]![n] = s === '1' ? 1 : 0;
    else if (s === '') buf.status[k]![n] = MISSING_STATUS;
    else throw invalid({ file, line, field: `status ${ch.index} (${ch.id})` }, `status value "${s}" must be 0 or 1`);
  }
}

function grow(cfg: ComtradeConfig, buf: ReturnType<typeof allocate>, size: number): ReturnType<typeof allocate> {
  const next = allocate(cfg, size);
  next.sampleNumber.set(buf.sampleNumber);
  next.timestamp.set(buf.timestamp);
  for (let k = 0; k < buf.analog.length; k++) next.analog[k]!.set(buf.analog[k]!);
  for (let k = 0; k < buf.status.length; k++) next.status[k]!.set(buf.status[k]!);
  return next;
}

function finish(buf: ReturnType<typeof allocate>, n: number, warnings: string[]): ComtradeData {
  return {
    sampleCount: n,
    sampleNumber: buf.sampleNumber.subarray(0, n),
    timestamp: buf.timestamp.subarray(0, n),
    analog: buf.analog.map((a) => a.subarray(0, n)),
    status: buf.status.map((s) => s.subarray(0, n)),
    warnings,
  };
}

export function parseBinaryDat(cfg: ComtradeConfig, content: Uint8Array, options: DatOptions): ComtradeData {
  const file = options.fileName;
  const warnings: string[] = [];
  const size = binaryRecordSize(cfg);
  const nA = cfg.analog.length, nD = cfg.status.length;
  const words = Math.ceil(nD / 16);
  const count = Math.floor(content.byteLength / size);
  const rest = content.byteLength - count * size;
  if (rest !== 0) {
    warnings.push(`${file}: ${content.byteLength} bytes is not a whole number of ${size}-byte ${cfg.format} records; the last ${rest} byte(s) were ignored`);
  }
  if (count === 0 && content.byteLength > 0) {
    throw invalid({ file, line: null, field: 'record' }, `${content.byteLength} bytes is shorter than one ${size}-byte ${cfg.format} record (${nA} analog, ${nD} status channels); is ft in the CFG right?`);
  }
  const view = new DataView(content.buffer, content.byteOffset, content.byteLength);
  const buf = allocate(cfg, count);
  for (let n = 0; n < count; n++) {
    let p = n * size;
    buf.sampleNumber[n] = view.getUint32(p, true);
    const ts = view.getUint32(p + 4, true);
    buf.timestamp[n] = ts === TIMESTAMP_MISSING ? NaN : ts;
    p += 8;
    switch (cfg.format) {
      case 'BINARY':
        for (let k = 0; k < nA; k++, p += 2) {
          const x = view.getInt16(p, true);
          buf.analog[k]![n] = x === INT16_MISSING ? NaN : x;
        }
        break;
      case 'BINARY32':
        for (let k = 0; k < nA; k++, p += 4) {
          const x = view.getInt32(p, true);
          buf.analog[k]![n] = x === INT32_MISSING ? NaN : x;
        }
        break;
      default:
        for (let k = 0; k < nA; k++, p += 4) {
          const x = view.getFloat32(p, true);
          buf.analog[k]![n] = Number.isFinite(x) ? x : NaN;
        }
    }
    for (let w = 0; w < words; w++, p += 2) {
      const word = view.getUint16(p, true);
      for (let bit = 0; bit < 16; bit++) {
        const k = w * 16 + bit;
        if (k >= nD) break;
        buf.status[k]![n] = (word >> bit) & 1;
      }
    }
  }
  checkCount(cfg, file, count, warnings);
  return finish(buf, count, warnings);
}
