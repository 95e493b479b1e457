/**
 * Logging: pino, JSON lines on stdout. Secrets never reach a log line: the
 * redact list covers every secret the configuration can hold, wherever a
 * caller nests it. Rejected frames are logged through a per-feeder rate
 * limiter, because one misconfigured publisher can send thousands of bad
 * frames a second; every rejection is still counted in the metrics.
 */
import pino from 'pino';
import type { DestinationStream, Logger } from 'pino';
import type { LogLevel, SeqmonConfig } from './config/types.js';

export type { Logger } from 'pino';

const SECRET_KEYS = ['password', 'token', 'authorization', 'secret', 'apiKey'];

/** Paths pino censors (at the top level and up to three levels down, plus HTTP request headers). */
export const REDACT_PATHS: readonly string[] = Object.freeze([
  ...SECRET_KEYS,
  ...SECRET_KEYS.map((k) => `*.${k}`),
  ...SECRET_KEYS.map((k) => `*.*.${k}`),
  ...SECRET_KEYS.map((k) => `*.*.*.${k}`),
  'req.headers.authorization',
  'req.headers.cookie',
  'headers.authorization',
  'headers.cookie',
]);

export const REDACTED = '[redacted]';

export interface LoggerOptions {
  readonly level: LogLevel;
  /** Name bound to every line. Default 'seqmon'. */
  readonly name?: string;
  /** Where lines go; stdout by default (tests pass a stream). */
  readonly destination?: DestinationStream;
}

export function createLogger(options: LoggerOptions): Logger {
  return pino(
    {
      name: options.name ?? 'seqmon',
      level: options.level,
      redact: { paths: [...REDACT_PATHS], censor: REDACTED },
      timestamp: pino.stdTimeFunctions.isoTime,
      base: { pid: process.pid },
    },
    // Synchronous writes: seqmon logs state changes, not frames, so the cost is small, and no line is lost on a crash.
    options.destination ?? pino.destination({ fd: 1, sync: true }),
  );
}

/** The logger a configuration asks for. */
export function loggerFor(config: SeqmonConfig, destination?: DestinationStream): Logger {
  return createLogger({ level: config.logging.level, ...(destination === undefined ? {} : { destination }) });
}

/** A copy of the configuration that is safe to log: every secret replaced by [redacted] (null stays null). */
export function redactedConfig(config: SeqmonConfig): Record<string, unknown> {
  const hide = (v: string | null): string | null => (v === null ? null : REDACTED);
  return {
    ...config,
    mqtt: { ...config.mqtt, password: hide(config.mqtt.password) },
    store: { ...config.store, password: hide(config.store.password) },
    http: { ...config.http, token: hide(config.http.token) },
    opcua: { ...config.opcua, user: config.opcua.user === null ? null : { ...config.opcua.user, password: hide(config.opcua.user.password) } },
  };
}

/** What the limiter needs of a rejection (the pipeline's Rejection fits). */
export interface RejectionLine {
  readonly feeder: string | null;
  readonly code: string;
  readonly field: string | null;
  readonly message: string;
  readonly origin: string;
}

export interface RejectionLogOptions {
  /** Lines per feeder per window; 0 logs only the summaries. */
  readonly perWindow: number;
  /** Window length, ms. Default one minute. */
  readonly windowMs?: number;
  /** Clock (ms); adapters pass their scheduler's now. */
  readonly now: () => number;
}

interface Window {
  start: number;
  logged: number;
  suppressed: number;
  byCode: Record<string, number>;
}

/** Rejections of frames whose feeder id was unusable are grouped under this name. */
export const UNKNOWN_FEEDER = '(unknown)';

/**
 * Logs at most `perWindow` rejected frames per feeder per window as warnings;
 * the rest are counted and written as one summary line per feeder when its
 * window has passed (on the next rejection, on tick(), or on flush()).
 */
export class RejectionLog {
  private readonly windows = new Map<string, Window>();
  private readonly perWindow: number;
  private readonly windowMs: number;
  private readonly now: () => number;

  constructor(
    private readonly logger: Pick<Logger, 'warn'>,
    options: RejectionLogOptions,
  ) {
    this.perWindow = options.perWindow;
    this.windowMs = options.windowMs ?? 60_000;
    this.now = options.now;
  }

  rejected(r: RejectionLine): void {
    const feeder = r.feeder ?? UNKNOWN_FEEDER;
    const now = this.now();
    let w = this.windows.get(feeder);
    if (w === undefined || now - w.start >= this.windowMs) {
      if (w !== undefined) this.summarise(feeder, w);
      w = { start: now, logged: 0, suppressed: 0, byCode: {} };
      this.windows.set(feeder, w);
    }
    if (w.logged < this.perWindow) {
      w.logged++;
      this.logger.warn({ feeder, code: r.code, field: r.field, origin: r.origin }, `frame rejected: ${r.message}`);
    } else {
      w.suppressed++;
      w.byCode[r.code] = (w.byCode[r.code] ?? 0) + 1;
    }
  }

  /** Writes the summaries of windows that have passed and forgets quiet feeders; call now and then (e.g. every 10 s). */
  tick(): void {
    const now = this.now();
    for (const [feeder, w] of this.windows) {
      if (now - w.start < this.windowMs) continue;
      this.summarise(feeder, w);
      this.windows.delete(feeder);
    }
  }

  /** Writes every pending summary (at shutdown). */
  flush(): void {
    for (const [feeder, w] of this.windows) this.summarise(feeder, w);
    this.windows.clear();
  }

  private summarise(feeder: string, w: Window): void {
    if (w.suppressed === 0) return;
    this.logger.warn(
      { feeder, suppressed: w.suppressed, byCode: { ...w.byCode }, windowMs: this.windowMs },
      `${w.suppressed} more rejected frame${w.suppressed === 1 ? '' : 's'} of feeder ${feeder} not logged (limit ${this.perWindow} per ${Math.round(this.windowMs / 1000)} s)`,
    );
    w.suppressed = 0;
    w.byCode = {};
  }
}
