/**
 * The resolved, frozen configuration (config/schema.json is the source of
 * truth for keys and defaults; this file is its typed, resolved form). Every
 * field is present: optional things are null, never missing. Secrets named by
 * *Env keys are already read from the environment; relative paths are already
 * absolute.
 */
import type { DetectionSettings } from '../core/detect/settings.js';

export type LogLevel = 'fatal' | 'error' | 'warn' | 'info' | 'debug' | 'trace' | 'silent';

export interface ClientTlsConfig {
  readonly ca: string | null;
  readonly cert: string | null;
  readonly key: string | null;
  readonly rejectUnauthorized: boolean;
}

export interface MqttConfig {
  readonly enabled: boolean;
  readonly url: string;
  readonly embeddedBroker: boolean;
  readonly clientId: string | null;
  readonly username: string | null;
  /** Resolved from password or passwordEnv; null when neither is given. */
  readonly password: string | null;
  readonly tls: ClientTlsConfig | null;
  readonly protocolVersion: 4 | 5;
  readonly qos: 0 | 1;
  readonly inputPrefix: string;
  readonly outputPrefix: string;
  readonly publishResults: boolean;
  readonly maxPayloadBytes: number;
  readonly keepaliveSec: number;
  readonly cleanSession: boolean;
  readonly connectTimeoutMs: number;
  readonly reconnect: { readonly minMs: number; readonly maxMs: number };
}

export interface OpcuaPhasorNodes {
  readonly magnitude: string;
  readonly angle: string;
}
export interface OpcuaPhasorTriple {
  readonly a: OpcuaPhasorNodes;
  readonly b: OpcuaPhasorNodes;
  readonly c: OpcuaPhasorNodes;
}
export interface OpcuaPhaseTriple {
  readonly a: string;
  readonly b: string;
  readonly c: string;
}
export interface OpcuaLineTriple {
  readonly ab: string;
  readonly bc: string;
  readonly ca: string;
}

/** Node ids of one feeder assembled into phasor frames. */
export interface OpcuaPhasorFeeder {
  readonly id: string;
  readonly kind: 'phasor';
  readonly freq: string | null;
  readonly v: OpcuaPhasorTriple | null;
  readonly i: OpcuaPhasorTriple | null;
}

/** Node ids of one feeder assembled into rms frames. */
export interface OpcuaRmsFeeder {
  readonly id: string;
  readonly kind: 'rms';
  readonly freq: string | null;
  readonly vll: OpcuaLineTriple | null;
  readonly vln: OpcuaPhaseTriple | null;
  readonly i: OpcuaPhaseTriple | null;
}

export type OpcuaFeederConfig = OpcuaPhasorFeeder | OpcuaRmsFeeder;

export type OpcuaSecurityMode = 'None' | 'Sign' | 'SignAndEncrypt';
export type OpcuaSecurityPolicy = 'None' | 'Basic256Sha256' | 'Aes128_Sha256_RsaOaep' | 'Aes256_Sha256_RsaPss';

export interface OpcuaConfig {
  readonly enabled: boolean;
  readonly endpointUrl: string | null;
  readonly securityMode: OpcuaSecurityMode;
  readonly securityPolicy: OpcuaSecurityPolicy;
  /** Absolute path; <dataDir>/pki when not configured. */
  readonly certificateDir: string;
  readonly user: { readonly username: string; readonly password: string | null } | null;
  readonly samplingIntervalMs: number;
  readonly assemblyToleranceMs: number;
  readonly feeders: readonly OpcuaFeederConfig[];
}

export type StoreKind = 'sqlite' | 'influx';
export type RetentionWindow = '3s' | '10min' | '2h';

export interface StoreConfig {
  readonly kind: StoreKind;
  /** SQLite file, absolute; <dataDir>/seqmon.db when not configured (kept for kind influx too, unused there). */
  readonly path: string;
  /** InfluxDB base URL without trailing slash; null for kind sqlite. */
  readonly url: string | null;
  readonly database: string | null;
  readonly username: string | null;
  readonly password: string | null;
  /** InfluxDB durations per window: '30d', '52w', '720h' or 'INF'. */
  readonly retention: Readonly<Record<RetentionWindow, string>>;
  readonly spool: { readonly dir: string; readonly capacityPoints: number };
}

export interface HttpConfig {
  readonly enabled: boolean;
  readonly host: string;
  readonly port: number;
  /** Resolved from token or tokenEnv; null leaves the API without authentication. */
  readonly token: string | null;
  readonly tls: { readonly cert: string; readonly key: string } | null;
  readonly acknowledgeInsecureBind: boolean;
  readonly rateLimitPerMin: number;
  readonly bodyLimitBytes: number;
}

export interface FeederConfig {
  readonly id: string;
  readonly name: string | null;
  readonly nominalHz: 50 | 60;
  /** Line-to-neutral, V; derived from nominalVoltageLL/√3 when only that is given; null when unknown. */
  readonly nominalVoltageLN: number | null;
  /** Fully merged: DEFAULT_DETECTION, then feeders.defaults.detection, then the feeder's own detection. */
  readonly detection: DetectionSettings;
  /** Three-wire feeder: phase currents sum to zero, so I2/I1 follows from current magnitudes alone. */
  readonly currentsSumToZero: boolean;
}

export interface FeedersConfig {
  readonly discover: boolean;
  /** Upper bound on listed + discovered feeders. */
  readonly max: number;
  readonly defaults: Omit<FeederConfig, 'id' | 'name'>;
  readonly list: readonly FeederConfig[];
}

export interface SimulatorConfig {
  readonly enabled: boolean;
  readonly seed: number;
  readonly speed: number;
  readonly startHour: number;
  readonly nominalHz: 50 | 60;
}

export interface SeqmonConfig {
  /** Absolute. */
  readonly dataDir: string;
  readonly logging: { readonly level: LogLevel; readonly rejectedFramesPerMinute: number };
  readonly mqtt: MqttConfig;
  readonly opcua: OpcuaConfig;
  readonly store: StoreConfig;
  readonly http: HttpConfig;
  readonly feeders: FeedersConfig;
  readonly simulator: SimulatorConfig;
  /** The file the configuration came from (absolute), or null for built-in defaults. */
  readonly source: string | null;
}

/** One problem found in a configuration: where, what was expected, what was found. */
export interface ConfigProblem {
  /** Dotted path of the key, e.g. "mqtt.reconnect.maxMs" or "feeders.list[2].id"; "(root)" for the whole file. */
  readonly path: string;
  readonly expected: string;
  readonly found: string;
  /** Line in the YAML file (1-based), when known. */
  readonly line: number | null;
}
