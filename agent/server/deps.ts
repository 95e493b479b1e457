/**
 * What the HTTP server needs from the rest of the agent. agent/main.ts builds
 * one of these from the real adapters; tests build one from the memory store
 * and a LiveHub. The server never imports another adapter folder: the live
 * feed is described here by the shape it must have (agent/publish/live-hub.ts
 * has it).
 */
import type { FastifyBaseLogger } from 'fastify';
import type { Registry } from 'prom-client';
import type { SourceStatus, StoreHealth, TrendStore } from '../core/ports.js';
import type { SequenceResult } from '../core/result.js';

/** A limit pair as shown to users, percent. */
export interface LimitPair {
  readonly enabled: boolean;
  readonly warning: number;
  readonly alarm: number;
}

/** The detection limits the dashboard draws and the API reports. */
export interface FeederLimits {
  readonly voltageUnbalance: LimitPair;
  readonly zeroSequenceVoltage: LimitPair;
  readonly currentUnbalance: LimitPair;
  /** Data older than this counts as stale, ms. */
  readonly staleAfterMs: number;
}

export interface FeederInfo {
  readonly id: string;
  readonly nominalHz: 50 | 60;
  readonly nominalVoltageLN: number | null;
  readonly limits: FeederLimits;
  /** Time of the newest result, epoch ms; null before the first one. */
  readonly lastTs: number | null;
  /** Names of the sources that feed this feeder. */
  readonly sources: readonly string[];
}

export interface ServiceStatus {
  /** True when the data comes from the built-in simulator of the fictional demo substation. */
  readonly demo: boolean;
  readonly sources: readonly SourceStatus[];
  readonly store: StoreHealth;
  /** Process start, epoch ms. */
  readonly startedAt: number;
  /** Rejected frames per feeder ('' when unknown) and per reason code. */
  readonly rejected: Readonly<Record<string, Readonly<Record<string, number>>>>;
}

/** One subscriber of the live feed. */
export interface LiveSubscription {
  /** Delivers bytes still queued once the socket can take them again. */
  drain(): void;
  /** Queues an SSE comment (heartbeat) through the same bounded buffer. */
  comment(text: string): void;
  close(): void;
}

export interface LiveSubscribeOptions {
  /** Only this feeder's messages (alarms and events of other feeders are skipped too); null for all. */
  readonly feeder: string | null;
  /** Writes one chunk; returns false when the socket buffer is full (as Writable.write does). */
  readonly write: (chunk: string) => boolean;
  /** Called once when the hub drops this subscriber because its buffer overflowed. */
  readonly onDrop: () => void;
}

export interface LiveStats {
  readonly subscribers: number;
  readonly dropped: number;
  readonly published: number;
}

/** The live feed (agent/publish/live-hub.ts implements it). */
export interface LiveFeed {
  subscribe(options: LiveSubscribeOptions): LiveSubscription;
  stats(): LiveStats;
}

export interface SecuritySettings {
  /** Address to listen on; 127.0.0.1 by default. */
  readonly host: string;
  /** When set, every /api and /metrics request must carry it (Authorization: Bearer, or ?token= for SSE). */
  readonly token: string | null;
  /** Requests per minute per client address; 0 turns the limit off. */
  readonly rateLimitPerMin: number;
  readonly bodyLimitBytes: number;
  /** True when main.ts serves HTTPS. */
  readonly tlsConfigured: boolean;
  /** True when the operator accepts plain HTTP beyond loopback. */
  readonly acknowledgeInsecure: boolean;
}

export interface ServerDeps {
  readonly store: TrendStore;
  readonly live: LiveFeed;
  /** Newest 'frame'/'basic' result of a feeder, else its newest '3s' result, else null. */
  latest(feeder: string): SequenceResult | null;
  feeders(): readonly FeederInfo[];
  status(): ServiceStatus;
  readonly metrics: Registry;
  /** Folder with the built dashboard (dist/dashboard); null serves no dashboard. */
  readonly dashboardDir: string | null;
  readonly security: SecuritySettings;
  /** A pino logger (or fastify's logger options turned off with false). */
  readonly logger: FastifyBaseLogger | false;
  /** Certificate and key (PEM) to serve HTTPS; null or absent serves plain HTTP. */
  readonly https?: { readonly cert: string | Buffer; readonly key: string | Buffer } | null | undefined;
  /** Clock for default time ranges and the rate limiter; Date.now when absent (tests pass their own). */
  readonly now?: (() => number) | undefined;
  /** SSE heartbeat interval, ms (15 000 when absent). */
  readonly liveHeartbeatMs?: number | undefined;
}
