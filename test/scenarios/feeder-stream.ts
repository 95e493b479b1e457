/**
 * Drives phasor frames (the JSON of shared/ARCHITECTURE.md, "Input frames")
 * through the real pipeline (agent/core/pipeline.ts) for one fictional feeder
 * and collects what detection reports. Times are epoch ms of the data.
 */
import { expect } from 'vitest';
import type { DetectionSettings } from '../../agent/core/detect/settings.js';
import { DEFAULT_DETECTION } from '../../agent/core/detect/settings.js';
import type { AlarmTransition, DisturbanceEvent } from '../../agent/core/detect/types.js';
import type { Diagnostic, PipelineOutput } from '../../agent/core/pipeline.js';
import { clearOutput, createOutput, Pipeline } from '../../agent/core/pipeline.js';
import type { PolarSet } from '../unit/detect/results.js';

/** Fictional 12.47 kV feeder (7.2 kV line-to-neutral) of an invented substation. */
export const FEEDER = 'FICT-SUB1-F3';
export const VLN = 7200;
/** 2026-03-02 14:00:00 UTC: on a 10-min (and 3-s) clock tick, so aggregation buckets start at T0. */
export const T0 = Date.UTC(2026, 2, 2, 14, 0, 0);

export type FrameFn = (t: number) => { v: PolarSet; i?: PolarSet | null };

export class FeederStream {
  readonly pipeline: Pipeline;
  readonly alarms: AlarmTransition[] = [];
  readonly events: DisturbanceEvent[] = [];
  readonly diagnostics: Diagnostic[] = [];
  readonly aggregates: PipelineOutput['aggregates'] = [];
  private readonly out = createOutput();

  constructor(detection: DetectionSettings = DEFAULT_DETECTION, nominalVoltageLN: number | null = VLN, currentsSumToZero = false) {
    const feeder = { id: FEEDER, nominalHz: 60 as const, nominalVoltageLN, detection, currentsSumToZero };
    this.pipeline = new Pipeline({ discoverFeeders: false, defaults: { nominalHz: 60, nominalVoltageLN, detection, currentsSumToZero }, feeders: [feeder] });
  }

  /** One phasor frame at `ts`. */
  frame(ts: number, v: PolarSet, i: PolarSet | null = null): void {
    const payload: Record<string, unknown> = { ts, v };
    if (i !== null) payload.i = i;
    this.pipeline.ingest({ feeder: FEEDER, kind: 'phasor', payload, origin: 'scenario' }, this.out);
    expect(this.out.rejections).toEqual([]);
    this.collect();
  }

  /** One rms frame (magnitudes only, as feeder meters send them): line-to-line voltages and phase currents. */
  rmsFrame(ts: number, vll: { ab: number; bc: number; ca: number }, i: { a: number; b: number; c: number }): void {
    this.pipeline.ingest({ feeder: FEEDER, kind: 'rms', payload: { ts, vll, i }, origin: 'scenario' }, this.out);
    expect(this.out.rejections).toEqual([]);
    this.collect();
  }

  /** One samples frame (instantaneous values, `rate` samples per second, first sample at `ts`). */
  samplesFrame(ts: number, rate: number, v: [number[], number[], number[]], i: [number[], number[], number[]] | null): void {
    const payload: Record<string, unknown> = { ts, rate, v: { a: v[0], b: v[1], c: v[2] } };
    if (i !== null) payload.i = { a: i[0], b: i[1], c: i[2] };
    this.pipeline.ingest({ feeder: FEEDER, kind: 'samples', payload, origin: 'scenario' }, this.out);
    expect(this.out.rejections).toEqual([]);
    this.collect();
  }

  /** Frames every `stepMs` for from ≤ t < to; returns the first time not sent. */
  run(from: number, to: number, stepMs: number, fn: FrameFn): number {
    let t = from;
    for (; t < to; t += stepMs) {
      const f = fn(t);
      this.frame(t, f.v, f.i ?? null);
    }
    return t;
  }

  tick(now: number): void {
    this.pipeline.tick(now, this.out);
    this.collect();
  }

  /** Compact view of the alarm sequence: [condition, state, level, phase, ms since T0]. */
  alarmLog(): [string, string, string, string | null, number][] {
    return this.alarms.map((a) => [a.condition, a.state, a.level, a.phase, a.ts - T0]);
  }

  private collect(): void {
    this.alarms.push(...this.out.alarms);
    this.events.push(...this.out.events);
    this.diagnostics.push(...this.out.diagnostics);
    this.aggregates.push(...this.out.aggregates);
    clearOutput(this.out);
  }
}
