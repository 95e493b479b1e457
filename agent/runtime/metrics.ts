/**
 * Prometheus metrics (prom-client). Counters that would otherwise cost a
 * label lookup per frame (frames accepted/rejected) are read from the
 * pipeline's own cumulative counts when /metrics is scraped, so they cost
 * nothing while nobody is watching; the rest are pushed on events that are
 * already rare (alarms, state changes, published batches).
 */
import { collectDefaultMetrics, Counter, Gauge, Histogram, Registry } from 'prom-client';
import type { SourceState, SourceStatus, StoreHealth } from '../core/ports.js';

export const SOURCE_STATES: readonly SourceState[] = ['idle', 'connecting', 'connected', 'reconnecting', 'closed', 'failed'];

/** Pipeline latency buckets, seconds: from 0.5 ms (one phasor frame) to 1 s (a stalled store). */
export const LATENCY_BUCKETS = [0.0005, 0.001, 0.0025, 0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1];

export type PublishedKind = 'sequence' | 'alarm' | 'event';

/** Cumulative counts per feeder and per feeder and reason, as Pipeline.stats() returns them. */
export interface FrameCounts {
  readonly accepted: Readonly<Record<string, number>>;
  readonly rejected: Readonly<Record<string, Readonly<Record<string, number>>>>;
}

export interface MetricsOptions {
  /** Also export Node process metrics (CPU, memory, event-loop lag). Default true. */
  readonly processMetrics?: boolean;
}

export interface SeqmonMetrics {
  readonly registry: Registry;
  /** Content-Type of the exposition text. */
  readonly contentType: string;
  /** Reads frame counts from this function at every scrape (e.g. () => pipeline.stats()). */
  bindFrameCounts(read: () => FrameCounts): void;
  /** Reads the state of these sources at every scrape. */
  bindSources(read: () => readonly SourceStatus[]): void;
  /** Reads the store's queue at every scrape. */
  bindStore(read: () => StoreHealth): void;
  /** Counts frames accepted when no pipeline counts are bound (e.g. a source counting itself). */
  frameAccepted(feeder: string, n?: number): void;
  frameRejected(feeder: string, reason: string, n?: number): void;
  resultsPublished(kind: PublishedKind, n?: number): void;
  alarmRaised(feeder: string, condition: string, level: string): void;
  sourceState(source: string, state: SourceState): void;
  storeQueue(queued: number, capacity: number): void;
  /** Time from a frame's arrival to its outputs being handed on, seconds. */
  observeLatency(seconds: number): void;
  /** The exposition text for GET /metrics. */
  metrics(): Promise<string>;
}

export function createMetrics(options: MetricsOptions = {}): SeqmonMetrics {
  const registry = new Registry();
  if (options.processMetrics ?? true) collectDefaultMetrics({ register: registry, prefix: 'seqmon_' });

  let readCounts: (() => FrameCounts) | null = null;
  let readSources: (() => readonly SourceStatus[]) | null = null;
  let readStore: (() => StoreHealth) | null = null;
  // Last values folded into the counters, so each scrape adds only what is new.
  const seenAccepted = new Map<string, number>();
  const seenRejected = new Map<string, number>();

  const accepted = new Counter({
    name: 'seqmon_frames_accepted_total',
    help: 'Input frames that passed validation, per feeder.',
    labelNames: ['feeder'] as const,
    registers: [registry],
    collect() {
      if (readCounts === null) return;
      for (const [feeder, n] of Object.entries(readCounts().accepted)) {
        const delta = n - (seenAccepted.get(feeder) ?? 0);
        if (delta > 0) this.inc({ feeder }, delta);
        seenAccepted.set(feeder, n);
      }
    },
  });
  const rejected = new Counter({
    name: 'seqmon_frames_rejected_total',
    help: 'Input frames rejected, per feeder and reason (an error code of docs/errors.md).',
    labelNames: ['feeder', 'reason'] as const,
    registers: [registry],
    collect() {
      if (readCounts === null) return;
      for (const [feeder, byReason] of Object.entries(readCounts().rejected)) {
        for (const [reason, n] of Object.entries(byReason)) {
          const key = `${feeder}\u0000${reason}`;
          const delta = n - (seenRejected.get(key) ?? 0);
          if (delta > 0) this.inc({ feeder, reason }, delta);
          seenRejected.set(key, n);
        }
      }
    },
  });
  const published = new Counter({
    name: 'seqmon_results_published_total',
    help: 'Messages handed to the result publisher, per kind (sequence, alarm, event).',
    labelNames: ['kind'] as const,
    registers: [registry],
  });
  const alarms = new Counter({
    name: 'seqmon_alarms_raised_total',
    help: 'Alarm raises, per feeder, condition and level.',
    labelNames: ['feeder', 'condition', 'level'] as const,
    registers: [registry],
  });
  const sourceStates = new Map<string, SourceState>();
  // Gauges below report through their collect functions, at scrape time.
  new Gauge({
    name: 'seqmon_source_state',
    help: 'State of each frame source: 1 for its current state, 0 for the others.',
    labelNames: ['source', 'state'] as const,
    registers: [registry],
    collect() {
      if (readSources !== null) for (const s of readSources()) sourceStates.set(s.name, s.state);
      for (const [source, current] of sourceStates) for (const state of SOURCE_STATES) this.set({ source, state }, state === current ? 1 : 0);
    },
  });
  let queued = 0;
  let capacity = 0;
  new Gauge({
    name: 'seqmon_store_queue_points',
    help: 'Points waiting in the store-and-forward queue.',
    registers: [registry],
    collect() {
      if (readStore !== null) {
        const h = readStore();
        queued = h.queued;
        capacity = h.queueCapacity;
      }
      this.set(queued);
    },
  });
  new Gauge({
    name: 'seqmon_store_queue_fill_ratio',
    help: 'Fill of the store-and-forward queue, 0 to 1 (0 when the store has no queue).',
    registers: [registry],
    collect() {
      this.set(capacity > 0 ? queued / capacity : 0);
    },
  });
  const latency = new Histogram({
    name: 'seqmon_pipeline_latency_seconds',
    help: 'Time from a frame arriving to its results being handed to stores and publishers.',
    buckets: LATENCY_BUCKETS,
    registers: [registry],
  });

  return {
    registry,
    contentType: registry.contentType,
    bindFrameCounts(read) {
      readCounts = read;
    },
    bindSources(read) {
      readSources = read;
    },
    bindStore(read) {
      readStore = read;
    },
    frameAccepted(feeder, n = 1) {
      accepted.inc({ feeder }, n);
    },
    frameRejected(feeder, reason, n = 1) {
      rejected.inc({ feeder, reason }, n);
    },
    resultsPublished(kind, n = 1) {
      published.inc({ kind }, n);
    },
    alarmRaised(feeder, condition, level) {
      alarms.inc({ feeder, condition, level });
    },
    sourceState(source, state) {
      sourceStates.set(source, state);
    },
    storeQueue(q, c) {
      queued = q;
      capacity = c;
    },
    observeLatency(seconds) {
      latency.observe(seconds);
    },
    metrics: () => registry.metrics(),
  };
}
