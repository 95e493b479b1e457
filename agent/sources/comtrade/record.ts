/**
 * Assembles a COMTRADE record from its parsed CFG and DAT: the time of every
 * sample, the fixed-rate segments, and the UTC time of the first sample.
 *
 * Sample times (CHECKS.md §8.3, from memory): with nrates > 0 and non-zero
 * rates, from the rate segments (each segment's first sample one period of
 * its own rate after the previous sample); otherwise from the timestamp
 * field × timemult, in µs (ns when the CFG times carry nine fractional
 * digits), relative to the first-sample time.
 */
import { invalid, unsupported } from './errors.js';
import type { ComtradeConfig, ComtradeData, ComtradeRecord, RateSegment } from './types.js';

export interface RecordOptions {
  /**
   * Offset of the recorded times from UTC, minutes, for files that do not say
   * (1991/1999 have no time_code). Default 0: the times are taken as UTC.
   */
  readonly assumeUtcOffsetMinutes?: number;
  readonly header?: string | null;
  readonly info?: string | null;
}

/** Spacing may vary this much (relative) and still count as one fixed rate: recorder clocks jitter by well under 0.1 % (common practice). */
const UNIFORM_SPACING_REL = 1e-3;

export function buildRecord(config: ComtradeConfig, data: ComtradeData, options: RecordOptions = {}): ComtradeRecord {
  const n = data.sampleCount;
  const file = config.fileName;
  const timeSec = new Float64Array(n);
  let segments: RateSegment[];
  const fixed = config.rates.length > 0 && config.rates.every((r) => r.rate > 0);
  if (fixed) {
    segments = [];
    let first = 0;
    let t = 0;
    for (let j = 0; j < config.rates.length && first < n; j++) {
      const r = config.rates[j]!;
      const last = j === config.rates.length - 1;
      const end = last ? n : Math.min(r.endSample, n);
      const dt = 1 / r.rate;
      for (let k = first; k < end; k++) {
        if (k > 0) t += dt;
        timeSec[k] = t;
      }
      if (end > first) segments.push({ first, end, rate: r.rate });
      first = end;
    }
  } else {
    const unit = config.startTime.fractionDigits > 6 ? 1e-9 : 1e-6;
    for (let k = 0; k < n; k++) {
      const ts = data.timestamp[k]!;
      if (Number.isNaN(ts)) {
        throw invalid({ file, line: null, field: 'timestamp' }, `sample ${k + 1} has no timestamp, and the CFG gives no fixed sampling rate to place it in time`);
      }
      timeSec[k] = ts * config.timeMult * unit;
      if (k > 0 && timeSec[k]! <= timeSec[k - 1]!) {
        throw invalid({ file, line: null, field: 'timestamp' }, `sample ${k + 1} timestamp ${ts} is not later than the previous sample's`);
      }
    }
    segments = uniformSegments(timeSec, config.timeMult * unit);
  }
  const offset = config.utcOffsetMinutes ?? options.assumeUtcOffsetMinutes ?? 0;
  return {
    config,
    data,
    timeSec,
    startEpochMs: config.startTime.epochMs - offset * 60_000,
    segments,
    header: options.header ?? null,
    info: options.info ?? null,
  };
}

/**
 * Splits timestamp-only data into runs of constant spacing. Timestamps are
 * whole multiples of `resolution` (s), so a spacing may differ from the
 * first one by up to two steps from rounding alone. A run of fewer than
 * three samples shows no rate and gets rate 0.
 */
function uniformSegments(t: Float64Array, resolution: number): RateSegment[] {
  const n = t.length;
  const out: RateSegment[] = [];
  let first = 0;
  while (first < n) {
    if (first === n - 1) {
      out.push({ first, end: n, rate: 0 });
      break;
    }
    const dt = t[first + 1]! - t[first]!;
    let end = first + 2;
    const tol = Math.max(UNIFORM_SPACING_REL * dt, 2.01 * resolution);
    while (end < n && Math.abs(t[end]! - t[end - 1]! - dt) <= tol) end++;
    // Average over the run, so quantised timestamps (whole µs) still give the true rate.
    const rate = end - first > 2 ? (end - first - 1) / (t[end - 1]! - t[first]!) : 0;
    out.push({ first, end, rate });
    first = end;
  }
  return out;
}

/** Throws unless the record has a usable fixed rate in every segment (needed for cycle windows and samples frames). */
export function requireFixedRate(record: ComtradeRecord): void {
  for (const s of record.segments) {
    if (!(s.rate > 0)) {
      throw unsupported(
        { file: record.config.fileName, line: null, field: 'samp' },
        `samples ${s.first + 1}..${s.end} have no fixed sampling rate (irregular timestamps); only fixed-rate records can be analysed per cycle`,
      );
    }
  }
}
