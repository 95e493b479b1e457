/**
 * FrameSource over MQTT: subscribes to `<prefix>/+/{phasor,rms,samples}` and
 * hands every message to the pipeline as a RawFrame (the pipeline validates,
 * so all sources share one validator and its counters).
 *
 * Three choices worth knowing:
 * - Backpressure reaches TCP. mqtt.js waits for `handleMessage`'s callback
 *   before it parses the next packet and before it lets the socket deliver
 *   more bytes; when the sink says "pause" the callback is held until
 *   `onDrain`. For QoS 1 the PUBACK is sent only then, so a frame is
 *   acknowledged once the pipeline has it.
 * - Reconnects are ours. mqtt.js retries on a fixed period, so its own retry
 *   is off (reconnectPeriod 0) and the source calls `client.connect()` after
 *   an exponential, jittered back-off on the injected Scheduler. The same
 *   client object is kept, so its offline queue (a publisher sharing it)
 *   survives.
 * - Resubscription is ours too: whenever CONNACK reports no session
 *   (sessionPresent = false, MQTT 3.1.1 §3.2.2.2), which is always the case
 *   with clean = true and also with clean = false after a broker that lost
 *   its sessions, the filters are subscribed again. With a resumed session
 *   the broker still has them.
 */
import mqtt, { type IClientOptions, type IConnackPacket, type IPublishPacket, type MqttClient } from 'mqtt';
import { AgentError } from '../../core/errors.js';
import type { FrameSink, FrameSource, RawFrame, SourceState, SourceStatus, TimerHandle } from '../../core/ports.js';
import { ExponentialBackoff } from '../../core/backoff.js';
import { redactUrl, resolveSourceOptions, type MqttSourceOptions, type MqttSourceSettings } from './options.js';
import type { InputTopic } from './topics.js';
import { inputFilters, parseInputTopic } from './topics.js';

/** Counters of the source itself (frame rejections are counted by the pipeline). */
export interface MqttSourceCounters {
  /** Messages received on input topics and handed to the sink. */
  frames: number;
  /** Messages on topics that are not input topics (a shared client), acknowledged and dropped. */
  ignored: number;
  /** Payloads above maxPayloadBytes (handed on undecoded; the validator refuses them with FRAME_TOO_LARGE). */
  oversized: number;
  /** Times the sink asked the source to pause. */
  pauses: number;
  /** Successful connections (CONNACK accepted), the first included. */
  connects: number;
  /** Connection attempts after the first. */
  reconnectAttempts: number;
}

/** A loan of the source's connection (e.g. to an MqttPublisher); the source ends the client only after every loan is released. */
export interface MqttClientLoan {
  readonly client: MqttClient;
  release(): Promise<void>;
}

type Phase = 'new' | 'running' | 'ending' | 'ended';

// A connection that stayed up this long counts as healthy, so the next drop starts
// the back-off from the beginning; shorter ones keep growing it, so a broker that
// accepts and drops at once is not hammered at the minimum delay.
const STABLE_CONNECTION_FACTOR = 2;
/** Distinct topics remembered (a few per feeder): far above any substation, low enough to bound memory against topic floods. */
const TOPIC_CACHE_SIZE = 8192;

export class MqttSource implements FrameSource {
  readonly name: string;
  readonly settings: MqttSourceSettings;
  /** The mqtt.js client; created up front (not connected) so it can be shared before start(). */
  readonly client: MqttClient;

  private readonly filters: string[];
  private readonly backoff: ExponentialBackoff;
  private phase: Phase = 'new';
  private state: SourceState = 'idle';
  private since: number;
  private lastError: string | null = null;
  private sink: FrameSink | null = null;
  /** handleMessage callback held while the sink is paused. */
  private held: (() => void) | null = null;
  private drainWaiters: (() => void)[] = [];
  private reconnectTimer: TimerHandle | null = null;
  /** Bumped on each CONNACK; callbacks of an older connection are ignored. */
  private generation = 0;
  private connectedAt: number | null = null;
  private loans = 0;
  private closing: Promise<void> | null = null;
  private ended: Promise<void> | null = null;
  /** The socket whose writes holdAcks() holds until the end of this turn, if any. */
  private corked: { uncork: () => void } | null = null;
  /** Topics already read (feeder and kind, or null when not an input topic); cleared when it reaches TOPIC_CACHE_SIZE. */
  private readonly topics = new Map<string, InputTopic | null>();
  private readonly counts: MqttSourceCounters = { frames: 0, ignored: 0, oversized: 0, pauses: 0, connects: 0, reconnectAttempts: 0 };

  constructor(options: MqttSourceOptions) {
    this.settings = resolveSourceOptions(options);
    this.name = this.settings.name;
    this.since = this.settings.scheduler.now();
    this.filters = inputFilters(this.settings.inputPrefix);
    this.backoff = new ExponentialBackoff(this.settings.reconnect, this.settings.random);
    this.client = mqtt.connect(this.settings.url, this.clientOptions());
    this.client.handleMessage = (packet, done) => this.onPublish(packet, done);
    this.client.on('connect', (connack) => this.onConnect(connack));
    this.client.on('close', () => this.onClose());
    this.client.on('error', (err) => this.onError(err));
    this.client.on('disconnect', (packet) => {
      // MQTT 5 server DISCONNECT: the reason is the most useful thing to log.
      this.lastError = `broker sent DISCONNECT (reason code ${packet.reasonCode ?? 0})`;
    });
  }

  private clientOptions(): IClientOptions {
    const s = this.settings;
    const options: IClientOptions = {
      manualConnect: true,
      reconnectPeriod: 0,
      resubscribe: false,
      clientId: s.clientId,
      clean: s.clean,
      keepalive: s.keepaliveS,
      connectTimeout: s.connectTimeoutMs,
      protocolVersion: s.protocolVersion,
      // Publishers sharing this client queue QoS 0 results while the broker is away.
      queueQoSZero: true,
    };
    if (s.username !== undefined) options.username = s.username;
    if (s.password !== undefined) options.password = s.password;
    if (s.tls !== null) {
      if (s.tls.ca !== undefined) options.ca = s.tls.ca;
      if (s.tls.cert !== undefined) options.cert = s.tls.cert;
      if (s.tls.key !== undefined) options.key = s.tls.key;
      options.rejectUnauthorized = s.tls.rejectUnauthorized;
    }
    return options;
  }

  async start(sink: FrameSink): Promise<void> {
    if (this.phase !== 'new') throw new AgentError('SRC_CONFIG', `MQTT source "${this.name}" was already started; create a new source to start again`);
    this.phase = 'running';
    this.sink = sink;
    sink.onDrain(() => this.resume());
    this.setState('connecting', null);
    this.client.connect();
  }

  status(): SourceStatus {
    return { name: this.name, state: this.state, since: this.since, lastError: this.lastError };
  }

  counters(): Readonly<MqttSourceCounters> {
    return { ...this.counts };
  }

  /** Lends the connection to another user; the client is ended only after close() and every release(). */
  lendClient(): MqttClientLoan {
    this.loans++;
    let released = false;
    return {
      client: this.client,
      release: async () => {
        if (released) return;
        released = true;
        this.loans--;
        if (this.loans === 0 && this.closing !== null) await this.endClient(false);
      },
    };
  }

  // ---- inbound -------------------------------------------------------------

  private onPublish(packet: IPublishPacket, done: () => void): void {
    this.holdAcks();
    const sink = this.sink;
    const topic = packet.topic;
    let parsed = this.topics.get(topic);
    if (parsed === undefined) {
      parsed = parseInputTopic(this.settings.inputPrefix, topic);
      if (this.topics.size >= TOPIC_CACHE_SIZE) this.topics.clear();
      this.topics.set(topic, parsed);
    }
    if (parsed === null || sink === null || this.phase === 'ended') {
      this.counts.ignored++;
      done();
      return;
    }
    const payload = packet.payload;
    // Never decoded or copied here: the validator checks the byte length before it parses.
    if (payload.length > this.settings.maxPayloadBytes) this.counts.oversized++;
    this.counts.frames++;
    const frame: RawFrame = { feeder: parsed.feeder, kind: parsed.kind, payload, origin: topic };
    if (sink.push(frame)) {
      done();
      return;
    }
    this.counts.pauses++;
    // A callback still held from a connection that has since dropped belongs to a
    // superseded packet pump; releasing it is harmless and keeps nothing stale.
    const previous = this.held;
    this.held = done;
    if (previous !== null) previous();
  }

  /**
   * Holds the socket's writes (the acknowledgements of QoS 1 messages) until
   * the end of this turn of the event loop: the acknowledgements of every
   * message that arrived in one read leave in one write instead of one system
   * call each. An acknowledgement is late by at most that one turn.
   */
  private holdAcks(): void {
    if (this.corked !== null) return;
    const stream = this.client.stream as { cork?: () => void; uncork?: () => void } | undefined;
    if (stream?.cork === undefined || stream.uncork === undefined) return;
    stream.cork();
    this.corked = stream as { uncork: () => void };
    setImmediate(this.releaseAcks);
  }

  private readonly releaseAcks = (): void => {
    const stream = this.corked;
    this.corked = null;
    stream?.uncork();
  };

  private resume(): void {
    const done = this.held;
    this.held = null;
    if (done !== null) done();
    const waiters = this.drainWaiters;
    this.drainWaiters = [];
    for (const w of waiters) w();
  }

  // ---- connection life cycle -------------------------------------------------

  private onConnect(connack: IConnackPacket): void {
    if (this.phase === 'ended') return;
    this.counts.connects++;
    const generation = ++this.generation;
    this.connectedAt = this.settings.scheduler.now();
    if (this.phase === 'ending') return; // close() raced a reconnect: no new subscriptions
    if (connack.sessionPresent === true && !this.settings.clean) {
      this.lastError = null;
      this.setState('connected', 'session resumed, subscriptions kept by the broker');
      return;
    }
    this.client.subscribe(this.filters, { qos: this.settings.qos }, (err, _subs, suback) => {
      if (generation !== this.generation || this.phase !== 'running') return;
      // A SUBACK return code with bit 7 set refuses that filter (MQTT 3.1.1 §3.9.3, MQTT 5 §3.9.3).
      const codes = suback?.granted ?? [];
      const refused = this.filters.filter((_f, k) => typeof codes[k] === 'number' && ((codes[k] as number) & 0x80) !== 0);
      if (refused.length > 0) {
        this.lastError = `the broker refused the subscription to ${refused.join(', ')} (return code 0x${(codes[this.filters.indexOf(refused[0]!)] as number).toString(16)}; check its ACL for this user)`;
        this.settings.logger.error({ source: this.name, topics: refused }, `mqtt source ${this.name}: ${this.lastError}`);
        // Drop the connection: the back-off retries, and status() shows why meanwhile.
        this.client.stream.destroy();
        return;
      }
      if (err !== null && err !== undefined) {
        // The connection dropped before SUBACK; onClose schedules the retry.
        this.lastError = `subscribe failed: ${err.message}`;
        return;
      }
      this.lastError = null;
      const how = connack.sessionPresent === true ? 'subscribed' : 'no session on the broker, subscribed';
      this.setState('connected', `${how} to ${this.filters.join(', ')} at QoS ${this.settings.qos}`);
    });
  }

  private onClose(): void {
    if (this.phase === 'ended' || this.phase === 'new') return;
    if (this.connectedAt !== null && this.settings.scheduler.now() - this.connectedAt >= STABLE_CONNECTION_FACTOR * this.settings.reconnect.maxMs) {
      this.backoff.reset();
    }
    this.connectedAt = null;
    if (this.ended !== null) return; // ending the client on purpose
    this.setState('reconnecting', this.lastError);
    this.scheduleReconnect();
  }

  private onError(err: Error & { code?: string | number }): void {
    const code = err.code === undefined ? '' : ` (${String(err.code)})`;
    this.lastError = `${err.message}${code}`;
    this.settings.logger.debug({ source: this.name, err: this.lastError }, `mqtt source ${this.name}: ${this.lastError}`);
  }

  private scheduleReconnect(): void {
    if (this.reconnectTimer !== null) return;
    const delayMs = this.backoff.next();
    this.settings.logger.debug(
      { source: this.name, attempt: this.backoff.attempts(), delayMs, err: this.lastError },
      `mqtt source ${this.name}: next connection attempt in ${delayMs} ms`,
    );
    this.reconnectTimer = this.settings.scheduler.setTimeout(() => {
      this.reconnectTimer = null;
      if (this.ended !== null || this.phase === 'ended') return;
      this.counts.reconnectAttempts++;
      this.client.connect();
    }, delayMs);
  }

  private cancelReconnect(): void {
    if (this.reconnectTimer !== null) {
      this.settings.scheduler.clearTimeout(this.reconnectTimer);
      this.reconnectTimer = null;
    }
  }

  private setState(next: SourceState, reason: string | null): void {
    if (next === this.state) return;
    const previous = this.state;
    this.state = next;
    this.since = this.settings.scheduler.now();
    const { logger } = this.settings;
    const fields = { source: this.name, from: previous, to: next, url: redactUrl(this.settings.url), reason };
    const line = `mqtt source ${this.name}: ${previous} -> ${next}${reason === null ? '' : ` (${reason})`}`;
    if (next === 'failed') logger.error(fields, line);
    else if (next === 'reconnecting') logger.warn(fields, line);
    else logger.info(fields, line);
    const onState = this.settings.onState;
    if (onState !== null) onState(this.status());
  }

  // ---- shutdown ----------------------------------------------------------------

  /**
   * Graceful: unsubscribe (frames already on the way are still handed on), wait
   * for a paused sink to drain, then send DISCONNECT once unacknowledged
   * publishes of a sharing publisher are through. Each wait is bounded by
   * closeTimeoutMs. Idempotent.
   */
  close(): Promise<void> {
    if (this.closing === null) this.closing = this.gracefulClose();
    return this.closing;
  }

  private async gracefulClose(): Promise<void> {
    if (this.phase === 'ended') return;
    if (this.phase === 'new') {
      // Never connected (manualConnect): nothing to end, no stream, no timers.
      this.phase = 'ended';
      this.ended = Promise.resolve();
      this.setState('closed', 'closed before start');
      return;
    }
    this.phase = 'ending';
    const limit = this.settings.closeTimeoutMs;
    if (this.client.connected) {
      await withDeadline(this.client.unsubscribeAsync(this.filters).then(() => undefined), limit).catch(() => undefined);
    }
    if (this.held !== null) await withDeadline(new Promise<void>((r) => this.drainWaiters.push(r)), limit).catch(() => undefined);
    // A frame still held was accepted by the sink; acknowledging it now is correct.
    this.resume();
    if (this.loans > 0) {
      this.settings.logger.info({ source: this.name, loans: this.loans }, `mqtt source ${this.name}: intake stopped; connection kept for ${this.loans} sharing user(s)`);
      return;
    }
    await this.endClient(false);
  }

  private endClient(force: boolean): Promise<void> {
    if (this.ended === null) {
      this.cancelReconnect();
      const client = this.client;
      const graceful = !force && client.connected;
      this.ended = new Promise<void>((resolve) => {
        if (!graceful) {
          client.end(true, {}, () => resolve());
          return;
        }
        // end(false) waits until every outgoing QoS 1 publish is acknowledged; bound that wait.
        const timer = setTimeout(() => client.end(true, {}, () => resolve()), this.settings.closeTimeoutMs);
        client.end(false, {}, () => {
          clearTimeout(timer);
          resolve();
        });
      }).then(() => {
        this.phase = 'ended';
        if (this.state !== 'failed') this.setState('closed', force ? 'destroyed' : 'closed');
      });
    }
    return this.ended;
  }

  /** Ends at once: no UNSUBSCRIBE, no DISCONNECT, held frames stay unacknowledged. Idempotent. */
  destroy(err?: Error): void {
    if (this.phase === 'ended' && this.ended !== null) return;
    const wasNew = this.phase === 'new';
    this.cancelReconnect();
    this.held = null;
    this.phase = 'ended';
    if (err !== undefined) {
      this.lastError = err.message;
      this.setState('failed', err.message);
    }
    if (this.ended === null) {
      // A client that never connected (manualConnect) has no stream to end.
      this.ended = wasNew ? Promise.resolve() : new Promise<void>((resolve) => this.client.end(true, {}, () => resolve()));
      if (err === undefined) this.setState('closed', 'destroyed');
    } else if (this.client.stream !== undefined) {
      // A graceful end is waiting for acknowledgements: cut it short.
      this.client.stream.destroy();
    }
    const waiters = this.drainWaiters;
    this.drainWaiters = [];
    for (const w of waiters) w();
  }
}

function withDeadline<T>(p: Promise<T>, ms: number): Promise<T> {
  return new Promise<T>((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`no answer within ${ms} ms`)), ms);
    p.then(
      (v) => {
        clearTimeout(timer);
        resolve(v);
      },
      (e: unknown) => {
        clearTimeout(timer);
        reject(e instanceof Error ? e : new Error(String(e)));
      },
    );
  });
}
