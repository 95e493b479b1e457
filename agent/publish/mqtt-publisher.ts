/**
 * ResultPublisher over MQTT (shared/ARCHITECTURE.md, "Outputs"):
 *   <out>/<feeder>/sequence            resultToWire JSON, QoS configurable (default 1), not retained
 *   <out>/<feeder>/alarm/<condition>   retained, QoS 1, one message per state change
 *   <out>/<feeder>/event               QoS 1, not retained
 *
 * Alarms are retained so that a dashboard or SCADA gateway that subscribes
 * later learns the current state of every condition at once (MQTT 3.1.1
 * §3.3.1.3); results and events are history, and a retained copy would be
 * replayed as if it were new.
 *
 * While the broker is away, messages wait in mqtt.js's offline queue (QoS 1
 * in its outgoing store, QoS 0 in its queue) and go out after reconnect, so a
 * broker restart loses nothing computed. The wait is bounded: at most
 * `maxQueued` sequence messages and `maxQueuedAlarmsEvents` alarm/event
 * messages may be unacknowledged at once; beyond that new ones are dropped and
 * counted, never older ones (the store keeps the full record).
 *
 * The client is either shared (e.g. lent by the MQTT source, which then runs
 * the reconnect back-off) or opened here, with mqtt.js's reconnect period
 * re-set before every attempt to an exponential, jittered back-off.
 */
import mqtt, { type IClientOptions, type MqttClient } from 'mqtt';
import { ExponentialBackoff } from '../core/backoff.js';
import { alarmToWire, eventToWire } from '../core/detect/wire.js';
import type { AlarmTransition, DisturbanceEvent } from '../core/detect/types.js';
import { AgentError } from '../core/errors.js';
import type { ResultPublisher } from '../core/ports.js';
import { resultToWire, type SequenceResult } from '../core/result.js';

export const DEFAULT_OUTPUT_PREFIX = 'seqmon/out';

export interface PublisherLogger {
  info(obj: object, msg?: string): void;
  warn(obj: object, msg?: string): void;
  error(obj: object, msg?: string): void;
  debug(obj: object, msg?: string): void;
}

/** TLS material as PEM text (read files before, e.g. with the source's loadPem). */
export interface MqttPublisherTls {
  readonly ca?: string | Buffer | undefined;
  readonly cert?: string | Buffer | undefined;
  readonly key?: string | Buffer | undefined;
  readonly rejectUnauthorized?: boolean | undefined;
}

/** How to open an own connection when no client is shared. */
export interface MqttPublisherConnection {
  readonly url: string;
  readonly clientId?: string | undefined;
  readonly username?: string | undefined;
  readonly password?: string | undefined;
  readonly tls?: MqttPublisherTls | undefined;
  readonly protocolVersion?: 4 | 5 | undefined;
  readonly keepaliveS?: number | undefined;
  readonly connectTimeoutMs?: number | undefined;
  /** Reconnect back-off bounds, ms. Default { minMs: 500, maxMs: 30000 }. */
  readonly reconnect?: { readonly minMs: number; readonly maxMs: number } | undefined;
}

export interface MqttPublisherOptions {
  /** Default 'seqmon/out'. */
  readonly outPrefix?: string | undefined;
  /** QoS of `sequence` messages. Default 1, so results computed during a broker restart are delivered after it. */
  readonly resultQos?: 0 | 1 | undefined;
  /** An existing, connected or connecting client to publish on (not ended by this publisher). */
  readonly client?: MqttClient | undefined;
  /** Called at the end of close() when the client is shared, e.g. the release() of MqttSource.lendClient(). */
  readonly releaseClient?: (() => Promise<void>) | undefined;
  /** Own connection, used when no client is given. */
  readonly connection?: MqttPublisherConnection | undefined;
  /** Bound on unacknowledged `sequence` messages. Default 10000 (about 2.5 minutes of 200 feeders at one result per 3 s). */
  readonly maxQueued?: number | undefined;
  /** Bound on unacknowledged alarm and event messages. Default 10000. */
  readonly maxQueuedAlarmsEvents?: number | undefined;
  /** How long close() waits for acknowledgements, ms. Default 5000. */
  readonly closeTimeoutMs?: number | undefined;
  readonly logger?: PublisherLogger | undefined;
  /** Uniform random in [0, 1) for the back-off jitter; tests pin it. */
  readonly random?: (() => number) | undefined;
}

export interface MqttPublisherCounters {
  published: { sequence: number; alarm: number; event: number };
  /** Acknowledged by the broker (QoS 1) or written to the socket (QoS 0). */
  delivered: number;
  /** Refused because the bound was reached, or because the publisher was already closed. */
  dropped: { sequence: number; alarm: number; event: number };
  /** Publish callbacks that reported an error (the message may still be re-sent from the offline store). */
  errors: number;
}

/** The exact payloads of `<out>/<feeder>/alarm/<condition>` and `<out>/<feeder>/event` (shared with the API). */
export { alarmToWire, eventToWire };

const SILENT: PublisherLogger = { info: () => undefined, warn: () => undefined, error: () => undefined, debug: () => undefined };
const DEFAULT_RECONNECT = { minMs: 500, maxMs: 30_000 };
const DEFAULT_MAX_QUEUED = 10_000;
const DEFAULT_CLOSE_TIMEOUT_MS = 5_000;

interface FeederTopics {
  readonly sequence: string;
  readonly event: string;
  readonly alarm: Map<string, string>;
}

type Kind = 'sequence' | 'alarm' | 'event';

function badOption(option: string, message: string): never {
  throw new AgentError('CFG_INVALID', `MQTT publisher option ${option} ${message}`, { details: { option } });
}

export class MqttPublisher implements ResultPublisher {
  readonly client: MqttClient;
  private readonly owned: boolean;
  private readonly prefix: string;
  private readonly resultQos: 0 | 1;
  private readonly maxQueued: number;
  private readonly maxQueuedAlarmsEvents: number;
  private readonly closeTimeoutMs: number;
  private readonly logger: PublisherLogger;
  private readonly releaseClient: (() => Promise<void>) | null;
  private readonly topics = new Map<string, FeederTopics>();
  private waitingSequence = 0;
  private waitingOther = 0;
  private dropping = false;
  private closed = false;
  private closing: Promise<void> | null = null;
  private idleWaiters: (() => void)[] = [];
  private readonly counts: MqttPublisherCounters = {
    published: { sequence: 0, alarm: 0, event: 0 },
    delivered: 0,
    dropped: { sequence: 0, alarm: 0, event: 0 },
    errors: 0,
  };
  // Bound once: one callback object per kind, not a closure per message.
  private readonly ackSequence = (err?: Error): void => this.acked('sequence', err);
  private readonly ackOther = (err?: Error): void => this.acked('other', err);

  constructor(options: MqttPublisherOptions) {
    this.prefix = options.outPrefix ?? DEFAULT_OUTPUT_PREFIX;
    if (this.prefix === '' || /[+#\u0000]/.test(this.prefix) || this.prefix.startsWith('/') || this.prefix.endsWith('/')) {
      badOption('outPrefix', `"${this.prefix}" must be a plain topic name without wildcards and without a leading or trailing "/"`);
    }
    this.resultQos = options.resultQos ?? 1;
    if (this.resultQos !== 0 && this.resultQos !== 1) badOption('resultQos', `must be 0 or 1, found ${String(this.resultQos)}`);
    this.maxQueued = positive('maxQueued', options.maxQueued ?? DEFAULT_MAX_QUEUED);
    this.maxQueuedAlarmsEvents = positive('maxQueuedAlarmsEvents', options.maxQueuedAlarmsEvents ?? DEFAULT_MAX_QUEUED);
    this.closeTimeoutMs = positive('closeTimeoutMs', options.closeTimeoutMs ?? DEFAULT_CLOSE_TIMEOUT_MS);
    this.logger = options.logger ?? SILENT;
    this.releaseClient = options.releaseClient ?? null;
    if (options.client !== undefined) {
      this.client = options.client;
      this.owned = false;
    } else if (options.connection !== undefined) {
      this.client = this.openOwnClient(options.connection, options.random ?? Math.random);
      this.owned = true;
    } else {
      badOption('client', 'or connection must be given: share a client (e.g. MqttSource.lendClient()) or name a broker url');
    }
  }

  private openOwnClient(c: MqttPublisherConnection, random: () => number): MqttClient {
    try {
      new URL(c.url);
    } catch {
      badOption('connection.url', `"${c.url}" is not a URL; write it like mqtt://127.0.0.1:1883`);
    }
    const reconnect = c.reconnect ?? DEFAULT_RECONNECT;
    if (!(reconnect.minMs > 0) || !(reconnect.maxMs >= reconnect.minMs)) {
      badOption('connection.reconnect', `needs 0 < minMs <= maxMs, found minMs ${reconnect.minMs}, maxMs ${reconnect.maxMs}`);
    }
    const options: IClientOptions = {
      clientId: c.clientId ?? `seqmon-pub-${Math.floor(random() * 0x1_0000_0000).toString(16).padStart(8, '0')}`,
      protocolVersion: c.protocolVersion ?? 4,
      keepalive: c.keepaliveS ?? 30,
      connectTimeout: c.connectTimeoutMs ?? 10_000,
      clean: true,
      queueQoSZero: true,
      reconnectPeriod: 0,
    };
    // The same back-off as the source (agent/core/backoff.ts): the first delay now, the rest per retry.
    const backoff = new ExponentialBackoff(reconnect, random);
    options.reconnectPeriod = backoff.next();
    backoff.reset();
    if (c.username !== undefined) options.username = c.username;
    if (c.password !== undefined) options.password = c.password;
    if (c.tls !== undefined) {
      if (c.tls.ca !== undefined) options.ca = c.tls.ca;
      if (c.tls.cert !== undefined) options.cert = c.tls.cert;
      if (c.tls.key !== undefined) options.key = c.tls.key;
      options.rejectUnauthorized = c.tls.rejectUnauthorized ?? true;
    }
    const client = mqtt.connect(c.url, options);
    let connectedAt: number | null = null;
    client.on('connect', () => {
      connectedAt = Date.now();
      this.logger.info({ publisher: 'mqtt', clientId: options.clientId }, 'mqtt publisher: connected');
    });
    // mqtt.js retries on a fixed period set in its own 'close' listener. Prepending ours sets the
    // period for this very retry first, so the retries follow the back-off instead.
    client.prependListener('close', () => {
      const stable = connectedAt !== null && Date.now() - connectedAt >= 2 * reconnect.maxMs;
      if (connectedAt !== null) this.logger.warn({ publisher: 'mqtt' }, 'mqtt publisher: connection lost; queueing until it is back');
      connectedAt = null;
      if (stable) backoff.reset();
      client.options.reconnectPeriod = backoff.next();
    });
    client.on('error', (err) => this.logger.debug({ publisher: 'mqtt', err: err.message }, `mqtt publisher: ${err.message}`));
    return client;
  }

  publishResult(result: SequenceResult): void {
    if (!this.admit('sequence')) return;
    this.waitingSequence++;
    this.client.publish(this.topicsOf(result.feeder).sequence, JSON.stringify(resultToWire(result)), { qos: this.resultQos, retain: false }, this.ackSequence);
  }

  publishAlarm(transition: AlarmTransition): void {
    if (!this.admit('alarm')) return;
    this.waitingOther++;
    const t = this.topicsOf(transition.feeder);
    let topic = t.alarm.get(transition.condition);
    if (topic === undefined) {
      topic = `${this.prefix}/${transition.feeder}/alarm/${transition.condition}`;
      t.alarm.set(transition.condition, topic);
    }
    this.client.publish(topic, JSON.stringify(alarmToWire(transition)), { qos: 1, retain: true }, this.ackOther);
  }

  publishEvent(event: DisturbanceEvent): void {
    if (!this.admit('event')) return;
    this.waitingOther++;
    this.client.publish(this.topicsOf(event.feeder).event, JSON.stringify(eventToWire(event)), { qos: 1, retain: false }, this.ackOther);
  }

  counters(): MqttPublisherCounters {
    return { published: { ...this.counts.published }, delivered: this.counts.delivered, dropped: { ...this.counts.dropped }, errors: this.counts.errors };
  }

  /** Messages handed to mqtt.js and not yet acknowledged (QoS 1) or written (QoS 0). */
  waiting(): number {
    return this.waitingSequence + this.waitingOther;
  }

  private topicsOf(feeder: string): FeederTopics {
    let t = this.topics.get(feeder);
    if (t === undefined) {
      t = { sequence: `${this.prefix}/${feeder}/sequence`, event: `${this.prefix}/${feeder}/event`, alarm: new Map() };
      this.topics.set(feeder, t);
    }
    return t;
  }

  private admit(kind: Kind): boolean {
    const full = this.closed || (kind === 'sequence' ? this.waitingSequence >= this.maxQueued : this.waitingOther >= this.maxQueuedAlarmsEvents);
    if (full) {
      this.counts.dropped[kind]++;
      if (!this.dropping && !this.closed) {
        this.dropping = true;
        this.logger.warn(
          { publisher: 'mqtt', kind, waiting: this.waiting() },
          `mqtt publisher: ${kind} messages are being dropped: ${kind === 'sequence' ? this.maxQueued : this.maxQueuedAlarmsEvents} are waiting for the broker already`,
        );
      }
      return false;
    }
    this.counts.published[kind]++;
    return true;
  }

  private acked(kind: 'sequence' | 'other', err: Error | undefined): void {
    if (kind === 'sequence') this.waitingSequence--;
    else this.waitingOther--;
    if (err !== undefined && err !== null) {
      this.counts.errors++;
      this.logger.debug({ publisher: 'mqtt', err: err.message }, `mqtt publisher: publish callback error: ${err.message}`);
    } else {
      this.counts.delivered++;
    }
    if (this.dropping && this.waitingSequence < this.maxQueued && this.waitingOther < this.maxQueuedAlarmsEvents) {
      this.dropping = false;
      this.logger.info({ publisher: 'mqtt', dropped: { ...this.counts.dropped } }, 'mqtt publisher: queue below its bound again; publishing resumed');
    }
    if (this.waiting() === 0 && this.idleWaiters.length > 0) {
      const waiters = this.idleWaiters;
      this.idleWaiters = [];
      for (const w of waiters) w();
    }
  }

  /** Stops accepting, waits (bounded) for what is queued, then ends an own client or releases a shared one. Idempotent. */
  close(): Promise<void> {
    if (this.closing === null) this.closing = this.gracefulClose();
    return this.closing;
  }

  private async gracefulClose(): Promise<void> {
    this.closed = true;
    if (this.waiting() > 0) {
      await new Promise<void>((resolve) => {
        const timer = setTimeout(resolve, this.closeTimeoutMs);
        this.idleWaiters.push(() => {
          clearTimeout(timer);
          resolve();
        });
      });
      if (this.waiting() > 0) {
        this.logger.warn({ publisher: 'mqtt', waiting: this.waiting() }, `mqtt publisher: closing with ${this.waiting()} message(s) not acknowledged after ${this.closeTimeoutMs} ms`);
      }
    }
    if (this.owned) {
      await new Promise<void>((resolve) => {
        const timer = setTimeout(() => this.client.end(true, {}, () => resolve()), this.closeTimeoutMs);
        this.client.end(!this.client.connected, {}, () => {
          clearTimeout(timer);
          resolve();
        });
      });
    } else if (this.releaseClient !== null) {
      await this.releaseClient();
    }
  }

  /** Ends at once; queued messages are abandoned. Idempotent. */
  destroy(err?: Error): void {
    if (err !== undefined) this.logger.error({ publisher: 'mqtt', err: err.message }, `mqtt publisher destroyed: ${err.message}`);
    this.closed = true;
    if (this.closing === null) this.closing = Promise.resolve();
    if (this.owned) this.client.end(true);
    else if (this.releaseClient !== null) void this.releaseClient().catch(() => undefined);
    const waiters = this.idleWaiters;
    this.idleWaiters = [];
    for (const w of waiters) w();
  }
}

function positive(option: string, value: number): number {
  if (!Number.isInteger(value) || value < 1) badOption(option, `must be a positive integer, found ${String(value)}`);
  return value;
}
