/**
 * The per-feeder processing chain, built once per feeder from its settings:
 *   raw payload -> validated frame -> (phasor estimation) -> sequence ->
 *   aggregation -> detection -> outputs (returned, not sent).
 * Pure: no I/O and no clock. Live time enters only through tick(now).
 */
import { IntervalAggregator } from './aggregate/interval-aggregator.js';
import type { DetectionOutput } from './detect/feeder-detector.js';
import { FeederDetector } from './detect/feeder-detector.js';
import type { DetectionSettings } from './detect/settings.js';
import type { AlarmTransition, DisturbanceEvent } from './detect/types.js';
import type { BasicWindow } from './dsp/waveform-estimator.js';
import { WaveformEstimator } from './dsp/waveform-estimator.js';
import type { FrameErrorCode } from './errors.js';
import type { Frame, FrameKind, FrameLimits, PhasorFrame, PhasorScratch, RmsFrame, SamplesFrame } from './frames.js';
import { createPhasorScratch, DEFAULT_FRAME_LIMITS, FEEDER_ID_PATTERN, parseFrame, validateFrame } from './frames.js';
import type { RawFrame } from './ports.js';
import type { PhaseTriple, QuantityResult, SequenceResult, VoltageResult } from './result.js';
import { copyResult } from './result.js';
import type { QuantityRecord, VoltageRecord } from './sequence/quantities.js';
import {
  currentFromMagnitudes,
  emptyQuantityRecord,
  emptyVoltageRecord,
  quantityFromPhasors,
  quantityFromPhasorsInto,
  SequenceScratch,
  voltageFromMagnitudes,
  voltageFromPhasors,
  voltageFromPhasorsInto,
} from './sequence/quantities.js';

export interface FeederSettings {
  readonly id: string;
  readonly nominalHz: 50 | 60;
  /** Nominal line-to-neutral RMS voltage, V; null when unknown (no dip/swell flags then). */
  readonly nominalVoltageLN: number | null;
  readonly detection: DetectionSettings;
  /**
   * Three-wire feeder: the phase currents sum to zero, so I2/I1 follows
   * exactly from current magnitudes alone (rms frames). Default false: on a
   * four-wire feeder neutral current makes that estimate wrong, so it is not
   * reported.
   */
  readonly currentsSumToZero?: boolean | undefined;
}

export interface PipelineSettings {
  /** Accept frames from feeders not listed, with the default settings. */
  readonly discoverFeeders: boolean;
  readonly defaults: Omit<FeederSettings, 'id'>;
  readonly feeders: readonly FeederSettings[];
  readonly limits?: FrameLimits | undefined;
  /** Upper bound on the number of feeders (listed + discovered), so a misbehaving publisher cannot exhaust memory. */
  readonly maxFeeders?: number | undefined;
}

export interface PipelineOptions {
  /**
   * 'new' (default): every result in `results` is a record of its own.
   * 'reused': the result of a phasor frame is written into one record per
   * feeder, overwritten by that feeder's next phasor frame; a caller that keeps
   * one must copy it (copyResult). For a host that looks at few of them: at tens
   * of thousands of frames per second the new records are most of the garbage.
   * Aggregates, alarms, events and latest() are new records either way.
   */
  readonly frameResults?: 'new' | 'reused' | undefined;
}

export interface Rejection {
  readonly feeder: string | null;
  readonly code: FrameErrorCode;
  readonly field: string | null;
  readonly message: string;
  readonly origin: string;
}

export interface Diagnostic {
  readonly ts: number;
  readonly feeder: string;
  readonly kind: string;
  readonly message: string;
}

export interface PipelineOutput {
  /** One per phasor/rms frame (window 'frame') and per basic window of samples (window 'basic'). */
  results: SequenceResult[];
  /** Closed aggregation intervals ('3s', '10min', '2h'). */
  aggregates: SequenceResult[];
  alarms: AlarmTransition[];
  events: DisturbanceEvent[];
  diagnostics: Diagnostic[];
  rejections: Rejection[];
}

export function createOutput(): PipelineOutput {
  return { results: [], aggregates: [], alarms: [], events: [], diagnostics: [], rejections: [] };
}

export function clearOutput(o: PipelineOutput): void {
  o.results.length = 0;
  o.aggregates.length = 0;
  o.alarms.length = 0;
  o.events.length = 0;
  o.diagnostics.length = 0;
  o.rejections.length = 0;
}

/** Rejections whose feeder id is unusable are counted under this label. */
export const UNKNOWN_FEEDER_LABEL = '(unknown)';
const DEFAULT_MAX_FEEDERS = 2000;
/**
 * After this much wall time without data, a feeder's open 3-s interval is
 * closed: data time is extrapolated by the idle wall time, which keeps a
 * device clock that runs behind from having its intervals closed early.
 */
const IDLE_CLOSE_MS = 6_000;

// IEC 61000-4-30 §5.4/§5.5 thresholds, as a fraction of the declared input voltage (from memory; the
// usual 90 % dip, 110 % swell and 5 % interruption thresholds, shared CHECKS §3).
const DIP_THRESHOLD = 0.9;
const SWELL_THRESHOLD = 1.1;
const INTERRUPTION_THRESHOLD = 0.05;
const INV_SQRT3 = 1 / Math.sqrt(3);

/** The reused record of a feeder's phasor-frame results (PipelineOptions.frameResults 'reused'). */
interface FrameRecord {
  readonly result: SequenceResult;
  readonly v: VoltageRecord;
  readonly i: QuantityRecord;
}

class FeederProcessor {
  private readonly scratch = new SequenceScratch();
  private record: FrameRecord | null = null;
  private readonly detector: FeederDetector;
  private readonly aggregator: IntervalAggregator;
  private estimator: WaveformEstimator | null = null;
  private readonly lastTs: Record<Frame['kind'], number> = { phasor: -Infinity, rms: -Infinity, samples: -Infinity };
  private latestResult: SequenceResult | null = null;
  /** Data time of the end of the newest accepted frame. */
  private lastDataTs: number | null = null;
  private wallAtLastData: number | null = null;
  private dataSinceTick = false;
  // Bound emit callbacks, created once (no closure per frame).
  private out: PipelineOutput | null = null;
  private readonly detOut: DetectionOutput;
  private readonly emitAggregate = (agg: SequenceResult): void => {
    this.out!.aggregates.push(agg);
    this.detector.onAggregate(agg, this.detOut);
  };
  private readonly emitBasic = (w: BasicWindow): void => {
    this.accept(this.fromBasicWindow(w));
  };

  constructor(
    readonly settings: FeederSettings,
    private readonly reuseFrameResults = false,
  ) {
    this.detector = new FeederDetector(settings.id, settings.detection, { voltageLN: settings.nominalVoltageLN });
    this.aggregator = new IntervalAggregator({ feeder: settings.id, nominalHz: settings.nominalHz });
    this.detOut = { alarms: [], events: [], diagnostics: [] };
  }

  latest(): SequenceResult | null {
    const r = this.latestResult;
    return r !== null && r === this.record?.result ? copyResult(r) : r;
  }

  restore(active: readonly AlarmTransition[]): void {
    this.detector.restore(active);
  }

  /** Returns a rejection code when the frame is refused for this feeder's state (time order). */
  process(frame: Frame, out: PipelineOutput): Rejection | null {
    const last = this.lastTs[frame.kind];
    if (!(frame.ts > last)) {
      return {
        feeder: frame.feeder,
        code: 'FRAME_TIME_REVERSED',
        field: 'ts',
        message: `ts ${new Date(frame.ts).toISOString()} is not later than the previous ${frame.kind} frame (${new Date(last).toISOString()}); duplicate or out-of-order frame dropped`,
        origin: '',
      };
    }
    this.lastTs[frame.kind] = frame.ts;
    this.bind(out);
    switch (frame.kind) {
      case 'phasor':
        this.accept(this.fromPhasor(frame));
        this.noteData(frame.ts);
        break;
      case 'rms':
        this.accept(this.fromRms(frame));
        this.noteData(frame.ts);
        break;
      case 'samples':
        this.samples(frame);
        this.noteData(frame.ts + (1000 * frame.length) / frame.rate);
        break;
    }
    this.unbind();
    return null;
  }

  tick(now: number, out: PipelineOutput): void {
    this.bind(out);
    if (this.wallAtLastData === null || this.dataSinceTick) {
      this.wallAtLastData = now;
      this.dataSinceTick = false;
      if (this.lastDataTs === null) this.lastDataTs = now;
    }
    const idle = now - this.wallAtLastData;
    const dataNow = this.lastDataTs! + idle;
    if (idle >= IDLE_CLOSE_MS) this.aggregator.closeBefore(dataNow, this.emitAggregate);
    this.detector.onTick(dataNow, this.detOut);
    this.unbind();
  }

  flush(out: PipelineOutput): void {
    this.bind(out);
    this.aggregator.flush(this.emitAggregate);
    this.unbind();
  }

  private bind(out: PipelineOutput): void {
    this.out = out;
    this.detOut.alarms = out.alarms;
    this.detOut.events = out.events;
    this.detOut.diagnostics = out.diagnostics as DetectionOutput['diagnostics'];
  }

  private unbind(): void {
    this.out = null;
  }

  private noteData(endTs: number): void {
    if (this.lastDataTs === null || endTs > this.lastDataTs) this.lastDataTs = endTs;
    this.dataSinceTick = true;
  }

  private accept(r: SequenceResult): void {
    this.out!.results.push(r);
    this.latestResult = r;
    this.detector.onValue(r, this.detOut);
    this.aggregator.push(r, this.emitAggregate);
  }

  private fromPhasor(f: PhasorFrame): SequenceResult {
    if (this.reuseFrameResults) return this.fromPhasorReused(f);
    const v = f.v === null ? null : voltageFromPhasors(f.v, this.scratch);
    const i = f.i === null ? null : quantityFromPhasors(f.i, this.scratch);
    return this.result(f.ts, 'frame', 0, f.freq, this.voltageFlag(v), v, i);
  }

  private fromPhasorReused(f: PhasorFrame): SequenceResult {
    const rec = (this.record ??= {
      result: { ts: NaN, feeder: this.settings.id, window: 'frame', durationMs: 0, freq: null, flagged: false, v: null, i: null, count: 1 },
      v: emptyVoltageRecord(),
      i: emptyQuantityRecord(),
    });
    const r = rec.result;
    r.ts = f.ts;
    r.freq = f.freq;
    r.v = f.v === null ? null : voltageFromPhasorsInto(f.v, this.scratch, rec.v);
    r.i = f.i === null ? null : quantityFromPhasorsInto(f.i, this.scratch, rec.i);
    r.flagged = this.voltageFlag(r.v);
    return r;
  }

  private fromRms(f: RmsFrame): SequenceResult {
    const v = f.vll === null && f.vln === null ? null : voltageFromMagnitudes(f.vll, f.vln, this.scratch);
    const i = f.i === null ? null : currentFromMagnitudes(f.i, this.scratch, this.settings.currentsSumToZero === true);
    return this.result(f.ts, 'frame', 0, f.freq, this.voltageFlag(v), v, i);
  }

  private samples(f: SamplesFrame): void {
    if (this.estimator === null) {
      this.estimator = new WaveformEstimator({ nominalHz: this.settings.nominalHz, nominalVoltageLN: this.settings.nominalVoltageLN });
    }
    this.estimator.push(f, this.emitBasic);
  }

  private fromBasicWindow(w: BasicWindow): SequenceResult {
    let v: VoltageResult | null = null;
    let i: QuantityResult | null = null;
    if (w.v !== null) {
      v = voltageFromPhasors(w.v, this.scratch, triple(w.vThd));
      // Per-phase RMS of sampled input is the true RMS (IEC 61000-4-30 §5.2, from memory), not the fundamental.
      if (w.vRms !== null) v.rms = triple(w.vRms);
    }
    if (w.i !== null) {
      i = quantityFromPhasors(w.i, this.scratch, triple(w.iThd));
      if (w.iRms !== null) i.rms = triple(w.iRms);
    }
    return this.result(w.ts, 'basic', w.durationMs, w.freq, w.flagged, v, i);
  }

  private result(ts: number, window: 'frame' | 'basic', durationMs: number, freq: number | null, flagged: boolean, v: VoltageResult | null, i: QuantityResult | null): SequenceResult {
    return { ts, feeder: this.settings.id, window, durationMs, freq, flagged, v, i, count: 1 };
  }

  /**
   * Flags a frame whose phase voltages show a dip, swell or interruption
   * against the declared voltage (IEC 61000-4-30 §4.7 flagging concept, from memory), so
   * aggregates that include it are marked.
   */
  private voltageFlag(v: VoltageResult | null): boolean {
    const nominal = this.settings.nominalVoltageLN;
    if (v === null || nominal === null) return false;
    let lo: number, hi: number;
    if (v.rms !== null) {
      lo = Math.min(v.rms.a, v.rms.b, v.rms.c);
      hi = Math.max(v.rms.a, v.rms.b, v.rms.c);
    } else if (v.rmsLL !== null) {
      lo = Math.min(v.rmsLL.ab, v.rmsLL.bc, v.rmsLL.ca) * INV_SQRT3;
      hi = Math.max(v.rmsLL.ab, v.rmsLL.bc, v.rmsLL.ca) * INV_SQRT3;
    } else {
      return false;
    }
    return lo < DIP_THRESHOLD * nominal || hi > SWELL_THRESHOLD * nominal || lo < INTERRUPTION_THRESHOLD * nominal;
  }
}

function triple(buf: Float64Array | null): PhaseTriple | null {
  return buf === null ? null : { a: buf[0]!, b: buf[1]!, c: buf[2]! };
}

export interface PipelineStats {
  accepted: Record<string, number>;
  rejected: Record<string, Record<string, number>>;
}

export class Pipeline {
  private readonly processors = new Map<string, FeederProcessor>();
  private readonly configured: ReadonlyMap<string, FeederSettings>;
  private readonly limits: FrameLimits;
  private readonly maxFeeders: number;
  private readonly accepted: Record<string, number> = Object.create(null) as Record<string, number>;
  private readonly rejected: Record<string, Record<string, number>> = Object.create(null) as Record<string, Record<string, number>>;
  private readonly pendingRestore = new Map<string, AlarmTransition[]>();
  private readonly reuseFrameResults: boolean;
  // Each frame is consumed before the next is parsed: one set of buffers and one options record serve them all.
  private readonly validate: { feeder: string | undefined; kind: FrameKind | undefined; limits: FrameLimits; scratch: PhasorScratch };

  constructor(
    private readonly settings: PipelineSettings,
    options: PipelineOptions = {},
  ) {
    this.limits = settings.limits ?? DEFAULT_FRAME_LIMITS;
    this.reuseFrameResults = options.frameResults === 'reused';
    this.validate = { feeder: undefined, kind: undefined, limits: this.limits, scratch: createPhasorScratch() };
    this.maxFeeders = settings.maxFeeders ?? DEFAULT_MAX_FEEDERS;
    const m = new Map<string, FeederSettings>();
    for (const f of settings.feeders) m.set(f.id, f);
    this.configured = m;
    // Listed feeders exist from the start, so stale-data can fire for one that never sends.
    for (const f of settings.feeders) this.processors.set(f.id, new FeederProcessor(f, this.reuseFrameResults));
  }

  ingest(raw: RawFrame, out: PipelineOutput): void {
    const opts = this.validate;
    opts.feeder = raw.feeder;
    opts.kind = raw.kind;
    const p = raw.payload;
    const res = typeof p === 'string' || p instanceof Uint8Array ? parseFrame(p, opts) : validateFrame(p, opts);
    if (!res.ok) {
      this.reject(out, { ...res.error, feeder: feederHint(raw), origin: raw.origin });
      return;
    }
    this.ingestFrame(res.frame, out, raw.origin);
  }

  /** Processes an already-validated frame. */
  ingestFrame(frame: Frame, out: PipelineOutput, origin = ''): void {
    let proc = this.processors.get(frame.feeder);
    if (proc === undefined) {
      if (!this.settings.discoverFeeders) {
        this.reject(out, { feeder: null, code: 'FRAME_UNKNOWN_FEEDER', field: 'feeder', message: `feeder "${frame.feeder}" is not configured and discovery is off`, origin });
        return;
      }
      if (this.processors.size >= this.maxFeeders) {
        this.reject(out, { feeder: null, code: 'FRAME_UNKNOWN_FEEDER', field: 'feeder', message: `feeder "${frame.feeder}" not accepted: the limit of ${this.maxFeeders} feeders is reached`, origin });
        return;
      }
      proc = new FeederProcessor({ ...this.settings.defaults, id: frame.feeder }, this.reuseFrameResults);
      const restore = this.pendingRestore.get(frame.feeder);
      if (restore !== undefined) {
        proc.restore(restore);
        this.pendingRestore.delete(frame.feeder);
      }
      this.processors.set(frame.feeder, proc);
    }
    const rej = proc.process(frame, out);
    if (rej !== null) {
      this.reject(out, { ...rej, origin });
      return;
    }
    this.accepted[frame.feeder] = (this.accepted[frame.feeder] ?? 0) + 1;
  }

  tick(now: number, out: PipelineOutput): void {
    for (const proc of this.processors.values()) proc.tick(now, out);
  }

  flush(out: PipelineOutput): void {
    for (const proc of this.processors.values()) proc.flush(out);
  }

  /** Restores raised alarm states after a restart (from the store), so they are neither lost nor re-announced. */
  restoreAlarms(active: readonly AlarmTransition[]): void {
    const byFeeder = new Map<string, AlarmTransition[]>();
    for (const t of active) {
      const list = byFeeder.get(t.feeder) ?? [];
      list.push(t);
      byFeeder.set(t.feeder, list);
    }
    for (const [feeder, list] of byFeeder) {
      const proc = this.processors.get(feeder);
      if (proc !== undefined) proc.restore(list);
      else if (this.settings.discoverFeeders || this.configured.has(feeder)) this.pendingRestore.set(feeder, list);
    }
  }

  feederIds(): string[] {
    return [...this.processors.keys()];
  }

  feederSettings(feeder: string): FeederSettings | null {
    return this.processors.get(feeder)?.settings ?? null;
  }

  latest(feeder: string): SequenceResult | null {
    return this.processors.get(feeder)?.latest() ?? null;
  }

  stats(): PipelineStats {
    const rejected: Record<string, Record<string, number>> = {};
    for (const [k, v] of Object.entries(this.rejected)) rejected[k] = { ...v };
    return { accepted: { ...this.accepted }, rejected };
  }

  private reject(out: PipelineOutput, r: Rejection): void {
    out.rejections.push(r);
    // Count under the claimed feeder only while the number of labels stays bounded.
    let key = r.feeder ?? UNKNOWN_FEEDER_LABEL;
    if (!(key in this.rejected) && !this.processors.has(key) && Object.keys(this.rejected).length >= this.maxFeeders) key = UNKNOWN_FEEDER_LABEL;
    const byCode = (this.rejected[key] ??= Object.create(null) as Record<string, number>);
    byCode[r.code] = (byCode[r.code] ?? 0) + 1;
  }
}

/** The feeder a rejected payload claims, if it names one validly; counters stay bounded otherwise. */
function feederHint(raw: RawFrame): string | null {
  if (raw.feeder !== undefined && FEEDER_ID_PATTERN.test(raw.feeder)) return raw.feeder;
  const p = raw.payload;
  if (typeof p === 'object' && !(p instanceof Uint8Array) && typeof p.feeder === 'string' && FEEDER_ID_PATTERN.test(p.feeder)) return p.feeder;
  return null;
}
