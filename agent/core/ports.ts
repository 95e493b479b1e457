/**
 * Interfaces the adapters implement. The core and the composition root
 * (agent/main.ts) speak only to these; which MQTT/OPC UA/COMTRADE source or
 * SQLite/InfluxDB store sits behind them is decided once, in main.ts.
 */
import type { AlarmTransition, DisturbanceEvent } from './detect/types.js';
import type { FrameKind } from './frames.js';
import type { AggregateWindow, SequenceResult } from './result.js';

/** A raw message from a source, validated by the pipeline (so all sources share one validator and its counters). */
export interface RawFrame {
  /** Feeder id taken from the topic or the source mapping, when the source knows it. */
  readonly feeder?: string | undefined;
  readonly kind?: FrameKind | undefined;
  /** JSON text/bytes, or an already-built object (OPC UA assembles objects). */
  readonly payload: string | Uint8Array | Record<string, unknown>;
  /** Where it came from, for logs: a topic, a node id, a file:line. */
  readonly origin: string;
}

/**
 * Hand-off from a source to the pipeline. Returns false when the pipeline
 * wants the source to pause; the source then waits for `onDrain`.
 */
export interface FrameSink {
  push(frame: RawFrame): boolean;
  onDrain(listener: () => void): void;
}

export type SourceState = 'idle' | 'connecting' | 'connected' | 'reconnecting' | 'closed' | 'failed';

export interface SourceStatus {
  readonly name: string;
  readonly state: SourceState;
  readonly since: number;
  readonly lastError: string | null;
}

export interface FrameSource {
  readonly name: string;
  start(sink: FrameSink): Promise<void>;
  status(): SourceStatus;
  /** Stop intake and release the connection gracefully. Idempotent. */
  close(): Promise<void>;
  /** Abort at once. Idempotent. */
  destroy(err?: Error): void;
}

export interface TimeRange {
  readonly from: number;
  readonly to: number;
}

export interface AlarmQuery {
  readonly feeder?: string | undefined;
  readonly from?: number | undefined;
  readonly to?: number | undefined;
}

export interface EventQuery {
  readonly feeder?: string | undefined;
  readonly from?: number | undefined;
  readonly to?: number | undefined;
}

export interface StoreHealth {
  readonly kind: string;
  readonly ok: boolean;
  readonly detail: string | null;
  /** Store-and-forward queue: points waiting on disk, and its bound (0/0 when the store has none). */
  readonly queued: number;
  readonly queueCapacity: number;
}

export interface TrendStore {
  /** Aggregated results (3s, 10min, 2h). Resolves once the batch is durable (in the store or its on-disk queue). */
  writeResults(results: readonly SequenceResult[]): Promise<void>;
  writeAlarm(transition: AlarmTransition): Promise<void>;
  writeEvent(event: DisturbanceEvent): Promise<void>;
  /** Results of one feeder and window with from <= ts < to, oldest first. */
  queryTrend(feeder: string, window: AggregateWindow, range: TimeRange): Promise<SequenceResult[]>;
  /** Alarm transitions, oldest first. */
  queryAlarms(query: AlarmQuery): Promise<AlarmTransition[]>;
  /** The latest transition of every (feeder, condition) whose state is raised. */
  activeAlarms(): Promise<AlarmTransition[]>;
  queryEvents(query: EventQuery): Promise<DisturbanceEvent[]>;
  /** Feeders with any stored data, and the newest result time of each. */
  feeders(): Promise<{ feeder: string; lastTs: number }[]>;
  health(): StoreHealth;
  close(): Promise<void>;
  destroy(err?: Error): void;
}

export interface ResultPublisher {
  publishResult(result: SequenceResult): void;
  publishAlarm(transition: AlarmTransition): void;
  publishEvent(event: DisturbanceEvent): void;
  close(): Promise<void>;
}

export type TimerHandle = unknown;

/** Injected timers, so tests can drive time (vi.useFakeTimers) and the core never reads a clock. */
export interface Scheduler {
  now(): number;
  setTimeout(fn: () => void, ms: number): TimerHandle;
  clearTimeout(handle: TimerHandle): void;
  setInterval(fn: () => void, ms: number): TimerHandle;
  clearInterval(handle: TimerHandle): void;
}
