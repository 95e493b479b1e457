/**
 * OPC UA client source (node-opcua). Subscribes to the configured nodes,
 * assembles one frame per feeder and timestamp from the values' SOURCE
 * timestamps (frame-assembler.ts), and hands RawFrames to the pipeline.
 *
 * Connection life cycle, as named states (SourceState):
 *   connecting   -> first connection, session, subscription being set up
 *   connected    -> subscription delivering data or keep-alives
 *   reconnecting -> channel lost; node-opcua's connectionStrategy retries with
 *                   back-off and restores the session and its subscription;
 *                   if that fails, or the subscription goes silent, the source
 *                   drops the client and builds a new one (own back-off)
 *   closed/failed-> after close()/destroy()
 * One log line per state change, never per value.
 */
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import {
  AttributeIds,
  DataChangeFilter,
  DataChangeTrigger,
  DeadbandType,
  MessageSecurityMode,
  OPCUACertificateManager,
  OPCUAClient,
  SecurityPolicy,
  TimestampsToReturn,
  UserTokenType,
  type ClientMonitoredItemGroup,
  type ClientSession,
  type ClientSubscription,
  type DataValue,
  type UserIdentityInfo,
} from 'node-opcua';
import type { FrameSink, FrameSource, RawFrame, Scheduler, SourceState, SourceStatus, TimerHandle } from '../../core/ports.js';
import { FrameAssembler, type AssemblerCounters } from './frame-assembler.js';
import { validateOpcuaOptions, type OpcuaSourceOptions } from './options.js';

export interface OpcuaSourceCounters {
  framesAssembled: number;
  framesPushed: number;
  /** Frames dropped because the pipeline asked to pause for longer than the queue bound allows. */
  framesDroppedBackpressure: number;
  groupsIncomplete: number;
  valuesLate: number;
  /** Values with a Bad or Uncertain status code. */
  valuesBadQuality: number;
  /** Values without a source timestamp that used the server timestamp instead. */
  valuesServerTimestamp: number;
  /** Values with neither timestamp, dropped. */
  valuesNoTimestamp: number;
  valuesNotNumeric: number;
  /** Clients rebuilt from scratch after a failure (node-opcua's own reconnections are not counted here). */
  rebuilds: number;
  feeders: Record<string, AssemblerCounters>;
}

const DEFAULT_TOLERANCE_MS = 20;
/** Frames held while the pipeline asks to pause; beyond this the oldest are dropped and counted. */
const MAX_QUEUED_FRAMES = 1_000;
/** Pending groups per feeder: several publishing intervals' worth even at 10 ms sampling. */
const MAX_PENDING_GROUPS = 256;
/** Keep-alive count requested for the subscription: the server sends a keep-alive after this many empty publishing intervals. */
const MAX_KEEPALIVE_COUNT = 10;
/** Lifetime count: OPC 10000-4 §5.13.2 asks for at least three times the keep-alive count. */
const LIFETIME_COUNT = 3 * MAX_KEEPALIVE_COUNT * 2;

const realScheduler: Scheduler = {
  now: () => Date.now(),
  setTimeout: (fn, ms) => setTimeout(fn, ms),
  clearTimeout: (h) => clearTimeout(h as NodeJS.Timeout),
  setInterval: (fn, ms) => setInterval(fn, ms),
  clearInterval: (h) => clearInterval(h as NodeJS.Timeout),
};

interface SlotRef {
  readonly assembler: FrameAssembler;
  readonly slot: number;
  readonly feeder: string;
}

export class OpcuaSource implements FrameSource {
  readonly name: string;
  private state: SourceState = 'idle';
  private since: number;
  private lastError: string | null = null;
  private readonly scheduler: Scheduler;
  private readonly assemblers = new Map<string, FrameAssembler>();
  private readonly slotRefs: SlotRef[] = [];
  private readonly tolerance: number;
  private readonly incompleteAfterMs: number;
  private readonly staleMs: number;
  private readonly c = {
    framesPushed: 0,
    framesDroppedBackpressure: 0,
    valuesBadQuality: 0,
    valuesServerTimestamp: 0,
    valuesNoTimestamp: 0,
    valuesNotNumeric: 0,
    rebuilds: 0,
  };

  private sink: FrameSink | null = null;
  private readonly queue: RawFrame[] = [];
  private paused = false;
  private started = false;
  private stopped = false;
  private loop: Promise<void> | null = null;
  /** Certificate set-up of the current attempt (writes files); close() lets it finish so nothing is written after close returns. */
  private preparing: Promise<void> | null = null;
  private client: OPCUAClient | null = null;
  private certificateManager: OPCUACertificateManager | null = null;
  private session: ClientSession | null = null;
  private subscription: ClientSubscription | null = null;
  private group: ClientMonitoredItemGroup | null = null;
  private watchdog: TimerHandle | null = null;
  private lastActivity = 0;
  private lastValueAt = 0;
  private wake: (() => void) | null = null;
  /** Resolves when close()/destroy() is called, so a connect still retrying inside node-opcua does not hold the loop. */
  private readonly stopSignal: Promise<void>;
  private signalStop: () => void = () => undefined;
  private broken: ((reason: string) => void) | null = null;

  constructor(private readonly options: OpcuaSourceOptions, scheduler: Scheduler = realScheduler) {
    validateOpcuaOptions(options);
    this.stopSignal = new Promise((resolve) => (this.signalStop = resolve));
    this.scheduler = scheduler;
    this.name = `opcua:${options.endpointUrl}`;
    this.since = scheduler.now();
    this.tolerance = options.assemblyToleranceMs ?? DEFAULT_TOLERANCE_MS;
    this.incompleteAfterMs = options.incompleteAfterMs ?? Math.max(2_000, 10 * options.publishingIntervalMs);
    // Silence longer than three keep-alive periods means the subscription is gone (OPC 10000-4 §5.13.1: keep-alives every MaxKeepAliveCount publishing intervals).
    this.staleMs = Math.max(5_000, 3 * MAX_KEEPALIVE_COUNT * options.publishingIntervalMs);
    for (const f of options.feeders) {
      const a = new FrameAssembler(f, { toleranceMs: this.tolerance, incompleteAfterMs: this.incompleteAfterMs, maxPendingGroups: MAX_PENDING_GROUPS });
      this.assemblers.set(f.id, a);
      a.slots.forEach((_s, k) => this.slotRefs.push({ assembler: a, slot: k, feeder: f.id }));
    }
  }

  status(): SourceStatus {
    return { name: this.name, state: this.state, since: this.since, lastError: this.lastError };
  }

  counters(): OpcuaSourceCounters {
    const feeders: Record<string, AssemblerCounters> = {};
    let framesAssembled = 0, groupsIncomplete = 0, valuesLate = 0;
    for (const [id, a] of this.assemblers) {
      feeders[id] = { ...a.counters };
      framesAssembled += a.counters.framesAssembled;
      groupsIncomplete += a.counters.groupsIncomplete;
      valuesLate += a.counters.valuesLate;
    }
    return { ...this.c, framesAssembled, groupsIncomplete, valuesLate, feeders };
  }

  async start(sink: FrameSink): Promise<void> {
    if (this.started || this.stopped) return;
    this.started = true;
    this.sink = sink;
    sink.onDrain(() => {
      this.paused = false;
      this.flushQueue();
    });
    const tick = Math.max(250, Math.min(1_000, this.options.publishingIntervalMs));
    this.watchdog = this.scheduler.setInterval(() => this.check(), tick);
    this.loop = this.run();
  }

  async close(): Promise<void> {
    if (this.stopped) return;
    this.stopped = true;
    this.signalStop();
    this.stopTimers();
    this.broken?.('closing');
    this.wake?.();
    await this.loop;
    if (this.preparing !== null) await Promise.race([this.preparing.catch(() => undefined), new Promise((r) => setTimeout(r, 10_000))]);
    await this.teardown();
    for (const a of this.assemblers.values()) a.dropAll();
    // Flush what the pipeline has not taken yet: nothing already assembled is lost on a graceful close.
    this.paused = false;
    this.flushQueue(true);
    this.setState('closed');
  }

  destroy(err?: Error): void {
    if (this.stopped && (this.state === 'closed' || this.state === 'failed')) return;
    this.stopped = true;
    this.signalStop();
    this.stopTimers();
    this.broken?.('destroyed');
    this.wake?.();
    const client = this.client, pki = this.certificateManager;
    this.client = null;
    this.certificateManager = null;
    this.session = null;
    this.subscription = null;
    this.group = null;
    client?.disconnect().then(() => pki?.dispose()).catch(() => undefined);
    for (const a of this.assemblers.values()) a.dropAll();
    this.queue.length = 0;
    this.setState(err === undefined ? 'closed' : 'failed', err?.message ?? null);
  }

  private stopTimers(): void {
    if (this.watchdog !== null) this.scheduler.clearInterval(this.watchdog);
    this.watchdog = null;
  }

  private setState(s: SourceState, err: string | null = null): void {
    if (err !== null) this.lastError = err;
    if (s === this.state) return;
    const from = this.state;
    this.state = s;
    this.since = this.scheduler.now();
    const msg = `${this.name}: ${from} -> ${s}${err === null ? '' : ` (${err})`}`;
    if (s === 'failed' || (s === 'reconnecting' && err !== null)) this.options.logger?.warn(msg);
    else this.options.logger?.info(msg);
    this.options.onState?.(this.status());
  }

  /** Connect, run until the connection is beyond node-opcua's own repair, rebuild with back-off; until stopped. */
  private async run(): Promise<void> {
    let attempt = 0;
    this.setState('connecting');
    while (!this.stopped) {
      let reason: string;
      try {
        const done = new Promise<string>((resolve) => (this.broken = resolve));
        await Promise.race([this.connectOnce(), this.stopSignal]);
        if (this.stopped) break;
        attempt = 0;
        this.setState('connected');
        reason = await done;
      } catch (e) {
        reason = (e as Error).message;
      }
      this.broken = null;
      if (this.stopped) break;
      // One line per distinct reason, not per retry: a refused password would otherwise log on every back-off step.
      if (reason !== this.lastError) this.options.logger?.warn(`${this.name}: ${reason}; rebuilding the connection`);
      this.lastError = reason;
      await this.teardown();
      for (const a of this.assemblers.values()) a.dropAll();
      this.c.rebuilds++;
      const { minMs, maxMs } = this.options.reconnect;
      const delay = Math.min(maxMs, minMs * 2 ** Math.min(attempt, 20));
      attempt++;
      this.setState('reconnecting', reason);
      await this.sleep(delay);
    }
  }

  private sleep(ms: number): Promise<void> {
    return new Promise((resolve) => {
      const h = this.scheduler.setTimeout(() => {
        this.wake = null;
        resolve();
      }, ms);
      this.wake = () => {
        this.scheduler.clearTimeout(h);
        this.wake = null;
        resolve();
      };
    });
  }

  private async connectOnce(): Promise<void> {
    const o = this.options;
    const folder = o.certificateFolder ?? join(tmpdir(), 'seqmon-opcua-pki');
    const certificateManager = new OPCUACertificateManager({ rootFolder: folder, automaticallyAcceptUnknownCertificate: o.acceptUnknownServerCertificate === true });
    this.certificateManager = certificateManager;
    const client = OPCUAClient.create({
      applicationName: 'seqmon',
      securityMode: MessageSecurityMode[o.securityMode],
      securityPolicy: SecurityPolicy[o.securityPolicy],
      endpointMustExist: false,
      keepSessionAlive: true,
      clientCertificateManager: certificateManager,
      connectionStrategy: { initialDelay: o.reconnect.minMs, maxDelay: o.reconnect.maxMs, maxRetry: Number.MAX_SAFE_INTEGER, randomisationFactor: 0.1 },
    });
    this.client = client;
    client.on('connection_lost', () => {
      if (this.client === client && !this.stopped) this.setState('reconnecting', 'connection lost');
    });
    client.on('connection_reestablished', () => {
      if (this.client === client && !this.stopped) {
        this.lastActivity = this.scheduler.now();
        this.setState('connected');
      }
    });
    // Create this client's certificate (first use, about 2 s) before connecting, as a step close() can wait for;
    // connect() itself may keep retrying an unreachable server until disconnect().
    this.preparing = (async () => {
      await certificateManager.initialize();
      await client.createDefaultCertificate();
    })();
    await this.preparing;
    if (this.stopped) return;
    await client.connect(o.endpointUrl);
    if (this.stopped) return;
    if (o.user !== undefined && o.securityMode === 'None') {
      o.logger?.warn(`${this.name}: user name and password are sent on an unsecured channel; use securityMode SignAndEncrypt`);
    }
    const identity: UserIdentityInfo = o.user === undefined ? { type: UserTokenType.Anonymous } : { type: UserTokenType.UserName, userName: o.user.username, password: o.user.password };
    const session = await client.createSession(identity);
    this.session = session;
    if (this.stopped) return;
    const subscription = await session.createSubscription2({
      requestedPublishingInterval: o.publishingIntervalMs,
      requestedLifetimeCount: LIFETIME_COUNT,
      requestedMaxKeepAliveCount: MAX_KEEPALIVE_COUNT,
      maxNotificationsPerPublish: 0,
      publishingEnabled: true,
      priority: 10,
    });
    this.subscription = subscription;
    subscription.on('keepalive', () => {
      this.lastActivity = this.scheduler.now();
    });
    subscription.on('terminated', () => {
      if (this.subscription === subscription) this.broken?.('the subscription was terminated by the server');
    });
    const items = this.slotRefs.map((r) => ({ nodeId: r.assembler.slots[r.slot]!.nodeId, attributeId: AttributeIds.Value }));
    const group = await subscription.monitorItems(
      items,
      {
        samplingInterval: o.samplingIntervalMs,
        queueSize: o.queueSize ?? 10,
        discardOldest: true,
        // The default trigger (StatusValue) hides a repeated value with a new source timestamp, which would leave
        // frames incomplete whenever one quantity holds steady (OPC 10000-4 §7.22.2): report timestamp changes too.
        filter: new DataChangeFilter({ trigger: DataChangeTrigger.StatusValueTimestamp, deadbandType: DeadbandType.None }),
      },
      TimestampsToReturn.Both,
    );
    this.group = group;
    group.on('changed', (_item, dataValue: DataValue, index: number) => this.onValue(index, dataValue));
    this.lastActivity = this.scheduler.now();
    group.monitoredItems.forEach((m, k) => {
      const sc = m.statusCode;
      if (sc !== undefined && sc.value !== 0) {
        const r = this.slotRefs[k]!;
        o.logger?.warn(`${this.name}: node ${items[k]!.nodeId} (feeder ${r.feeder}, ${r.assembler.slots[r.slot]!.path}) cannot be monitored: ${sc.name}; frames of feeder ${r.feeder} cannot be assembled until it is fixed`);
      }
    });
  }

  private async teardown(): Promise<void> {
    const client = this.client, session = this.session, subscription = this.subscription, pki = this.certificateManager;
    this.certificateManager = null;
    this.client = null;
    this.session = null;
    this.subscription = null;
    this.group = null;
    // Each step is bounded: a dead server must not hold up close().
    const bounded = (p: Promise<unknown> | undefined) => Promise.race([p?.catch(() => undefined), new Promise((r) => setTimeout(r, 2_000))]);
    if (subscription !== null) await bounded(subscription.terminate());
    if (session !== null) await bounded(session.close());
    if (client !== null) await bounded(client.disconnect());
    // The manager watches its folders; release it with the client it served.
    if (pki !== null) await bounded(pki.dispose());
  }

  /** Periodic: watchdog on a silent subscription, and dropping groups that wait for values that stopped coming. */
  private check(): void {
    const now = this.scheduler.now();
    if (this.state === 'connected' && now - this.lastActivity > this.staleMs) {
      this.broken?.(`no data or keep-alive for ${now - this.lastActivity} ms`);
    }
    if (now - this.lastValueAt > this.incompleteAfterMs) {
      for (const a of this.assemblers.values()) if (a.pendingGroups > 0) a.dropAll();
    }
  }

  private onValue(index: number, dv: DataValue): void {
    const now = this.scheduler.now();
    this.lastActivity = now;
    this.lastValueAt = now;
    const ref = this.slotRefs[index];
    if (ref === undefined || this.stopped) return;
    // Good = severity bits 00 (OPC 10000-4 §7.39); Uncertain and Bad are not used for protection quantities.
    if ((dv.statusCode.value & 0xc0000000) !== 0) {
      this.c.valuesBadQuality++;
      return;
    }
    let ts: number;
    if (dv.sourceTimestamp !== null && dv.sourceTimestamp !== undefined) ts = dv.sourceTimestamp.getTime();
    else if (dv.serverTimestamp !== null && dv.serverTimestamp !== undefined) {
      ts = dv.serverTimestamp.getTime();
      this.c.valuesServerTimestamp++;
    } else {
      this.c.valuesNoTimestamp++;
      return;
    }
    const x = numeric(dv.value.value);
    if (x === null) {
      this.c.valuesNotNumeric++;
      return;
    }
    const payload = ref.assembler.offer(ref.slot, x, ts);
    if (payload !== null) this.deliver({ feeder: ref.feeder, kind: payload.kind as 'phasor' | 'rms', payload, origin: `${this.options.endpointUrl}#${ref.feeder}` });
  }

  private deliver(frame: RawFrame): void {
    if (this.paused || this.queue.length > 0) {
      this.queue.push(frame);
      if (this.queue.length > MAX_QUEUED_FRAMES) {
        this.queue.shift();
        this.c.framesDroppedBackpressure++;
      }
      return;
    }
    this.c.framesPushed++;
    if (this.sink !== null && !this.sink.push(frame)) this.paused = true;
  }

  private flushQueue(force = false): void {
    while (this.queue.length > 0 && (force || !this.paused) && this.sink !== null) {
      const f = this.queue.shift()!;
      this.c.framesPushed++;
      if (!this.sink.push(f)) this.paused = true;
    }
  }
}

/** A monitored value as a number: numbers, booleans are refused, Int64/UInt64 come as [high, low] words. */
function numeric(v: unknown): number | null {
  if (typeof v === 'number') return Number.isFinite(v) ? v : null;
  if (typeof v === 'bigint') return Number(v);
  if (Array.isArray(v) && v.length === 2 && typeof v[0] === 'number' && typeof v[1] === 'number') return v[0] * 0x1_0000_0000 + v[1];
  return null;
}
