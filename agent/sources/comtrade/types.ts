/**
 * The parsed form of a COMTRADE record (IEEE C37.111-1991/1999/2013, IEC
 * 60255-24). Field names follow the standard's CFG field names where one
 * exists. What each field means, and which parts are read leniently, is in
 * docs/comtrade.md and shared/CHECKS.md §8.
 */

export type ComtradeRevision = 1991 | 1999 | 2013;
export const COMTRADE_REVISIONS: readonly ComtradeRevision[] = [1991, 1999, 2013];

export type DatFormat = 'ASCII' | 'BINARY' | 'BINARY32' | 'FLOAT32';
export const DAT_FORMATS: readonly DatFormat[] = ['ASCII', 'BINARY', 'BINARY32', 'FLOAT32'];

/** Whether a·x+b yields primary or secondary values (CFG field PS). */
export type PrimarySecondary = 'P' | 'S';

export interface AnalogChannel {
  /** An: 1-based channel index as written in the CFG. */
  readonly index: number;
  /** ch_id */
  readonly id: string;
  /** ph: phase identification, as written (may be empty). */
  readonly phase: string;
  /** ccbm: circuit component being monitored. */
  readonly circuit: string;
  /** uu: unit as written (V, kV, A, kA, ...). */
  readonly unit: string;
  /** Multiplier a and offset b of value = a·x + b. */
  readonly a: number;
  readonly b: number;
  /** Time skew of this channel's sampling from the sample time, µs. */
  readonly skewUs: number;
  /** Declared range of the stored integer, or null when the field is empty. */
  readonly min: number | null;
  readonly max: number | null;
  /** Instrument transformer ratio parts; null in 1991 files or when empty. */
  readonly primary: number | null;
  readonly secondary: number | null;
  /** null in 1991 files or when empty (then a·x+b is taken as primary). */
  readonly ps: PrimarySecondary | null;
  /** 1-based CFG line, for messages. */
  readonly line: number;
}

export interface StatusChannel {
  readonly index: number;
  readonly id: string;
  readonly phase: string;
  readonly circuit: string;
  /** y: normal state, or null when absent. */
  readonly normalState: 0 | 1 | null;
  readonly line: number;
}

export interface SampleRate {
  /** samp: samples per second (0 when the record has no fixed rate). */
  readonly rate: number;
  /** endsamp: the last sample number at this rate. */
  readonly endSample: number;
}

export interface ComtradeTime {
  /** Epoch milliseconds of the written wall time read as if it were UTC, with the sub-millisecond fraction. */
  readonly epochMs: number;
  /** The written fraction of the second, exactly, in nanoseconds (epochMs cannot hold ns at today's epoch). */
  readonly fractionNs: number;
  /** Number of fractional-second digits written (6 = µs, 9 = ns). */
  readonly fractionDigits: number;
  readonly text: string;
}

export interface ComtradeConfig {
  readonly fileName: string;
  readonly stationName: string;
  readonly deviceId: string;
  readonly revision: ComtradeRevision;
  readonly analog: readonly AnalogChannel[];
  readonly status: readonly StatusChannel[];
  /** lf: nominal line frequency, Hz. */
  readonly lineFrequency: number;
  readonly rates: readonly SampleRate[];
  readonly startTime: ComtradeTime;
  readonly triggerTime: ComtradeTime;
  readonly format: DatFormat;
  /** timemult: multiplier of the DAT timestamp field (1 when absent). */
  readonly timeMult: number;
  /** 2013 time_code: offset of the recorded times from UTC in minutes, or null when not given. */
  readonly utcOffsetMinutes: number | null;
  /** 2013 local_code, as written, or null. */
  readonly localCode: string | null;
  /** 2013 tmq_code (time quality, one hex digit) and leapsec, or null. */
  readonly timeQuality: number | null;
  readonly leapSecond: number | null;
  /** Things read leniently (each says what was assumed). */
  readonly warnings: readonly string[];
}

/** Raw DAT content, one entry per sample in file order. */
export interface ComtradeData {
  readonly sampleCount: number;
  readonly sampleNumber: Float64Array;
  /** Raw timestamp field; NaN when missing. */
  readonly timestamp: Float64Array;
  /** Raw analog values x (before a·x+b) per channel; NaN marks a missing value. */
  readonly analog: readonly Float64Array[];
  /** Status per channel: 0, 1, or MISSING_STATUS. */
  readonly status: readonly Uint8Array[];
  readonly warnings: readonly string[];
}

export const MISSING_STATUS = 0xff;

export interface ComtradeRecord {
  readonly config: ComtradeConfig;
  readonly data: ComtradeData;
  /** Time of each sample relative to the first-sample time, in seconds. */
  readonly timeSec: Float64Array;
  /** UTC epoch ms of the first sample (after the 2013 time_code correction, or the caller's assumed offset). */
  readonly startEpochMs: number;
  /** Contiguous runs of samples taken at one fixed rate: [first, end) sample indexes (0-based) and rate in Hz. */
  readonly segments: readonly RateSegment[];
  /** Optional HDR/INF text found beside the record (or inside a CFF), null when absent. */
  readonly header: string | null;
  readonly info: string | null;
}

export interface RateSegment {
  readonly first: number;
  readonly end: number;
  readonly rate: number;
}
