/**
 * The result record: one per phasor/rms frame ("frame"), per basic window of
 * samples ("basic"), and per aggregation interval ("3s", "10min", "2h"). Its
 * wire form is the `sequence` output of shared/ARCHITECTURE.md, with extra
 * fields added (never renamed).
 */

/** [magnitude, angleDegrees]; the angle is null when only magnitudes were measured. */
export type PhasorOut = [number, number | null];

export interface PhaseTriple {
  a: number;
  b: number;
  c: number;
}
export interface LineTriple {
  ab: number;
  bc: number;
  ca: number;
}

export interface QuantityResult {
  /** Zero-sequence component; null when it cannot be observed (line-to-line or magnitude-only input). */
  zero: PhasorOut | null;
  pos: PhasorOut | null;
  neg: PhasorOut | null;
  /** IEC negative-sequence unbalance factor, percent; null when not observable or |X1| = 0. */
  u2: number | null;
  /** IEC zero-sequence unbalance factor, percent. */
  u0: number | null;
  /** Per-phase RMS magnitudes (line-to-neutral for voltage). */
  rms: PhaseTriple | null;
  /** Total harmonic distortion per phase, percent of the fundamental (sampled input only). */
  thd: PhaseTriple | null;
}

export interface VoltageResult extends QuantityResult {
  /** Line-to-line RMS magnitudes. */
  rmsLL: LineTriple | null;
  /** NEMA MG-1 line voltage unbalance rate, percent (max deviation of L-L magnitudes from their mean). */
  lvur: number | null;
  /** IEEE phase voltage unbalance rate, percent (max deviation of L-N magnitudes from their mean). */
  pvur: number | null;
}

export type WindowName = 'frame' | 'cycle' | 'basic' | '3s' | '10min' | '2h';
export const AGGREGATE_WINDOWS = ['3s', '10min', '2h'] as const;
export type AggregateWindow = (typeof AGGREGATE_WINDOWS)[number];

export interface SequenceResult {
  /** Start of the interval (or the frame time), epoch ms UTC. */
  ts: number;
  feeder: string;
  window: WindowName;
  /** Length of the interval in ms (0 for a single phasor/rms frame). */
  durationMs: number;
  freq: number | null;
  /** IEC 61000-4-30 §4.7 flag (clause from memory): the interval contains a dip, swell, interruption, or a gap in the data. */
  flagged: boolean;
  v: VoltageResult | null;
  i: QuantityResult | null;
  /** Number of frame/basic values combined into an aggregate (1 for frame/basic). */
  count: number;
}

/** A deep copy of a result: for keeping a result whose record the pipeline reuses (PipelineOptions.frameResults). */
export function copyResult(r: SequenceResult): SequenceResult {
  return { ts: r.ts, feeder: r.feeder, window: r.window, durationMs: r.durationMs, freq: r.freq, flagged: r.flagged, v: r.v === null ? null : copyVoltage(r.v), i: r.i === null ? null : copyQuantity(r.i), count: r.count };
}

function copyQuantity(q: QuantityResult): QuantityResult {
  return { zero: copyPhasor(q.zero), pos: copyPhasor(q.pos), neg: copyPhasor(q.neg), u2: q.u2, u0: q.u0, rms: q.rms === null ? null : { a: q.rms.a, b: q.rms.b, c: q.rms.c }, thd: q.thd === null ? null : { a: q.thd.a, b: q.thd.b, c: q.thd.c } };
}

function copyVoltage(v: VoltageResult): VoltageResult {
  const q = copyQuantity(v);
  return { ...q, rmsLL: v.rmsLL === null ? null : { ab: v.rmsLL.ab, bc: v.rmsLL.bc, ca: v.rmsLL.ca }, lvur: v.lvur, pvur: v.pvur };
}

function copyPhasor(p: PhasorOut | null): PhasorOut | null {
  return p === null ? null : [p[0], p[1]];
}

/** Significant digits kept on the wire: far below any measurement uncertainty, far above float noise. */
const WIRE_DIGITS = 10;

const POW10 = Array.from({ length: 641 }, (_, k) => 10 ** (k - 320));

/**
 * Rounds to WIRE_DIGITS significant digits. Scaling by a power of ten is
 * ~50x faster than Number(x.toPrecision(10)) and agrees with it to within one
 * unit in the 10th digit, far below any measurement uncertainty.
 */
export function roundForWire(x: number): number {
  if (x === 0 || !Number.isFinite(x)) return x;
  const e = Math.floor(Math.log10(Math.abs(x)));
  const k = WIRE_DIGITS - 1 - e + 320;
  if (k < 0 || k > 640) return x;
  const scale = POW10[k]!;
  return Math.round(x * scale) / scale;
}

function r(x: number | null): number | null {
  return x === null ? null : roundForWire(x);
}

function phasorWire(p: PhasorOut | null): [number, number | null] | null {
  return p === null ? null : [roundForWire(p[0]), r(p[1])];
}

function tripleWire<T extends object>(t: T | null): T | null {
  if (t === null) return null;
  const out: Record<string, number> = {};
  for (const [k, v] of Object.entries(t)) out[k] = roundForWire(v as number);
  return out as T;
}

function quantityWire(q: QuantityResult | null): Record<string, unknown> | null {
  if (q === null) return null;
  const out: Record<string, unknown> = {
    zero: phasorWire(q.zero),
    pos: phasorWire(q.pos),
    neg: phasorWire(q.neg),
    u2: r(q.u2),
    u0: r(q.u0),
    rms: tripleWire(q.rms),
    thd: tripleWire(q.thd),
  };
  if ('rmsLL' in q) {
    const v = q as VoltageResult;
    out.rmsLL = tripleWire(v.rmsLL);
    out.lvur = r(v.lvur);
    out.pvur = r(v.pvur);
  }
  return out;
}

export function isoTime(ms: number): string {
  return new Date(Math.round(ms)).toISOString();
}

/** The JSON object published on `<out>/<feeder>/sequence` and written by `seqmon analyze`. */
export function resultToWire(res: SequenceResult): Record<string, unknown> {
  return {
    ts: isoTime(res.ts),
    feeder: res.feeder,
    window: res.window,
    durationMs: roundForWire(res.durationMs),
    freq: r(res.freq),
    flagged: res.flagged,
    count: res.count,
    v: quantityWire(res.v),
    i: quantityWire(res.i),
  };
}
