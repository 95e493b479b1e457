/**
 * Input frames (shared/ARCHITECTURE.md, "Input frames") and the edge validator
 * that turns wire JSON into typed frames or a coded rejection. A frame that
 * does not validate is rejected whole; the rejection names the field and the
 * reason, and carries a FRAME_* code that doubles as the counter label.
 */
import { polarToRectInto } from './complex/complex.js';
import type { FrameErrorCode } from './errors.js';

export type FrameKind = 'phasor' | 'rms' | 'samples';
export const FRAME_KINDS: readonly FrameKind[] = ['phasor', 'rms', 'samples'];
export const FEEDER_ID_PATTERN = /^[A-Za-z0-9_.-]{1,64}$/;

/** Line-to-neutral phasors in rectangular form, [aRe, aIm, bRe, bIm, cRe, cIm], RMS primary units. */
export interface PhasorFrame {
  readonly kind: 'phasor';
  readonly feeder: string;
  /** Epoch milliseconds (UTC). */
  readonly ts: number;
  readonly freq: number | null;
  readonly v: Float64Array | null;
  readonly i: Float64Array | null;
}

/** RMS magnitudes only: line-to-line voltages [ab, bc, ca], line-to-neutral [a, b, c], currents [a, b, c]. */
export interface RmsFrame {
  readonly kind: 'rms';
  readonly feeder: string;
  readonly ts: number;
  readonly freq: number | null;
  readonly vll: Float64Array | null;
  readonly vln: Float64Array | null;
  readonly i: Float64Array | null;
}

/** Contiguous instantaneous samples; `ts` is the time of the first sample, `rate` in samples per second. */
export interface SamplesFrame {
  readonly kind: 'samples';
  readonly feeder: string;
  readonly ts: number;
  readonly rate: number;
  /** Number of samples in each channel. */
  readonly length: number;
  /** Phase-to-neutral voltages a, b, c, or null. */
  readonly v: readonly [Float64Array, Float64Array, Float64Array] | null;
  readonly i: readonly [Float64Array, Float64Array, Float64Array] | null;
}

export type Frame = PhasorFrame | RmsFrame | SamplesFrame;

export interface FrameRejection {
  readonly code: FrameErrorCode;
  /** Dotted path of the offending field, or null when the whole payload is at fault. */
  readonly field: string | null;
  readonly message: string;
}

export type FrameResult = { readonly ok: true; readonly frame: Frame } | { readonly ok: false; readonly error: FrameRejection };

export interface FrameLimits {
  /** Largest payload accepted, in bytes (checked before parsing). */
  readonly maxPayloadBytes: number;
  /** Largest number of samples per channel in one samples frame. */
  readonly maxSamplesPerChannel: number;
  readonly minSampleRate: number;
  readonly maxSampleRate: number;
  /** Accepted range of a reported frequency, Hz. */
  readonly minFreqHz: number;
  readonly maxFreqHz: number;
}

export const DEFAULT_FRAME_LIMITS: FrameLimits = Object.freeze({
  maxPayloadBytes: 4 * 1024 * 1024,
  // 2 s at 64 kS/s: long enough for any block a merging unit or recorder sends live.
  maxSamplesPerChannel: 131072,
  // The estimator wants at least ~16 samples per cycle to resolve the 7th harmonic.
  minSampleRate: 960,
  maxSampleRate: 1_000_000,
  // Wider than the IEC 61000-4-30 class A range (42.5–69 Hz) so that a
  // disturbed system is still reported, narrow enough to catch unit mistakes.
  minFreqHz: 30,
  maxFreqHz: 90,
});

// Earliest and latest accepted timestamps: 2000-01-01 and 2100-01-01 UTC. A
// frame outside is almost always seconds or microseconds sent as milliseconds.
const TS_MIN = 946_684_800_000;
const TS_MAX = 4_102_444_800_000;
const ISO_PATTERN = /^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}(:\d{2}(\.\d+)?)?(Z|[+-]\d{2}:?\d{2})$/;

class Reject {
  constructor(readonly code: FrameErrorCode, readonly field: string | null, readonly message: string) {}
}

function fail(code: FrameErrorCode, field: string | null, message: string): never {
  throw new Reject(code, field, message);
}

/** Parses an ISO-8601 string or epoch-millisecond number into epoch ms. */
export function parseTimestamp(value: unknown, field = 'ts'): number {
  let ms: number;
  if (typeof value === 'number') {
    if (!Number.isFinite(value)) fail('FRAME_BAD_TIMESTAMP', field, `${field} must be a finite number of epoch milliseconds`);
    ms = value;
  } else if (typeof value === 'string') {
    if (!ISO_PATTERN.test(value)) fail('FRAME_BAD_TIMESTAMP', field, `${field} "${clip(value)}" is not an ISO-8601 date-time with a time zone (e.g. 2026-03-02T14:03:07.250Z)`);
    ms = Date.parse(value);
    if (!Number.isFinite(ms)) fail('FRAME_BAD_TIMESTAMP', field, `${field} "${clip(value)}" is not a valid date-time`);
  } else if (value === undefined) {
    fail('FRAME_BAD_TIMESTAMP', field, `${field} is missing`);
  } else {
    fail('FRAME_BAD_TIMESTAMP', field, `${field} must be an ISO-8601 string or epoch milliseconds, found ${typeName(value)}`);
  }
  if (ms < TS_MIN || ms > TS_MAX) {
    fail('FRAME_BAD_TIMESTAMP', field, `${field} ${ms} is outside 2000-01-01..2100-01-01; is it in seconds or microseconds instead of milliseconds?`);
  }
  return ms;
}

export interface ValidateOptions {
  /** Feeder id from the topic; used when the payload has no "feeder" field. */
  readonly feeder?: string | undefined;
  /** Frame kind from the topic; otherwise taken from "kind" or inferred. */
  readonly kind?: FrameKind | undefined;
  readonly limits?: FrameLimits | undefined;
  /**
   * Buffers that the phasor sets of a phasor frame are written into instead of
   * new arrays. The frame's `v` and `i` are then valid only until the next call
   * given the same scratch: for a caller that consumes each frame at once.
   */
  readonly scratch?: PhasorScratch | undefined;
}

/** Two reusable 6-element buffers, for ValidateOptions.scratch. */
export interface PhasorScratch {
  readonly v: Float64Array;
  readonly i: Float64Array;
}

export function createPhasorScratch(): PhasorScratch {
  return { v: new Float64Array(6), i: new Float64Array(6) };
}

/** Validates a raw payload (Buffer/string) including the size check before parsing. */
export function parseFrame(payload: string | Uint8Array, options: ValidateOptions = {}): FrameResult {
  const limits = options.limits ?? DEFAULT_FRAME_LIMITS;
  // A UTF-16 unit is at most 3 UTF-8 bytes: only a long string needs the exact (linear-time) byte count.
  const size =
    typeof payload !== 'string' ? payload.byteLength : payload.length * 3 <= limits.maxPayloadBytes ? payload.length : Buffer.byteLength(payload);
  if (size > limits.maxPayloadBytes) {
    return rejected('FRAME_TOO_LARGE', null, `payload of ${size} bytes exceeds the limit of ${limits.maxPayloadBytes} bytes`);
  }
  let json: unknown;
  try {
    let text = typeof payload === 'string' ? payload : Buffer.isBuffer(payload) ? payload.toString('utf8') : Buffer.from(payload.buffer, payload.byteOffset, payload.byteLength).toString('utf8');
    // A leading byte order mark (some publishers' UTF-8 encoders write one): RFC 8259 §8.1 lets a parser ignore it (from memory).
    if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
    json = JSON.parse(text);
  } catch (e) {
    return rejected('FRAME_NOT_JSON', null, `payload is not valid JSON (${(e as Error).message})`);
  }
  return validateFrame(json, options);
}

/** Validates an already-parsed JSON value. */
export function validateFrame(json: unknown, options: ValidateOptions = {}): FrameResult {
  try {
    return { ok: true, frame: toFrame(json, options) };
  } catch (e) {
    if (e instanceof Reject) return rejected(e.code, e.field, e.message);
    throw e;
  }
}

function rejected(code: FrameErrorCode, field: string | null, message: string): FrameResult {
  return { ok: false, error: { code, field, message } };
}

function toFrame(json: unknown, options: ValidateOptions): Frame {
  const limits = options.limits ?? DEFAULT_FRAME_LIMITS;
  if (json === null || typeof json !== 'object' || Array.isArray(json)) {
    fail('FRAME_NOT_OBJECT', null, `payload must be a JSON object, found ${typeName(json)}`);
  }
  const o = json as Record<string, unknown>;

  let feeder = options.feeder;
  if (o.feeder !== undefined) {
    if (typeof o.feeder !== 'string') fail('FRAME_BAD_FEEDER', 'feeder', `feeder must be a string, found ${typeName(o.feeder)}`);
    if (feeder !== undefined && o.feeder !== feeder) fail('FRAME_BAD_FEEDER', 'feeder', `feeder "${clip(o.feeder)}" in the payload differs from "${feeder}" in the topic`);
    feeder = o.feeder;
  }
  if (feeder === undefined) fail('FRAME_BAD_FEEDER', 'feeder', 'feeder is missing (give it in the topic or a "feeder" field)');
  if (!FEEDER_ID_PATTERN.test(feeder)) fail('FRAME_BAD_FEEDER', 'feeder', `feeder "${clip(feeder)}" must match [A-Za-z0-9_.-]{1,64}`);

  const kind = resolveKind(o, options.kind);
  const ts = parseTimestamp(o.ts);

  switch (kind) {
    case 'phasor': {
      const freq = optionalFreq(o.freq, limits);
      const scratch = options.scratch;
      const v = o.v === undefined ? null : phasorSet(o.v, 'v', scratch === undefined ? new Float64Array(6) : scratch.v);
      const i = o.i === undefined ? null : phasorSet(o.i, 'i', scratch === undefined ? new Float64Array(6) : scratch.i);
      if (v === null && i === null) fail('FRAME_MISSING_FIELD', 'v', 'a phasor frame needs "v" (and optionally "i") with phases a, b, c');
      return { kind, feeder, ts, freq, v, i };
    }
    case 'rms': {
      const freq = optionalFreq(o.freq, limits);
      const vll = o.vll === undefined ? null : magnitudeSet(o.vll, 'vll', ['ab', 'bc', 'ca']);
      const vln = o.vln === undefined ? null : magnitudeSet(o.vln, 'vln', ['a', 'b', 'c']);
      const i = o.i === undefined ? null : magnitudeSet(o.i, 'i', ['a', 'b', 'c']);
      if (vll === null && vln === null && i === null) fail('FRAME_MISSING_FIELD', 'vll', 'an rms frame needs "vll" (ab, bc, ca), "vln" (a, b, c) or "i" (a, b, c)');
      return { kind, feeder, ts, freq, vll, vln, i };
    }
    case 'samples': {
      const rate = o.rate;
      if (rate === undefined) fail('FRAME_BAD_RATE', 'rate', 'rate (samples per second) is missing');
      if (typeof rate !== 'number' || !Number.isFinite(rate)) fail('FRAME_BAD_RATE', 'rate', `rate must be a finite number, found ${typeName(rate)}`);
      if (rate < limits.minSampleRate || rate > limits.maxSampleRate) {
        fail('FRAME_BAD_RATE', 'rate', `rate ${rate} is outside ${limits.minSampleRate}..${limits.maxSampleRate} samples per second`);
      }
      const lengths: number[] = [];
      const v = o.v === undefined ? null : sampleSet(o.v, 'v', limits, lengths);
      const i = o.i === undefined ? null : sampleSet(o.i, 'i', limits, lengths);
      if (v === null && i === null) fail('FRAME_MISSING_FIELD', 'v', 'a samples frame needs "v" and/or "i" with arrays for phases a, b, c');
      const length = lengths[0]!;
      for (let k = 1; k < lengths.length; k++) {
        if (lengths[k] !== length) fail('FRAME_BAD_LENGTH', v !== null && k < 3 ? 'v' : 'i', `all sample arrays must have the same length; found ${lengths.join(', ')}`);
      }
      return { kind, feeder, ts, rate, length, v, i };
    }
  }
}

function resolveKind(o: Record<string, unknown>, fromTopic: FrameKind | undefined): FrameKind {
  if (o.kind !== undefined) {
    if (typeof o.kind !== 'string' || !(FRAME_KINDS as readonly string[]).includes(o.kind)) {
      fail('FRAME_UNKNOWN_KIND', 'kind', `kind must be one of phasor, rms, samples, found ${typeof o.kind === 'string' ? `"${clip(o.kind)}"` : typeName(o.kind)}`);
    }
    if (fromTopic !== undefined && o.kind !== fromTopic) fail('FRAME_UNKNOWN_KIND', 'kind', `kind "${o.kind}" in the payload differs from "${fromTopic}" in the topic`);
    return o.kind as FrameKind;
  }
  if (fromTopic !== undefined) return fromTopic;
  if (o.rate !== undefined) return 'samples';
  if (o.vll !== undefined || o.vln !== undefined) return 'rms';
  const v = o.v ?? o.i;
  if (v !== null && typeof v === 'object' && !Array.isArray(v)) {
    const a = (v as Record<string, unknown>).a;
    // Without a rate a phase given as an array can only be a phasor pair.
    if (Array.isArray(a)) return 'phasor';
    if (typeof a === 'number') return 'rms';
  }
  fail('FRAME_UNKNOWN_KIND', 'kind', 'cannot tell the frame kind: give "kind" (phasor, rms, samples) or the fields of one kind');
}

function optionalFreq(value: unknown, limits: FrameLimits): number | null {
  if (value === undefined || value === null) return null;
  if (typeof value !== 'number' || !Number.isFinite(value)) fail('FRAME_BAD_VALUE', 'freq', `freq must be a finite number in Hz, found ${typeName(value)}`);
  if (value < limits.minFreqHz || value > limits.maxFreqHz) fail('FRAME_BAD_VALUE', 'freq', `freq ${value} Hz is outside ${limits.minFreqHz}..${limits.maxFreqHz} Hz`);
  return value;
}

function objectField(value: unknown, field: string): Record<string, unknown> {
  if (value === null || typeof value !== 'object' || Array.isArray(value)) fail('FRAME_BAD_VALUE', field, `${field} must be an object with phases, found ${typeName(value)}`);
  return value as Record<string, unknown>;
}

const PHASES = ['a', 'b', 'c'] as const;

/** Writes the three [magnitude, angle] pairs of `value` into `out` as rectangular values. */
function phasorSet(value: unknown, field: string, out: Float64Array): Float64Array {
  const o = objectField(value, field);
  for (let k = 0; k < 3; k++) {
    const p = o[PHASES[k]!];
    // The field name is built only on failure: this loop runs for every frame.
    if (p === undefined || p === null) fail('FRAME_MISSING_FIELD', phaseName(field, k), `${phaseName(field, k)} is missing`);
    if (!Array.isArray(p) || p.length !== 2) fail('FRAME_BAD_VALUE', phaseName(field, k), `${phaseName(field, k)} must be [magnitude, angleDegrees], found ${typeName(p)}`);
    const mag = p[0] as unknown, ang = p[1] as unknown;
    if (typeof mag !== 'number' || !Number.isFinite(mag)) fail('FRAME_BAD_VALUE', `${phaseName(field, k)}[0]`, `${phaseName(field, k)} magnitude must be a finite number, found ${typeName(mag)}`);
    if (mag < 0) fail('FRAME_BAD_VALUE', `${phaseName(field, k)}[0]`, `${phaseName(field, k)} magnitude must not be negative, found ${mag}`);
    if (typeof ang !== 'number' || !Number.isFinite(ang)) fail('FRAME_BAD_VALUE', `${phaseName(field, k)}[1]`, `${phaseName(field, k)} angle must be a finite number of degrees, found ${typeName(ang)}`);
    polarToRectInto(mag, ang, out, 2 * k);
  }
  return out;
}

function phaseName(field: string, k: number): string {
  return `${field}.${PHASES[k]}`;
}

function magnitudeSet(value: unknown, field: string, names: readonly string[]): Float64Array {
  const o = objectField(value, field);
  const out = new Float64Array(3);
  for (let k = 0; k < 3; k++) {
    const m = o[names[k]!];
    if (m === undefined || m === null) fail('FRAME_MISSING_FIELD', `${field}.${names[k]}`, `${field}.${names[k]} is missing`);
    if (typeof m !== 'number' || !Number.isFinite(m)) fail('FRAME_BAD_VALUE', `${field}.${names[k]}`, `${field}.${names[k]} must be a finite number, found ${typeName(m)}`);
    if (m < 0) fail('FRAME_BAD_VALUE', `${field}.${names[k]}`, `${field}.${names[k]} must not be negative, found ${m}`);
    out[k] = m;
  }
  return out;
}

function sampleSet(value: unknown, field: string, limits: FrameLimits, lengths: number[]): [Float64Array, Float64Array, Float64Array] {
  const o = objectField(value, field);
  const out: Float64Array[] = [];
  for (const ph of ['a', 'b', 'c']) {
    const name = `${field}.${ph}`;
    const arr = o[ph];
    if (arr === undefined || arr === null) fail('FRAME_MISSING_FIELD', name, `${name} is missing`);
    if (!Array.isArray(arr)) fail('FRAME_BAD_VALUE', name, `${name} must be an array of numbers, found ${typeName(arr)}`);
    if (arr.length === 0) fail('FRAME_BAD_LENGTH', name, `${name} is empty`);
    if (arr.length > limits.maxSamplesPerChannel) fail('FRAME_BAD_LENGTH', name, `${name} has ${arr.length} samples, more than the limit of ${limits.maxSamplesPerChannel}`);
    const buf = new Float64Array(arr.length);
    for (let n = 0; n < arr.length; n++) {
      const x = arr[n] as unknown;
      if (typeof x !== 'number' || !Number.isFinite(x)) fail('FRAME_BAD_VALUE', `${name}[${n}]`, `${name}[${n}] must be a finite number, found ${typeName(x)}`);
      buf[n] = x;
    }
    lengths.push(arr.length);
    out.push(buf);
  }
  return [out[0]!, out[1]!, out[2]!];
}

function typeName(v: unknown): string {
  if (v === null) return 'null';
  if (Array.isArray(v)) return `an array of length ${v.length}`;
  if (typeof v === 'number') return Number.isNaN(v) ? 'NaN' : String(v);
  if (typeof v === 'string') return `the string "${clip(v)}"`;
  return typeof v === 'object' ? 'an object' : typeof v;
}

function clip(s: string): string {
  return s.length > 40 ? `${s.slice(0, 40)}…` : s;
}
