/**
 * The pipeline on a worker thread. The source's thread only copies raw
 * payloads into a batch buffer, which is transferred to the worker (no copy)
 * and comes back with the answer for reuse; validation, phasor estimation,
 * sequence math, aggregation and detection run on the other core. Feeder,
 * kind and origin travel once per distinct source (a small key table both
 * threads keep), then as one number per frame. Batches close at BATCH_FRAMES
 * frames or at the end of the current turn of the event loop, so latency
 * stays at one turn when traffic is light. Backpressure: past MAX_IN_FLIGHT
 * frames not yet answered by the worker, ingest() returns false and onDrain
 * listeners run once the worker has caught up to half of that.
 */
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';
import type { AlarmTransition } from '../core/detect/types.js';
import type { FeederSettings, PipelineOutput, PipelineSettings, PipelineStats } from '../core/pipeline.js';
import type { RawFrame } from '../core/ports.js';
import type { SequenceResult } from '../core/result.js';
import type { HostMessage, WorkerMessage } from './pipeline-messages.js';
import type { OutputListener, PipelineHost } from './pipeline-host.js';
import { settingsFor } from './pipeline-host.js';

const BATCH_FRAMES = 256;
const MAX_IN_FLIGHT = 20_000;
/** A batch buffer starts this large (256 phasor frames take about 60 kB) and grows within a batch as needed. */
const BATCH_BYTES = 128 * 1024;
/** Returned batch buffers kept for reuse, and the largest kept (one grown for a big samples frame is let go). */
const SPARE_BUFFERS = 4;
const MAX_SPARE_BYTES = 1024 * 1024;
/** Bounds on the key table (entries, and characters of the strings in it); past either, numbering starts over. */
const MAX_KEYS = 16_384;
const MAX_KEY_CHARS = 2_000_000;

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
  // The open batch: payload bytes, frame offsets and keys, and payloads that are objects.
  private bytes = new Uint8Array(BATCH_BYTES);
  private used = 0;
  private count = 0;
  private offsets = new Uint32Array(BATCH_FRAMES + 1);
  private keys = new Uint32Array(BATCH_FRAMES);
  private objects: (Record<string, unknown> | null)[] | null = null;
  private readonly spare: ArrayBuffer[] = [];
  // The key table: origin -> (feeder, kind, id); entries not yet sent to the worker.
  private readonly keyByOrigin = new Map<string, { readonly feeder: string; readonly kind: string; readonly id: number }>();
  private nextKey = 0;
  private keyChars = 0;
  private newKeys: (number | string)[] = [];
  private resetKeys = false;
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
    const key = this.keyOf(raw);
    const k = this.count;
    this.offsets[k] = this.used;
    this.keys[k] = key;
    const p = raw.payload;
    if (p instanceof Uint8Array) this.append(p);
    else if (typeof p === 'string') this.append(this.encoder.encode(p));
    else (this.objects ??= new Array<Record<string, unknown> | null>(BATCH_FRAMES).fill(null))[k] = p;
    this.count = k + 1;
    this.inFlight++;
    if (this.count >= BATCH_FRAMES) this.flush();
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

  /** The key of (feeder, kind, origin), added to the table (and sent with the batch) when new. */
  private keyOf(raw: RawFrame): number {
    const feeder = raw.feeder ?? '', kind = raw.kind ?? '', origin = raw.origin;
    const known = this.keyByOrigin.get(origin);
    if (known !== undefined && known.feeder === feeder && known.kind === kind) return known.id;
    const chars = feeder.length + origin.length;
    if (this.nextKey >= MAX_KEYS || this.keyChars + chars > MAX_KEY_CHARS) {
      // Frames already in the open batch use the old numbering: send them before it starts over.
      this.flush();
      this.keyByOrigin.clear();
      this.nextKey = 0;
      this.keyChars = 0;
      this.newKeys = [];
      this.resetKeys = true;
    }
    const id = this.nextKey++;
    this.keyChars += chars;
    this.keyByOrigin.set(origin, { feeder, kind, id });
    this.newKeys.push(id, feeder, kind, origin);
    return id;
  }

  private append(payload: Uint8Array): void {
    const need = this.used + payload.byteLength;
    if (need > this.bytes.byteLength) {
      const grown = new Uint8Array(Math.max(need, 2 * this.bytes.byteLength));
      grown.set(this.bytes.subarray(0, this.used));
      this.bytes = grown;
    }
    this.bytes.set(payload, this.used);
    this.used = need;
  }

  private flush(): void {
    this.scheduled = false;
    const n = this.count;
    if (n === 0) return;
    this.offsets[n] = this.used;
    const bytes = this.bytes.buffer as ArrayBuffer;
    const offsets = this.offsets, keys = this.keys;
    const objects = this.objects === null ? null : this.objects.slice(0, n);
    const newKeys = this.newKeys, resetKeys = this.resetKeys;
    this.bytes = new Uint8Array(this.spare.pop() ?? new ArrayBuffer(BATCH_BYTES));
    this.used = 0;
    this.count = 0;
    this.offsets = new Uint32Array(BATCH_FRAMES + 1);
    this.keys = new Uint32Array(BATCH_FRAMES);
    this.objects = null;
    this.newKeys = [];
    this.resetKeys = false;
    const id = this.nextId++;
    this.sentAt.set(id, performance.now());
    try {
      this.post({ t: 'frames', id, count: n, bytes, offsets, keys, newKeys, resetKeys, objects }, [bytes, offsets.buffer, keys.buffer]);
    } catch (err) {
      // Only a payload object that cannot be copied between threads gets here (a source bug, never wire JSON):
      // drop the batch with a logged reason rather than crash, and release its place in the bound. The keys it
      // introduced never reached the worker: start the numbering over, so that none is used unsent.
      this.sentAt.delete(id);
      this.inFlight -= n;
      this.keyByOrigin.clear();
      this.nextKey = 0;
      this.keyChars = 0;
      this.resetKeys = true;
      this.callbacks.onError(`a batch of ${n} frames could not be handed to the pipeline worker and was dropped: ${err instanceof Error ? err.message : String(err)}`, null, null);
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
        if (m.bytes !== null && m.bytes.byteLength <= MAX_SPARE_BYTES && this.spare.length < SPARE_BUFFERS) this.spare.push(m.bytes);
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
