/**
 * Where the pipeline runs. The service talks to a PipelineHost; the inline
 * host runs the pipeline on the caller's thread, the worker host
 * (pipeline-thread.ts) on a worker thread so that MQTT I/O and computation
 * use both cores. Outputs reach the service through one callback either way.
 */
import type { AlarmTransition } from '../core/detect/types.js';
import type { FeederSettings, PipelineOutput, PipelineSettings, PipelineStats } from '../core/pipeline.js';
import { clearOutput, createOutput, Pipeline } from '../core/pipeline.js';
import type { RawFrame } from '../core/ports.js';
import type { SequenceResult } from '../core/result.js';

export type OutputListener = (out: PipelineOutput) => void;

export interface PipelineHost {
  /** Hands one raw frame on; false asks the source to pause until onDrain. */
  ingest(raw: RawFrame): boolean;
  onDrain(listener: () => void): void;
  tick(now: number): void;
  restoreAlarms(active: readonly AlarmTransition[]): void;
  latest(feeder: string): SequenceResult | null;
  feederIds(): string[];
  feederSettings(feeder: string): FeederSettings | null;
  stats(): PipelineStats;
  /** Processes everything handed on so far, then stops. Idempotent. */
  close(): Promise<void>;
  destroy(): void;
}

/** Settings of a feeder as the pipeline would build them (listed, else the defaults). */
export function settingsFor(settings: PipelineSettings, feeder: string): FeederSettings {
  return settings.feeders.find((f) => f.id === feeder) ?? { ...settings.defaults, id: feeder };
}

/** The pipeline on the calling thread: outputs are delivered synchronously from ingest() and tick(). */
export class InlinePipelineHost implements PipelineHost {
  private readonly pipeline: Pipeline;
  private readonly out = createOutput();

  constructor(
    settings: PipelineSettings,
    private readonly onOutput: OutputListener,
    private readonly onError: (err: unknown, raw: RawFrame | null) => void,
  ) {
    this.pipeline = new Pipeline(settings);
  }

  ingest(raw: RawFrame): boolean {
    try {
      this.pipeline.ingest(raw, this.out);
    } catch (err) {
      this.onError(err, raw);
    }
    this.deliver();
    return true;
  }

  onDrain(): void {
    // Never pauses on its own.
  }

  tick(now: number): void {
    try {
      this.pipeline.tick(now, this.out);
    } catch (err) {
      this.onError(err, null);
    }
    this.deliver();
  }

  restoreAlarms(active: readonly AlarmTransition[]): void {
    this.pipeline.restoreAlarms(active);
  }

  latest(feeder: string): SequenceResult | null {
    return this.pipeline.latest(feeder);
  }

  feederIds(): string[] {
    return this.pipeline.feederIds();
  }

  feederSettings(feeder: string): FeederSettings | null {
    return this.pipeline.feederSettings(feeder);
  }

  stats(): PipelineStats {
    return this.pipeline.stats();
  }

  async close(): Promise<void> {
    // Nothing is buffered: every frame was processed inside ingest().
  }

  destroy(): void {
    // Nothing to abort.
  }

  private deliver(): void {
    this.onOutput(this.out);
    clearOutput(this.out);
  }
}
