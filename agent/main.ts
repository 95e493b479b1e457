/**
 * Composition root: the only place that chooses sources (MQTT, OPC UA, the
 * demo simulator) and the store (SQLite, InfluxDB) from the configuration and
 * wires them around the pure pipeline. Start order: store, pipeline, HTTP,
 * publisher, sources, simulator; close runs in reverse.
 */
import { mkdirSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import type { FastifyInstance } from 'fastify';
import type { SeqmonConfig } from './config/types.js';
import { toPipelineSettings } from './config/load-config.js';
import type { AlarmTransition, DisturbanceEvent } from './core/detect/types.js';
import type { PipelineOutput } from './core/pipeline.js';
import { clearOutput } from './core/pipeline.js';
import type { FrameSink, FrameSource, RawFrame, ResultPublisher, SourceStatus, TrendStore } from './core/ports.js';
import type { SequenceResult } from './core/result.js';
import type { Logger } from './logging.js';
import { loggerFor, RejectionLog } from './logging.js';
import { LiveHub } from './publish/live-hub.js';
import { MqttPublisher } from './publish/mqtt-publisher.js';
import { durationToDays } from './runtime/retention-days.js';
import type { PipelineHost } from './runtime/pipeline-host.js';
import { InlinePipelineHost } from './runtime/pipeline-host.js';
import { PipelineThread, workerAvailable } from './runtime/pipeline-thread.js';
import type { EmbeddedBroker } from './runtime/embedded-broker.js';
import { startEmbeddedBroker } from './runtime/embedded-broker.js';
import type { SeqmonMetrics } from './runtime/metrics.js';
import { createMetrics } from './runtime/metrics.js';
import { assertBindAllowed, buildServer } from './server/build-server.js';
import type { FeederInfo } from './server/deps.js';
import { MqttSource } from './sources/mqtt/mqtt-source.js';
import { SYSTEM_SCHEDULER } from './sources/mqtt/system-scheduler.js';
import type { OpcuaFeeder } from './sources/opcua/options.js';
import type { SimulatorPublisher } from './sources/simulator/index.js';
import { startSimulatorPublisher, SubstationSimulator } from './sources/simulator/index.js';
import { openStore } from './stores/open-store.js';
import { readFileSync } from 'node:fs';

/** How often live time advances the pipeline (stale data, idle intervals), ms. */
const TICK_MS = 1_000;
/** Aggregates are written to the store in batches of this size, or every FLUSH_MS. */
const STORE_BATCH = 500;
const FLUSH_MS = 1_000;
/** Above this many results waiting for the store, sources are paused (backpressure). */
const STORE_BACKLOG_LIMIT = 50_000;
/** The window published on `<out>/<feeder>/sequence` (the contract's aggregation interval). */
const PUBLISHED_WINDOW = '3s';

export interface ServiceOptions {
  readonly logger?: Logger;
  /** Built dashboard folder; defaults to dist/dashboard next to the compiled agent. */
  readonly dashboardDir?: string | null;
  /** True when the data comes from the fictional demo substation (shown in the UI). */
  readonly demo?: boolean;
  /**
   * 'worker' runs the pipeline on a worker thread (MQTT I/O and computation on
   * two cores); 'inline' on the main thread. Default: worker when the compiled
   * worker script exists (it does not when running from TypeScript sources).
   */
  readonly pipelineThread?: 'worker' | 'inline';
}

export class SeqmonService {
  private readonly pipeline: PipelineHost;
  private readonly live = new LiveHub();
  private readonly metrics: SeqmonMetrics;
  private readonly rejections: RejectionLog;
  private readonly sources: FrameSource[] = [];
  private publisher: ResultPublisher | null = null;
  private broker: EmbeddedBroker | null = null;
  private simulator: SimulatorPublisher | null = null;
  private http: FastifyInstance | null = null;
  private tickTimer: NodeJS.Timeout | null = null;
  private flushTimer: NodeJS.Timeout | null = null;
  private pendingResults: SequenceResult[] = [];
  private storeChain: Promise<void> = Promise.resolve();
  private storeBacklog = 0;
  private readonly drainListeners: (() => void)[] = [];
  private readonly lastTs = new Map<string, number>();
  private readonly startedAt = Date.now();
  private closing: Promise<void> | null = null;
  private httpAddress: string | null = null;

  private constructor(
    readonly config: SeqmonConfig,
    private readonly store: TrendStore,
    private readonly logger: Logger,
    private readonly options: ServiceOptions,
  ) {
    this.metrics = createMetrics();
    const settings = toPipelineSettings(config);
    const mode = options.pipelineThread ?? (workerAvailable() ? 'worker' : 'inline');
    this.pipeline =
      mode === 'worker'
        ? new PipelineThread(settings, {
            onOutput: (o) => this.dispatch(o),
            onError: (message, stack, origin) => this.internalError(message, stack, origin),
            onFatal: (err) => this.fatal(err),
            onLatency: (s) => this.metrics.observeLatency(s),
          })
        : new InlinePipelineHost(settings, (o) => this.dispatch(o), (err, raw) => this.internalError(err instanceof Error ? err.message : String(err), err instanceof Error ? (err.stack ?? null) : null, raw?.origin ?? null));
    this.pipeline.onDrain(() => this.releaseDrain());
    logger.info({ pipeline: mode }, mode === 'worker' ? 'pipeline runs on a worker thread' : 'pipeline runs on the main thread');
    this.metrics.bindFrameCounts(() => this.pipeline.stats());
    this.metrics.bindSources(() => this.sourceStatuses());
    this.metrics.bindStore(() => this.store.health());
    this.rejections = new RejectionLog(logger, { perWindow: config.logging.rejectedFramesPerMinute, now: Date.now });
  }

  /** Opens the store and starts every configured part; on failure, closes what had started. */
  static async start(config: SeqmonConfig, options: ServiceOptions = {}): Promise<SeqmonService> {
    const logger = options.logger ?? loggerFor(config);
    mkdirSync(config.dataDir, { recursive: true });
    const store = await openConfiguredStore(config, logger);
    const service = new SeqmonService(config, store, logger, options);
    try {
      await service.startParts();
    } catch (err) {
      await service.close().catch(() => undefined);
      throw err;
    }
    return service;
  }

  /** The URL the HTTP server listens on, once started. */
  get url(): string | null {
    return this.httpAddress;
  }

  get brokerUrl(): string | null {
    return this.broker?.url ?? null;
  }

  private async startParts(): Promise<void> {
    const { config, logger } = this;
    // Alarms survive a restart: raised states come back from the store and are not announced again.
    const active = await this.store.activeAlarms();
    this.pipeline.restoreAlarms(active);
    if (active.length > 0) logger.info({ count: active.length }, 'restored active alarms from the store');

    if (config.http.enabled) await this.startHttp();

    if (config.mqtt.enabled && config.mqtt.embeddedBroker) {
      const port = Number(new URL(config.mqtt.url).port || 1883);
      this.broker = await startEmbeddedBroker({ port, host: new URL(config.mqtt.url).hostname });
      logger.info({ url: this.broker.url }, 'embedded MQTT broker listening');
    }

    const sink = this.sink();
    if (config.mqtt.enabled) {
      const m = config.mqtt;
      const source = new MqttSource({
        url: m.url,
        inputPrefix: m.inputPrefix,
        clientId: m.clientId,
        username: m.username,
        password: m.password,
        tls: m.tls,
        protocolVersion: m.protocolVersion,
        qos: m.qos,
        clean: m.cleanSession,
        connectTimeoutMs: m.connectTimeoutMs,
        keepaliveS: m.keepaliveSec,
        reconnect: m.reconnect,
        maxPayloadBytes: m.maxPayloadBytes,
        logger: childLogger(logger, 'mqtt'),
        onState: (s) => this.onSourceState(s),
      });
      this.sources.push(source);
      if (m.publishResults) {
        const loan = source.lendClient();
        this.publisher = new MqttPublisher({ outPrefix: m.outputPrefix, resultQos: m.qos, client: loan.client, releaseClient: loan.release, logger: childLogger(logger, 'mqtt-out') });
      }
    }
    if (config.opcua.enabled && config.opcua.endpointUrl !== null) {
      const o = config.opcua;
      // Loaded only when configured: node-opcua is large and keeps timers of its own.
      const { OpcuaSource } = await import('./sources/opcua/opcua-source.js');
      this.sources.push(
        new OpcuaSource({
          endpointUrl: o.endpointUrl!,
          securityMode: o.securityMode,
          securityPolicy: o.securityPolicy,
          ...(o.user !== null ? { user: { username: o.user.username, password: o.user.password ?? '' } } : {}),
          certificateFolder: o.certificateDir,
          samplingIntervalMs: o.samplingIntervalMs,
          publishingIntervalMs: Math.max(100, o.samplingIntervalMs),
          assemblyToleranceMs: o.assemblyToleranceMs,
          feeders: o.feeders.map(toOpcuaFeeder),
          reconnect: config.mqtt.reconnect,
          logger: childLogger(logger, 'opcua'),
          onState: (s) => this.onSourceState(s),
        }),
      );
    }
    for (const s of this.sources) await s.start(sink);

    if (config.simulator.enabled) {
      const sim = new SubstationSimulator({
        originMs: Date.now(),
        seed: config.simulator.seed,
        speed: config.simulator.speed,
        startHour: config.simulator.startHour,
        nominalHz: config.simulator.nominalHz,
      });
      this.simulator = await startSimulatorPublisher({ url: this.broker?.url ?? config.mqtt.url, inputPrefix: config.mqtt.inputPrefix, simulator: sim, scheduler: SYSTEM_SCHEDULER });
      logger.info('simulator of the fictional demo substation publishing');
    }

    this.tickTimer = setInterval(() => this.tick(), TICK_MS);
    this.flushTimer = setInterval(() => this.flushStore(), FLUSH_MS);
  }

  private async startHttp(): Promise<void> {
    const h = this.config.http;
    const security = {
      host: h.host,
      token: h.token,
      rateLimitPerMin: h.rateLimitPerMin,
      bodyLimitBytes: h.bodyLimitBytes,
      tlsConfigured: h.tls !== null,
      acknowledgeInsecure: h.acknowledgeInsecureBind,
    };
    assertBindAllowed(security);
    this.http = await buildServer({
      store: this.store,
      live: this.live,
      latest: (feeder) => this.pipeline.latest(feeder),
      feeders: () => this.feederInfos(),
      status: () => ({
        demo: this.options.demo ?? this.config.simulator.enabled,
        sources: this.sourceStatuses(),
        store: this.store.health(),
        startedAt: this.startedAt,
        rejected: this.pipeline.stats().rejected,
      }),
      metrics: this.metrics.registry,
      dashboardDir: this.options.dashboardDir === undefined ? defaultDashboardDir() : this.options.dashboardDir,
      security,
      logger: childLogger(this.logger, 'http') as never,
      ...(h.tls !== null ? { https: { cert: readFileSync(h.tls.cert), key: readFileSync(h.tls.key) } } : {}),
    });
    const address = await this.http.listen({ host: h.host, port: h.port });
    this.httpAddress = address;
    this.logger.info({ url: address }, 'HTTP API and dashboard listening');
  }

  private sink(): FrameSink {
    return {
      push: (raw: RawFrame): boolean => {
        const accepted = this.pipeline.ingest(raw);
        return accepted && this.storeBacklog < STORE_BACKLOG_LIMIT;
      },
      onDrain: (listener) => {
        this.drainListeners.push(listener);
      },
    };
  }

  private tick(): void {
    this.pipeline.tick(Date.now());
    this.rejections.tick();
  }

  /** A defect in processing one frame must not take the service down: log it with where the frame came from and go on. */
  private internalError(message: string, stack: string | null, origin: string | null): void {
    this.logger.error({ origin, stack }, `internal error while processing a frame; frame dropped: ${message}`);
    this.metrics.frameRejected('(unknown)', 'INTERNAL');
  }

  /** The pipeline worker died: nothing can be computed any more, so stop and let the supervisor restart the service. */
  private fatal(err: Error): void {
    this.logger.fatal({ err }, 'the pipeline worker stopped; seqmon exits so that its supervisor restarts it');
    this.destroy(err);
    process.exitCode = 1;
    setImmediate(() => process.exit(1));
  }

  /** Sends what the pipeline produced to the live hub, the publisher and the store. */
  private dispatch(o: PipelineOutput): void {
    for (const r of o.results) {
      this.live.publishResult(r);
      this.noteTs(r);
    }
    for (const r of o.aggregates) {
      this.live.publishResult(r);
      if (r.window === PUBLISHED_WINDOW && this.publisher !== null) {
        this.publisher.publishResult(r);
        this.metrics.resultsPublished('sequence');
      }
      this.pendingResults.push(r);
      this.storeBacklog++;
      this.noteTs(r);
    }
    for (const a of o.alarms) this.onAlarm(a);
    for (const e of o.events) this.onEvent(e);
    for (const d of o.diagnostics) this.logger.warn({ feeder: d.feeder, kind: d.kind, ts: new Date(d.ts).toISOString() }, d.message);
    for (const r of o.rejections) this.rejections.rejected(r);
    clearOutput(o);
    if (this.pendingResults.length >= STORE_BATCH) this.flushStore();
  }

  private noteTs(r: SequenceResult): void {
    const prev = this.lastTs.get(r.feeder);
    if (prev === undefined || r.ts > prev) this.lastTs.set(r.feeder, r.ts);
  }

  private onAlarm(a: AlarmTransition): void {
    const fields = { feeder: a.feeder, condition: a.condition, level: a.level, value: a.value, limit: a.limit, phase: a.phase };
    if (a.state === 'raised') {
      this.logger.warn(fields, `alarm raised: ${a.message}`);
      this.metrics.alarmRaised(a.feeder, a.condition, a.level);
    } else this.logger.info(fields, `alarm cleared: ${a.message}`);
    this.live.publishAlarm(a);
    if (this.publisher !== null) {
      this.publisher.publishAlarm(a);
      this.metrics.resultsPublished('alarm');
    }
    this.enqueueStore(() => this.store.writeAlarm(a), 'alarm');
  }

  private onEvent(e: DisturbanceEvent): void {
    this.logger.warn({ feeder: e.feeder, type: e.type, peakCurrent: e.peakCurrent, durationMs: e.durationMs }, `disturbance: ${e.message}`);
    this.live.publishEvent(e);
    if (this.publisher !== null) {
      this.publisher.publishEvent(e);
      this.metrics.resultsPublished('event');
    }
    this.enqueueStore(() => this.store.writeEvent(e), 'event');
  }

  private flushStore(): void {
    if (this.pendingResults.length === 0) return;
    const batch = this.pendingResults;
    this.pendingResults = [];
    this.enqueueStore(async () => {
      await this.store.writeResults(batch);
      this.storeBacklog -= batch.length;
      if (this.storeBacklog < STORE_BACKLOG_LIMIT / 2) this.releaseDrain();
    }, 'results');
  }

  /** Store writes run one after another, in order, so a slow store applies backpressure instead of piling up requests. */
  private enqueueStore(write: () => Promise<void>, what: string): void {
    this.storeChain = this.storeChain.then(write).catch((err: unknown) => {
      this.logger.error({ err, what }, 'writing to the trend store failed');
    });
  }

  /** Sources register once and are told every time they may read again. */
  private releaseDrain(): void {
    for (const l of this.drainListeners) l();
  }

  private onSourceState(s: SourceStatus): void {
    this.metrics.sourceState(s.name, s.state);
  }

  private sourceStatuses(): SourceStatus[] {
    return this.sources.map((s) => s.status());
  }

  private feederInfos(): FeederInfo[] {
    const sourceNames = this.sources.map((s) => s.name);
    return this.pipeline.feederIds().map((id) => {
      const s = this.pipeline.feederSettings(id)!;
      const d = s.detection;
      return {
        id,
        nominalHz: s.nominalHz,
        nominalVoltageLN: s.nominalVoltageLN,
        limits: {
          voltageUnbalance: { enabled: d.voltageUnbalance.enabled, warning: d.voltageUnbalance.warning, alarm: d.voltageUnbalance.alarm },
          zeroSequenceVoltage: { enabled: d.zeroSequenceVoltage.enabled, warning: d.zeroSequenceVoltage.warning, alarm: d.zeroSequenceVoltage.alarm },
          currentUnbalance: { enabled: d.currentUnbalance.enabled, warning: d.currentUnbalance.warning, alarm: d.currentUnbalance.alarm },
          staleAfterMs: d.staleData.afterMs,
        },
        lastTs: this.lastTs.get(id) ?? null,
        sources: sourceNames,
      };
    });
  }

  /**
   * Graceful stop: simulator and sources first (no new input), then pending
   * outputs are flushed to the store, then publisher, store, HTTP and broker.
   * Idempotent. Open aggregation intervals are not written as partial values,
   * so a restart does not leave two records for one interval.
   */
  close(): Promise<void> {
    this.closing ??= this.doClose();
    return this.closing;
  }

  private async doClose(): Promise<void> {
    if (this.tickTimer !== null) clearInterval(this.tickTimer);
    if (this.flushTimer !== null) clearInterval(this.flushTimer);
    const step = async (what: string, fn: () => Promise<unknown>): Promise<void> => {
      try {
        await fn();
      } catch (err) {
        this.logger.warn({ err, what }, 'error while shutting down');
      }
    };
    if (this.simulator !== null) await step('simulator', () => this.simulator!.close());
    for (const s of [...this.sources].reverse()) await step(`source ${s.name}`, () => s.close());
    await step('pipeline', () => this.pipeline.close());
    this.flushStore();
    await step('store writes', () => this.storeChain);
    this.rejections.flush();
    if (this.publisher !== null) await step('publisher', () => this.publisher!.close());
    await step('store', () => this.store.close());
    this.live.destroy();
    if (this.http !== null) await step('http', () => this.http!.close());
    if (this.broker !== null) await step('broker', () => this.broker!.close());
    this.logger.info('seqmon stopped');
  }

  /** Abort everything at once (after a shutdown deadline). */
  destroy(err?: Error): void {
    if (this.tickTimer !== null) clearInterval(this.tickTimer);
    if (this.flushTimer !== null) clearInterval(this.flushTimer);
    this.simulator?.destroy(err);
    for (const s of this.sources) s.destroy(err);
    this.pipeline.destroy();
    this.store.destroy(err);
    this.live.destroy();
    void this.http?.close();
    void this.broker?.close();
  }
}

async function openConfiguredStore(config: SeqmonConfig, logger: Logger): Promise<TrendStore> {
  const s = config.store;
  const retention = {
    '3s': durationToDays(s.retention['3s'], 'store.retention.3s'),
    '10min': durationToDays(s.retention['10min'], 'store.retention.10min'),
    '2h': durationToDays(s.retention['2h'], 'store.retention.2h'),
  };
  let spec: string;
  if (s.kind === 'sqlite') {
    mkdirSync(dirname(s.path), { recursive: true });
    spec = `sqlite:${s.path}`;
  } else {
    const u = new URL(s.url!);
    if (s.username !== null) u.username = encodeURIComponent(s.username);
    if (s.password !== null) u.password = encodeURIComponent(s.password);
    u.pathname = '';
    spec = `influx:${u.toString().replace(/\/$/, '')}/${s.database!}`;
    mkdirSync(s.spool.dir, { recursive: true });
  }
  const store = await openStore(spec, {
    dataDir: s.kind === 'influx' ? s.spool.dir : config.dataDir,
    retention,
    influx: { spoolCapacity: s.spool.capacityPoints },
    onWarning: (msg: unknown) => logger.warn({ store: s.kind }, String(msg)),
  });
  logger.info({ store: s.kind, where: s.kind === 'sqlite' ? s.path : `${s.url}/${s.database}` }, 'trend store open');
  return store;
}

function toOpcuaFeeder(f: SeqmonConfig['opcua']['feeders'][number]): OpcuaFeeder {
  if (f.kind === 'phasor') {
    const polar = (t: NonNullable<typeof f.v>) => ({
      a: { mag: t.a.magnitude, ang: t.a.angle },
      b: { mag: t.b.magnitude, ang: t.b.angle },
      c: { mag: t.c.magnitude, ang: t.c.angle },
    });
    return {
      id: f.id,
      kind: 'phasor',
      nodes: { ...(f.v !== null ? { v: polar(f.v) } : {}), ...(f.i !== null ? { i: polar(f.i) } : {}), ...(f.freq !== null ? { freq: f.freq } : {}) },
    };
  }
  return {
    id: f.id,
    kind: 'rms',
    nodes: { ...(f.vll !== null ? { vll: f.vll } : {}), ...(f.vln !== null ? { vln: f.vln } : {}), ...(f.i !== null ? { i: f.i } : {}), ...(f.freq !== null ? { freq: f.freq } : {}) },
  };
}

function childLogger(logger: Logger, component: string): Logger {
  return logger.child({ component });
}

function defaultDashboardDir(): string | null {
  // dist/agent/main.js -> dist/dashboard
  const here = dirname(fileURLToPath(import.meta.url));
  return resolve(join(here, '..', 'dashboard'));
}
