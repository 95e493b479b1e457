/**
 * The pipeline on a worker thread. The source's thread only packs raw
 * payloads into batches (one transferred buffer per batch, no copy back);
 * validation, phasor estimation, sequence math, aggregation and detection
 * run on the other core. Batches close at BATCH_FRAMES frames or at the end
 * of the current turn of the event loop, so latency stays at one turn when
 * traffic is light. Backpressure: past MAX_IN_FLIGHT frames not yet answered
 * by the worker, ingest() returns false and onDrain listeners run once the
 * worker has caught up to half of that.
 */
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';
import type { AlarmTransition } from '../core/detect/types.js';
import type { FrameKind } from '../core/frames.js';
import type { FeederSettings, PipelineOutput, PipelineSettings, PipelineStats } from '../core/pipeline.js';
import type { RawFrame } from '../core/ports.js';
import type { SequenceResult } from '../core/result.js';
import type { HostMessage, WorkerMessage } from './pipeline-messages.js';
import type { OutputListener, PipelineHost } from './pipeline-host.js';
import { settingsFor } from './pipeline-host.js';

const BATCH_FRAMES = 256;
const MAX_IN_FLIGHT = 20_000;

const WORKER_URL = new URL('./pipeline-worker.js', import.meta.url);

/** True when the compiled worker script is present (it is not when running from TypeScript sources). */
export function workerAvailable(): boolean {
  return existsSync(fileURLToPath(WORKER_URL));
}

export interface PipelineThreadCallbacks {
  readonly onOutput: OutputListener;
  /** A frame (or a tick) threw inside the worker; it was dropped and processing went on. */
  readonly onError: (message: string, stack: string | null, origin: string | null) => void;
  /** The worker died: the service can no longer compute anything. */
  readonly onFatal: (err: Error) => void;
  /** Seconds from handing a batch over to receiving its outputs. */
  readonly onLatency?: (seconds: number) => void;
}

export class PipelineThread implements PipelineHost {
  private readonly worker: Worker;
  private readonly encoder = new TextEncoder();
  private pending: { payload: Uint8Array | Record<string, unknown>; feeder: string | null; kind: FrameKind | null; origin: string }[] = [];
  private pendingBytes = 0;
  private scheduled = false;
  private nextId = 0;
  private inFlight = 0;
  private processed = 0;
  private paused = false;
  private readonly drainListeners: (() => void)[] = [];
  private readonly sentAt = new Map<number, number>();
  private readonly latestByFeeder = new Map<string, SequenceResult>();
  private feeders: string[] = [];
  private cachedStats: PipelineStats = { accepted: {}, rejected: {} };
  private closing: Promise<void> | null = null;
  private closedResolve: (() => void) | null = null;
  private stopped = false;
  private readonly out: PipelineOutput = { results: [], aggregates: [], alarms: [], events: [], diagnostics: [], rejections: [] };

  constructor(
    private readonly settings: PipelineSettings,
    private readonly callbacks: PipelineThreadCallbacks,
  ) {
    // A modest young generation keeps the worker's resident memory near the main thread's; larger buys no throughput here.
    this.worker = new Worker(WORKER_URL, { workerData: { settings }, resourceLimits: { maxYoungGenerationSizeMb: 16 } });
    this.worker.on('message', (m: WorkerMessage) => this.onMessage(m));
    this.worker.on('error', (err) => {
      if (!this.stopped) callbacks.onFatal(err);
    });
    this.worker.on('exit', (code) => {
      if (!this.stopped) callbacks.onFatal(new Error(`pipeline worker exited with code ${code}`));
      this.closedResolve?.();
    });
  }

  ingest(raw: RawFrame): boolean {
    const p = raw.payload;
    const payload = typeof p === 'string' ? this.encoder.encode(p) : p;
    if (payload instanceof Uint8Array) this.pendingBytes += payload.byteLength;
    this.pending.push({ payload, feeder: raw.feeder ?? null, kind: raw.kind ?? null, origin: raw.origin });
    this.inFlight++;
    if (this.pending.length >= BATCH_FRAMES) this.flush();
    else if (!this.scheduled) {
      this.scheduled = true;
      setImmediate(() => this.flush());
    }
    if (this.inFlight >= MAX_IN_FLIGHT) this.paused = true;
    return !this.paused;
  }

  onDrain(listener: () => void): void {
    this.drainListeners.push(listener);
  }

  tick(now: number): void {
    this.flush();
    this.post({ t: 'tick', now });
  }

  restoreAlarms(active: readonly AlarmTransition[]): void {
    this.post({ t: 'restore', active: [...active] });
  }

  latest(feeder: string): SequenceResult | null {
    return this.latestByFeeder.get(feeder) ?? null;
  }

  feederIds(): string[] {
    return [...this.feeders];
  }

  feederSettings(feeder: string): FeederSettings | null {
    return this.feeders.includes(feeder) ? settingsFor(this.settings, feeder) : null;
  }

  stats(): PipelineStats {
    return this.cachedStats;
  }

  /** Frames the worker has finished with (accepted or rejected). */
  processedFrames(): number {
    return this.processed;
  }

  close(): Promise<void> {
    this.closing ??= new Promise<void>((resolve) => {
      this.closedResolve = resolve;
      this.flush();
      this.post({ t: 'close' });
    }).then(async () => {
      this.stopped = true;
      await this.worker.terminate();
    });
    return this.closing;
  }

  destroy(): void {
    this.stopped = true;
    void this.worker.terminate();
  }

  private post(m: HostMessage, transfer: ArrayBuffer[] = []): void {
    if (this.stopped) return;
    this.worker.postMessage(m, transfer);
  }

  private flush(): void {
    this.scheduled = false;
    const batch = this.pending;
    if (batch.length === 0) return;
    this.pending = [];
    const bytes = new ArrayBuffer(this.pendingBytes);
    this.pendingBytes = 0;
    const view = new Uint8Array(bytes);
    const offsets = new Uint32Array(batch.length + 1);
    const feeders: (string | null)[] = new Array(batch.length);
    const kinds: (FrameKind | null)[] = new Array(batch.length);
    const origins: string[] = new Array(batch.length);
    const objects: (Record<string, unknown> | null)[] = new Array(batch.length);
    let at = 0;
    for (let k = 0; k < batch.length; k++) {
      const item = batch[k]!;
      offsets[k] = at;
      if (item.payload instanceof Uint8Array) {
        view.set(item.payload, at);
        at += item.payload.byteLength;
        objects[k] = null;
      } else objects[k] = item.payload;
      feeders[k] = item.feeder;
      kinds[k] = item.kind;
      origins[k] = item.origin;
    }
    offsets[batch.length] = at;
    const id = this.nextId++;
    this.sentAt.set(id, performance.now());
    try {
      this.post({ t: 'frames', id, count: batch.length, bytes, offsets, feeders, kinds, origins, objects }, [bytes]);
    } catch (err) {
      // Only a payload object that cannot be copied between threads gets here (a source bug, never wire JSON):
      // drop the batch with a logged reason rather than crash, and release its place in the bound.
      this.sentAt.delete(id);
      this.inFlight -= batch.length;
      this.callbacks.onError(`a batch of ${batch.length} frames could not be handed to the pipeline worker and was dropped: ${err instanceof Error ? err.message : String(err)}`, null, batch[0]!.origin);
    }
  }

  private onMessage(m: WorkerMessage): void {
    switch (m.t) {
      case 'out': {
        if (m.id >= 0) {
          const t0 = this.sentAt.get(m.id);
          this.sentAt.delete(m.id);
          if (t0 !== undefined) this.callbacks.onLatency?.((performance.now() - t0) / 1000);
        }
        this.inFlight -= m.n;
        this.processed += m.n;
        for (const r of m.latest) this.latestByFeeder.set(r.feeder, r);
        if (m.feeders !== null) this.feeders = m.feeders;
        if (m.stats !== null) this.cachedStats = m.stats;
        const o = this.out;
        o.results = m.latest;
        o.aggregates = m.aggregates;
        o.alarms = m.alarms;
        o.events = m.events;
        o.diagnostics = m.diagnostics;
        o.rejections = m.rejections;
        this.callbacks.onOutput(o);
        if (this.paused && this.inFlight < MAX_IN_FLIGHT / 2) {
          this.paused = false;
          for (const l of this.drainListeners) l();
        }
        break;
      }
      case 'error':
        this.callbacks.onError(m.message, m.stack, m.origin);
        break;
      case 'closed':
        this.closedResolve?.();
        break;
    }
  }
}
