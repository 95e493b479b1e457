/**
 * Options of the MQTT source, their defaults, and the one-time check that
 * turns them into a frozen, complete settings record (STYLE habit 2: validate
 * once at the edge). Every problem is an AgentError SRC_CONFIG whose message
 * names the option and says what to give instead.
 */
import { readFileSync } from 'node:fs';
import { AgentError } from '../../core/errors.js';
import { DEFAULT_FRAME_LIMITS } from '../../core/frames.js';
import type { Scheduler, SourceStatus } from '../../core/ports.js';
import type { BackoffSettings } from '../../core/backoff.js';
import { SILENT_LOGGER, type SourceLogger } from './logger.js';
import { SYSTEM_SCHEDULER } from './system-scheduler.js';
import { DEFAULT_INPUT_PREFIX, prefixProblem } from './topics.js';

/** Each value is a PEM string or the path of a PEM file; null or absent means "not given" (as in the config file). */
export interface MqttTlsOptions {
  readonly ca?: string | null | undefined;
  readonly cert?: string | null | undefined;
  readonly key?: string | null | undefined;
  /** Verify the broker certificate against `ca` (or the system store). Default true. */
  readonly rejectUnauthorized?: boolean | null | undefined;
}

export interface MqttSourceOptions {
  /** Broker URL: mqtt://, mqtts://, tcp://, ssl://, ws:// or wss://. */
  readonly url: string;
  /** Topics `<inputPrefix>/<feeder>/<kind>` are read. Default 'seqmon/in'. */
  readonly inputPrefix?: string | undefined;
  /** Default: 'seqmon-' plus 8 random hex digits. Give a fixed id with clean: false. */
  readonly clientId?: string | null | undefined;
  readonly username?: string | null | undefined;
  readonly password?: string | null | undefined;
  readonly tls?: MqttTlsOptions | null | undefined;
  /** 4 = MQTT 3.1.1, 5 = MQTT 5.0. Default 4. */
  readonly protocolVersion?: 4 | 5 | undefined;
  /** Subscription QoS. Default 1: the broker re-sends until the frame has been handed to the pipeline. */
  readonly qos?: 0 | 1 | undefined;
  /** Clean session. Default true. With false the broker keeps the subscription and queues QoS 1 frames while the agent is away. */
  readonly clean?: boolean | undefined;
  /** MQTT keep-alive, seconds (0..65535, 0 = off). Default 30. */
  readonly keepaliveS?: number | undefined;
  /** Give up on one attempt when no CONNACK arrives within this time, ms. Default 10000. */
  readonly connectTimeoutMs?: number | undefined;
  /** Reconnect back-off bounds, ms. Default { minMs: 500, maxMs: 30000 }. */
  readonly reconnect?: BackoffSettings | undefined;
  /** Payloads above this size are counted as oversized and handed on untouched for the validator to refuse. Default 4 MiB (DEFAULT_FRAME_LIMITS). */
  readonly maxPayloadBytes?: number | undefined;
  /** How long close() waits for UNSUBACK, a paused pipeline and unacknowledged publishes before it ends the connection anyway, ms. Default 5000. */
  readonly closeTimeoutMs?: number | undefined;
  /** Name in status(), logs and metrics. Default 'mqtt'. */
  readonly name?: string | undefined;
  readonly logger?: SourceLogger | undefined;
  /** Called once per state change. */
  readonly onState?: ((status: SourceStatus) => void) | undefined;
  /** Timers for the reconnect back-off; tests inject a fake. */
  readonly scheduler?: Scheduler | undefined;
  /** Uniform random in [0, 1) for the back-off jitter; tests pin it. */
  readonly random?: (() => number) | undefined;
}

export interface ResolvedTls {
  readonly ca: Buffer | undefined;
  readonly cert: Buffer | undefined;
  readonly key: Buffer | undefined;
  readonly rejectUnauthorized: boolean;
}

export interface MqttSourceSettings {
  readonly url: string;
  readonly inputPrefix: string;
  readonly clientId: string;
  readonly username: string | undefined;
  readonly password: string | undefined;
  readonly tls: ResolvedTls | null;
  readonly protocolVersion: 4 | 5;
  readonly qos: 0 | 1;
  readonly clean: boolean;
  readonly keepaliveS: number;
  readonly connectTimeoutMs: number;
  readonly reconnect: BackoffSettings;
  readonly maxPayloadBytes: number;
  readonly closeTimeoutMs: number;
  readonly name: string;
  readonly logger: SourceLogger;
  readonly onState: ((status: SourceStatus) => void) | null;
  readonly scheduler: Scheduler;
  readonly random: () => number;
}

export const MQTT_SOURCE_DEFAULTS = Object.freeze({
  inputPrefix: DEFAULT_INPUT_PREFIX,
  protocolVersion: 4 as const,
  qos: 1 as const,
  clean: true,
  // Half a minute: detects a dead TCP path within 45 s (1.5 x keep-alive, MQTT 3.1.1 §3.1.2.10)
  // without measurable traffic next to the frames themselves (common practice).
  keepaliveS: 30,
  connectTimeoutMs: 10_000,
  reconnect: Object.freeze({ minMs: 500, maxMs: 30_000 }),
  maxPayloadBytes: DEFAULT_FRAME_LIMITS.maxPayloadBytes,
  closeTimeoutMs: 5_000,
  name: 'mqtt',
});

const URL_SCHEMES = ['mqtt:', 'mqtts:', 'tcp:', 'ssl:', 'ws:', 'wss:'];
const TLS_SCHEMES = ['mqtts:', 'ssl:', 'wss:'];

function bad(option: string, message: string): never {
  throw new AgentError('SRC_CONFIG', `MQTT source option ${option} ${message}`, { details: { option } });
}

function positiveInt(option: string, value: number, max = Number.MAX_SAFE_INTEGER, min = 1): number {
  if (!Number.isInteger(value) || value < min || value > max) bad(option, `must be an integer in ${min}..${max}, found ${String(value)}`);
  return value;
}

/** A PEM string is taken as is; anything else is read as a file path. */
export function loadPem(option: string, value: string | null | undefined): Buffer | undefined {
  if (value === undefined || value === null) return undefined;
  if (value.includes('-----BEGIN ')) return Buffer.from(value, 'utf8');
  let text: Buffer;
  try {
    text = readFileSync(value);
  } catch (e) {
    bad(option, `names the file "${value}", which cannot be read (${(e as NodeJS.ErrnoException).code ?? (e as Error).message}); give a readable PEM file or the PEM text itself`);
  }
  if (!text.includes('-----BEGIN ')) bad(option, `names the file "${value}", which holds no PEM block ("-----BEGIN ..."); convert DER files with openssl first`);
  return text;
}

export function resolveSourceOptions(o: MqttSourceOptions): MqttSourceSettings {
  let parsed: URL;
  try {
    parsed = new URL(o.url);
  } catch {
    bad('url', `"${o.url}" is not a URL; write it like mqtt://127.0.0.1:1883`);
  }
  if (!URL_SCHEMES.includes(parsed.protocol)) bad('url', `has the scheme "${parsed.protocol}"; use one of ${URL_SCHEMES.join(' ')}`);
  const tlsIn = o.tls ?? null;
  if (tlsIn !== null && !TLS_SCHEMES.includes(parsed.protocol)) {
    bad('tls', `is set but the url scheme is "${parsed.protocol}", which does not use TLS; write mqtts:// (or wss://)`);
  }
  const inputPrefix = o.inputPrefix ?? MQTT_SOURCE_DEFAULTS.inputPrefix;
  const problem = prefixProblem(inputPrefix);
  if (problem !== null) bad('inputPrefix', `"${inputPrefix}" ${problem}`);

  const protocolVersion = o.protocolVersion ?? MQTT_SOURCE_DEFAULTS.protocolVersion;
  if (protocolVersion !== 4 && protocolVersion !== 5) bad('protocolVersion', `must be 4 (MQTT 3.1.1) or 5 (MQTT 5.0), found ${String(protocolVersion)}`);
  const qos = o.qos ?? MQTT_SOURCE_DEFAULTS.qos;
  if (qos !== 0 && qos !== 1) bad('qos', `must be 0 or 1, found ${String(qos)}`);
  const clean = o.clean ?? MQTT_SOURCE_DEFAULTS.clean;
  if (!clean && (o.clientId === undefined || o.clientId === null || o.clientId === '')) {
    bad('clientId', 'must be given when clean is false: the broker finds the kept session by the client id');
  }
  const clientId = o.clientId ?? `seqmon-${Math.floor(Math.random() * 0x1_0000_0000).toString(16).padStart(8, '0')}`;
  // MQTT 3.1.1 §3.1.3.1: at most 65535 UTF-8 bytes; brokers must accept 1..23 characters, most accept more.
  if (Buffer.byteLength(clientId) > 65535) bad('clientId', 'is longer than 65535 bytes');

  const keepaliveS = positiveInt('keepaliveS', o.keepaliveS ?? MQTT_SOURCE_DEFAULTS.keepaliveS, 65535, 0);
  const connectTimeoutMs = positiveInt('connectTimeoutMs', o.connectTimeoutMs ?? MQTT_SOURCE_DEFAULTS.connectTimeoutMs);
  const reconnect = o.reconnect ?? MQTT_SOURCE_DEFAULTS.reconnect;
  positiveInt('reconnect.minMs', reconnect.minMs);
  positiveInt('reconnect.maxMs', reconnect.maxMs);
  if (reconnect.maxMs < reconnect.minMs) bad('reconnect.maxMs', `(${reconnect.maxMs}) must not be below reconnect.minMs (${reconnect.minMs})`);
  const maxPayloadBytes = positiveInt('maxPayloadBytes', o.maxPayloadBytes ?? MQTT_SOURCE_DEFAULTS.maxPayloadBytes);
  const closeTimeoutMs = positiveInt('closeTimeoutMs', o.closeTimeoutMs ?? MQTT_SOURCE_DEFAULTS.closeTimeoutMs);

  const tls: ResolvedTls | null =
    tlsIn === null
      ? null
      : Object.freeze({
          ca: loadPem('tls.ca', tlsIn.ca),
          cert: loadPem('tls.cert', tlsIn.cert),
          key: loadPem('tls.key', tlsIn.key),
          rejectUnauthorized: tlsIn.rejectUnauthorized ?? true,
        });
  if (tls !== null && (tls.cert === undefined) !== (tls.key === undefined)) bad('tls', 'needs both cert and key for a client certificate, or neither');

  return Object.freeze({
    url: o.url,
    inputPrefix,
    clientId,
    username: o.username ?? undefined,
    password: o.password ?? undefined,
    tls,
    protocolVersion,
    qos,
    clean,
    keepaliveS,
    connectTimeoutMs,
    reconnect: Object.freeze({ minMs: reconnect.minMs, maxMs: reconnect.maxMs }),
    maxPayloadBytes,
    closeTimeoutMs,
    name: o.name ?? MQTT_SOURCE_DEFAULTS.name,
    logger: o.logger ?? SILENT_LOGGER,
    onState: o.onState ?? null,
    scheduler: o.scheduler ?? SYSTEM_SCHEDULER,
    random: o.random ?? Math.random,
  });
}

/** The URL with any password replaced, for logs. */
export function redactUrl(url: string): string {
  try {
    const u = new URL(url);
    if (u.password !== '') u.password = '***';
    return u.toString();
  } catch {
    return '(unparsable url)';
  }
}
