/**
 * Loads the configuration: read YAML, apply the environment overrides, fill
 * defaults and validate against config/schema.json, check what a schema
 * cannot (cross-field rules, secrets named by *Env keys), merge detection
 * settings over DEFAULT_DETECTION, and deep-freeze. Every problem is reported
 * at once, each as path, expected and found.
 */
import { readFile } from 'node:fs/promises';
import { isAbsolute, resolve as resolvePath } from 'node:path';
import { LineCounter, parseDocument, isMap, isPair, isScalar } from 'yaml';
import type { Document, Node } from 'yaml';
import { DEFAULT_DETECTION } from '../core/detect/settings.js';
import type { DetectionSettings } from '../core/detect/settings.js';
import { AgentError, isAgentError } from '../core/errors.js';
import { DEFAULT_FRAME_LIMITS } from '../core/frames.js';
import type { FeederSettings, PipelineSettings } from '../core/pipeline.js';
import { readEnvOverrides } from './env-overrides.js';
import type { Env } from './env-overrides.js';
import { checkAgainstSchema, describeValue, formatPath } from './schema-validator.js';
import type {
  ConfigProblem,
  FeederConfig,
  LogLevel,
  OpcuaFeederConfig,
  OpcuaLineTriple,
  OpcuaPhaseTriple,
  OpcuaPhasorTriple,
  RetentionWindow,
  SeqmonConfig,
} from './types.js';

export interface LoadOptions {
  /** Base of relative paths; the process's working directory by default. */
  readonly cwd?: string;
}

type Raw = Record<string, unknown>;
type LineOf = (path: readonly (string | number)[]) => number | null;

/** nominalVoltageLN and nominalVoltageLL may both be given only if they agree within this (rounded nameplate values, e.g. 7200 vs 12470/√3 = 7199.6). */
const LN_LL_AGREEMENT = 0.01;

/**
 * Loads and validates a configuration file, or the built-in defaults when
 * `path` is null. Environment overrides (SEQMON_*) apply in both cases.
 * Throws AgentError CFG_READ_FAILED, CFG_ENV_INVALID, CFG_RENAMED_KEY or
 * CFG_INVALID (details.problems lists every problem).
 */
export async function loadConfig(path: string | null, env: Env = process.env, options: LoadOptions = {}): Promise<SeqmonConfig> {
  const cwd = options.cwd ?? process.cwd();
  if (path === null) return buildConfig({}, null, () => null, env, cwd);
  const file = resolvePath(cwd, path);
  let text: string;
  try {
    text = await readFile(file, 'utf8');
  } catch (e) {
    const reason = (e as NodeJS.ErrnoException).code === 'ENOENT' ? 'the file does not exist' : (e as Error).message;
    throw new AgentError('CFG_READ_FAILED', `cannot read configuration ${file}: ${reason}`, { cause: e, details: { file } });
  }
  return parseConfigText(text, file, env, cwd);
}

/** Same as loadConfig, from text already in memory (`file` names it in messages). */
export function parseConfigText(text: string, file: string | null, env: Env = process.env, cwd: string = process.cwd()): SeqmonConfig {
  const where = file ?? '(text)';
  const lineCounter = new LineCounter();
  const doc = parseDocument(text, { lineCounter, prettyErrors: false, uniqueKeys: true });
  if (doc.errors.length > 0) {
    const first = doc.errors[0]!;
    const lineAt = (e: { pos: [number, number] }): number => lineCounter.linePos(e.pos[0]).line;
    const line = lineAt(first);
    throw new AgentError('CFG_READ_FAILED', `${where}${line === null ? '' : ` line ${line}`}: not valid YAML: ${first.message.split('\n')[0]}`, {
      details: { file, line, problems: doc.errors.map((e) => ({ path: '(root)', expected: 'valid YAML', found: e.message.split('\n')[0], line: lineAt(e) })) },
    });
  }
  let raw: unknown;
  try {
    // A small alias budget refuses "billion laughs" files.
    raw = doc.toJS({ maxAliasCount: 100 });
  } catch (e) {
    throw new AgentError('CFG_READ_FAILED', `${where}: ${(e as Error).message}`, { cause: e, details: { file } });
  }
  if (raw === null || raw === undefined) raw = {};
  if (typeof raw !== 'object' || Array.isArray(raw)) {
    const problem: ConfigProblem = { path: '(root)', expected: 'a mapping of keys (mqtt, store, http, feeders, ...)', found: describeValue(raw), line: 1 };
    throw new AgentError('CFG_INVALID', `${where} is invalid: expected ${problem.expected}, found ${problem.found}`, { details: { file, problems: [problem] } });
  }
  return buildConfig(raw as Raw, file, lineLookup(doc, lineCounter), env, cwd);
}

function lineLookup(doc: Document, lc: LineCounter): LineOf {
  return (path) => {
    // The node itself, else the key that names it, else the nearest parent that exists.
    for (let n = path.length; n >= 0; n--) {
      const segs = path.slice(0, n);
      if (n > 0) {
        const parent = n === 1 ? doc.contents : doc.getIn(segs.slice(0, -1), true);
        if (isMap(parent)) {
          const pair = parent.items.find((p) => isPair(p) && isScalar(p.key) && String(p.key.value) === String(segs[n - 1]));
          const key = pair?.key as Node | undefined;
          if (key?.range !== undefined && key.range !== null) return lc.linePos(key.range[0]).line;
        }
      }
      const node = (n === 0 ? doc.contents : doc.getIn(segs, true)) as Node | null | undefined;
      if (node !== null && node !== undefined && typeof node === 'object' && 'range' in node && node.range) return lc.linePos(node.range[0]).line;
    }
    return null;
  };
}

/** Top-level sections; a section header with every key under it commented out parses as null and counts as empty. */
const SECTIONS = ['logging', 'mqtt', 'opcua', 'store', 'http', 'feeders', 'simulator'];

function buildConfig(raw: Raw, file: string | null, lineOf: LineOf, env: Env, cwd: string): SeqmonConfig {
  const where = file ?? 'the built-in defaults';
  for (const key of SECTIONS) if (raw[key] === null) delete raw[key];
  for (const o of readEnvOverrides(env)) o.apply(raw);

  const schema = checkAgainstSchema(raw, lineOf);
  if (schema.renamed.length > 0) {
    throw new AgentError(
      'CFG_RENAMED_KEY',
      `${where}: ${schema.renamed.map(({ problem: p, renamedTo }) => `${p.path}${p.line === null ? '' : ` (line ${p.line})`} was renamed: use ${renamedTo}`).join('; ')}`,
      { details: { file, problems: schema.problems } },
    );
  }
  const problems = [...schema.problems];
  // Cross-field rules only make sense on a document of the right shape.
  const config = problems.length === 0 ? resolve(raw, file, env, cwd, problems, lineOf) : null;
  if (config === null || problems.length > 0) {
    throw new AgentError('CFG_INVALID', `${where} is invalid (${problems.length} problem${problems.length === 1 ? '' : 's'}): ${problems.map(oneLine).join('; ')}`, {
      details: { file, problems },
    });
  }
  return deepFreeze(config);
}

function oneLine(p: ConfigProblem): string {
  return `${p.path}${p.line === null ? '' : ` (line ${p.line})`}: expected ${p.expected}, found ${p.found}`;
}

/** Builds the typed configuration from a schema-valid raw object, adding cross-field problems. */
function resolve(raw: Raw, file: string | null, env: Env, cwd: string, problems: ConfigProblem[], lineOf: LineOf): SeqmonConfig {
  const problem = (segs: (string | number)[], expected: string, found: string): void => {
    problems.push({ path: formatPath(segs), expected, found, line: lineOf(segs) });
  };
  const abs = (p: string): string => (isAbsolute(p) ? p : resolvePath(cwd, p));
  const secret = (section: Raw, segs: string[], plainKey: string, envKey: string): string | null => {
    const plain = section[plainKey];
    const name = section[envKey];
    if (plain !== undefined && name !== undefined) {
      problem([...segs, envKey], `only one of ${plainKey} and ${envKey}`, 'both');
      return null;
    }
    if (typeof plain === 'string') return plain;
    if (typeof name === 'string') {
      const value = env[name];
      if (value === undefined || value === '') {
        problem([...segs, envKey], `the environment variable ${name} to hold the secret`, `${name} is not set`);
        return null;
      }
      return value;
    }
    return null;
  };

  const dataDir = abs(raw.dataDir as string);
  const logging = raw.logging as Raw;

  // --- mqtt
  const m = raw.mqtt as Raw;
  const reconnect = m.reconnect as Raw;
  if ((reconnect.minMs as number) > (reconnect.maxMs as number)) {
    problem(['mqtt', 'reconnect', 'maxMs'], `a value >= mqtt.reconnect.minMs (${String(reconnect.minMs)})`, describeValue(reconnect.maxMs));
  }
  const mqttTls = m.tls as Raw | null;
  if (mqttTls !== null && (mqttTls.cert === null) !== (mqttTls.key === null)) {
    problem(['mqtt', 'tls', mqttTls.cert === null ? 'cert' : 'key'], 'both cert and key for a client certificate, or neither', 'only one of them');
  }
  if (m.cleanSession === false && m.clientId === null) {
    problem(['mqtt', 'clientId'], 'a fixed client id when mqtt.cleanSession is false (the broker finds the kept session by it)', 'null');
  }
  if (m.embeddedBroker === true) {
    const u = new URL(m.url as string);
    if (u.protocol !== 'mqtt:' && u.protocol !== 'tcp:') problem(['mqtt', 'url'], 'an mqtt:// URL when mqtt.embeddedBroker is on (the embedded broker has no TLS)', describeValue(m.url));
    else if (!isLoopback(u.hostname)) problem(['mqtt', 'url'], 'a loopback host (127.0.0.1, ::1 or localhost) when mqtt.embeddedBroker is on', describeValue(m.url));
    if (m.protocolVersion === 5) problem(['mqtt', 'protocolVersion'], '4 when mqtt.embeddedBroker is on (the embedded broker speaks MQTT 3.1.1)', '5');
  }

  // --- opcua
  const o = raw.opcua as Raw;
  const opcFeeders = (o.feeders as Raw[]).map(opcuaFeeder);
  if (o.enabled === true) {
    if (o.endpointUrl === null) problem(['opcua', 'endpointUrl'], 'an endpoint URL when opcua.enabled is true', 'null');
    if (opcFeeders.length === 0) problem(['opcua', 'feeders'], 'at least one feeder when opcua.enabled is true', 'an empty list');
  }
  if ((o.securityMode === 'None') !== (o.securityPolicy === 'None')) {
    problem(['opcua', 'securityPolicy'], o.securityMode === 'None' ? 'None when securityMode is None' : `a real policy when securityMode is ${String(o.securityMode)}`, describeValue(o.securityPolicy));
  }
  duplicates(opcFeeders.map((f) => f.id), (k, id) => problem(['opcua', 'feeders', k, 'id'], 'a feeder id not used before in opcua.feeders', `${JSON.stringify(id)} again`));
  const opcUser = o.user as Raw | null;

  // --- store
  const s = raw.store as Raw;
  if (s.kind === 'influx') {
    if (s.url === null) problem(['store', 'url'], 'the InfluxDB URL when store.kind is influx', 'null');
    if (s.database === null) problem(['store', 'database'], 'the database name when store.kind is influx', 'null');
  }
  const retention = s.retention as Record<RetentionWindow, string>;
  const spool = s.spool as Raw;

  // --- http
  const h = raw.http as Raw;
  const token = secret(h, ['http'], 'token', 'tokenEnv');
  if (token !== null && token.length < 16 && h.tokenEnv !== undefined) {
    problem(['http', 'tokenEnv'], `a token of at least 16 characters in ${String(h.tokenEnv)}`, `${token.length} characters`);
  }
  const httpTls = h.tls as Raw | null;

  // --- feeders
  const f = raw.feeders as Raw;
  const d = f.defaults as Raw;
  const defaultsLN = nominalLN(d, ['feeders', 'defaults'], null, problem);
  const defaultsDetection = mergeDetection(DEFAULT_DETECTION, d.detection as Raw);
  checkDetection(defaultsDetection, ['feeders', 'defaults', 'detection'], problem);
  const list: FeederConfig[] = (f.list as Raw[]).map((entry, k) => {
    const detection = entry.detection === undefined ? defaultsDetection : mergeDetection(defaultsDetection, entry.detection as Raw);
    if (entry.detection !== undefined) checkDetection(detection, ['feeders', 'list', k, 'detection'], problem);
    const own = nominalLN(entry, ['feeders', 'list', k], defaultsLN, problem);
    return {
      id: entry.id as string,
      name: (entry.name as string | undefined) ?? null,
      nominalHz: (entry.nominalHz as 50 | 60 | undefined) ?? (d.nominalHz as 50 | 60),
      nominalVoltageLN: own,
      detection,
      currentsSumToZero: (entry.currentsSumToZero as boolean | undefined) ?? (d.currentsSumToZero as boolean),
    };
  });
  duplicates(list.map((x) => x.id), (k, id) => problem(['feeders', 'list', k, 'id'], 'a feeder id not used before in feeders.list', `${JSON.stringify(id)} again`));
  if (f.discover === false && list.length === 0) {
    problem(['feeders', 'list'], 'at least one feeder when feeders.discover is false (otherwise every frame is rejected)', 'an empty list');
  }
  if (list.length > (f.max as number)) problem(['feeders', 'max'], `at least the ${list.length} listed feeders`, describeValue(f.max));

  // --- simulator
  const sim = raw.simulator as Raw;
  if (sim.enabled === true && m.enabled === false) problem(['simulator', 'enabled'], 'false while mqtt.enabled is false (the simulator publishes through the broker)', 'true');

  const config: SeqmonConfig = {
    dataDir,
    logging: { level: logging.level as LogLevel, rejectedFramesPerMinute: logging.rejectedFramesPerMinute as number },
    mqtt: {
      enabled: m.enabled as boolean,
      url: m.url as string,
      embeddedBroker: m.embeddedBroker as boolean,
      clientId: m.clientId as string | null,
      username: m.username as string | null,
      password: secret(m, ['mqtt'], 'password', 'passwordEnv'),
      tls:
        mqttTls === null
          ? null
          : {
              ca: mqttTls.ca === null ? null : abs(mqttTls.ca as string),
              cert: mqttTls.cert === null ? null : abs(mqttTls.cert as string),
              key: mqttTls.key === null ? null : abs(mqttTls.key as string),
              rejectUnauthorized: mqttTls.rejectUnauthorized as boolean,
            },
      protocolVersion: m.protocolVersion as 4 | 5,
      qos: m.qos as 0 | 1,
      inputPrefix: m.inputPrefix as string,
      outputPrefix: m.outputPrefix as string,
      publishResults: m.publishResults as boolean,
      maxPayloadBytes: m.maxPayloadBytes as number,
      keepaliveSec: m.keepaliveSec as number,
      cleanSession: m.cleanSession as boolean,
      connectTimeoutMs: m.connectTimeoutMs as number,
      reconnect: { minMs: reconnect.minMs as number, maxMs: reconnect.maxMs as number },
    },
    opcua: {
      enabled: o.enabled as boolean,
      endpointUrl: o.endpointUrl as string | null,
      securityMode: o.securityMode as SeqmonConfig['opcua']['securityMode'],
      securityPolicy: o.securityPolicy as SeqmonConfig['opcua']['securityPolicy'],
      certificateDir: o.certificateDir === null ? resolvePath(dataDir, 'pki') : abs(o.certificateDir as string),
      user: opcUser === null ? null : { username: opcUser.username as string, password: secret(opcUser, ['opcua', 'user'], 'password', 'passwordEnv') },
      samplingIntervalMs: o.samplingIntervalMs as number,
      assemblyToleranceMs: o.assemblyToleranceMs as number,
      feeders: opcFeeders,
    },
    store: {
      kind: s.kind as 'sqlite' | 'influx',
      path: s.path === null ? resolvePath(dataDir, 'seqmon.db') : abs(s.path as string),
      url: s.url === null ? null : (s.url as string).replace(/\/$/, ''),
      database: s.database as string | null,
      username: s.username as string | null,
      password: secret(s, ['store'], 'password', 'passwordEnv'),
      retention: { '3s': retention['3s'], '10min': retention['10min'], '2h': retention['2h'] },
      spool: { dir: spool.dir === null ? resolvePath(dataDir, 'spool') : abs(spool.dir as string), capacityPoints: spool.capacityPoints as number },
    },
    http: {
      enabled: h.enabled as boolean,
      host: h.host as string,
      port: h.port as number,
      token,
      tls: httpTls === null ? null : { cert: abs(httpTls.cert as string), key: abs(httpTls.key as string) },
      acknowledgeInsecureBind: h.acknowledgeInsecureBind as boolean,
      rateLimitPerMin: h.rateLimitPerMin as number,
      bodyLimitBytes: h.bodyLimitBytes as number,
    },
    feeders: {
      discover: f.discover as boolean,
      max: f.max as number,
      defaults: { nominalHz: d.nominalHz as 50 | 60, nominalVoltageLN: defaultsLN, detection: defaultsDetection, currentsSumToZero: d.currentsSumToZero as boolean },
      list,
    },
    simulator: {
      enabled: sim.enabled as boolean,
      seed: sim.seed as number,
      speed: sim.speed as number,
      startHour: sim.startHour as number,
      nominalHz: sim.nominalHz as 50 | 60,
    },
    source: file,
  };
  return config;
}

export function isLoopback(host: string): boolean {
  const h = host.replace(/^\[|\]$/g, '');
  return h === 'localhost' || h === '::1' || /^127\.\d{1,3}\.\d{1,3}\.\d{1,3}$/.test(h);
}

function duplicates(ids: readonly string[], report: (index: number, id: string) => void): void {
  const seen = new Set<string>();
  ids.forEach((id, k) => {
    if (seen.has(id)) report(k, id);
    seen.add(id);
  });
}

function nominalLN(section: Raw, segs: (string | number)[], inherited: number | null, problem: (segs: (string | number)[], e: string, f: string) => void): number | null {
  const ln = section.nominalVoltageLN as number | null | undefined;
  const ll = section.nominalVoltageLL as number | null | undefined;
  const hasLN = typeof ln === 'number';
  const hasLL = typeof ll === 'number';
  if (hasLN && hasLL && Math.abs(ln * Math.sqrt(3) - ll) > LN_LL_AGREEMENT * ll) {
    problem([...segs, 'nominalVoltageLL'], `about ${Math.round(ln * Math.sqrt(3))} V (= nominalVoltageLN × √3), or only one of the two`, describeValue(ll));
  }
  if (hasLN) return ln;
  // Line-to-neutral = line-to-line / √3 for a balanced three-phase system (Glover, Sarma & Overbye, ch. 2).
  if (hasLL) return ll / Math.sqrt(3);
  // An explicit null on a feeder means "unknown" and does not inherit.
  if (ln === null || ll === null) return null;
  return inherited;
}

/** Two-level merge: each detection group is merged key by key over the base. */
export function mergeDetection(base: DetectionSettings, override: Raw | undefined): DetectionSettings {
  if (override === undefined) return base;
  const out: Record<string, Record<string, unknown>> = {};
  for (const [group, values] of Object.entries(base)) {
    const o = override[group] as Raw | undefined;
    out[group] = o === undefined ? { ...(values as Raw) } : { ...(values as Raw), ...o };
  }
  return out as unknown as DetectionSettings;
}

function checkDetection(det: DetectionSettings, segs: (string | number)[], problem: (segs: (string | number)[], e: string, f: string) => void): void {
  for (const group of ['voltageUnbalance', 'zeroSequenceVoltage', 'currentUnbalance'] as const) {
    const l = det[group];
    if (l.alarm < l.warning) problem([...segs, group, 'alarm'], `a value >= the warning level (${l.warning})`, describeValue(l.alarm));
    if (l.hysteresis >= l.warning && l.warning > 0) problem([...segs, group, 'hysteresis'], `a value below the warning level (${l.warning}), or the warning could never clear`, describeValue(l.hysteresis));
  }
}

function opcuaFeeder(f: Raw): OpcuaFeederConfig {
  const freq = (f.freq as string | undefined) ?? null;
  if (f.kind === 'phasor') {
    return { id: f.id as string, kind: 'phasor', freq, v: (f.v as OpcuaPhasorTriple | undefined) ?? null, i: (f.i as OpcuaPhasorTriple | undefined) ?? null };
  }
  return {
    id: f.id as string,
    kind: 'rms',
    freq,
    vll: (f.vll as OpcuaLineTriple | undefined) ?? null,
    vln: (f.vln as OpcuaPhaseTriple | undefined) ?? null,
    i: (f.i as OpcuaPhaseTriple | undefined) ?? null,
  };
}

function deepFreeze<T>(o: T): T {
  if (o !== null && typeof o === 'object' && !Object.isFrozen(o)) {
    Object.freeze(o);
    for (const v of Object.values(o as object)) deepFreeze(v);
  }
  return o;
}

/** The settings the core pipeline is built from. */
export function toPipelineSettings(config: SeqmonConfig): PipelineSettings {
  const feeder = (x: FeederConfig): FeederSettings => ({ id: x.id, nominalHz: x.nominalHz, nominalVoltageLN: x.nominalVoltageLN, detection: x.detection, currentsSumToZero: x.currentsSumToZero });
  return Object.freeze({
    discoverFeeders: config.feeders.discover,
    defaults: Object.freeze({ ...config.feeders.defaults }),
    feeders: Object.freeze(config.feeders.list.map((x) => Object.freeze(feeder(x)))),
    limits: Object.freeze({ ...DEFAULT_FRAME_LIMITS, maxPayloadBytes: config.mqtt.maxPayloadBytes }),
    maxFeeders: config.feeders.max,
  });
}

/** Human-readable explanation of a configuration error, one problem per line. */
export function formatConfigErrors(err: unknown): string {
  if (!isAgentError(err)) return `seqmon: ${err instanceof Error ? err.message : String(err)}`;
  const problems = (err.details?.problems as ConfigProblem[] | undefined) ?? [];
  const file = (err.details?.file as string | null | undefined) ?? null;
  if (problems.length === 0) return `${err.code}: ${err.message}`;
  const head =
    err.code === 'CFG_ENV_INVALID'
      ? `${err.code}: environment override${problems.length === 1 ? '' : 's'} cannot be used:`
      : err.code === 'CFG_READ_FAILED'
        ? `${err.code}: ${err.message}`
        : `${err.code}: ${file ?? 'the configuration'} has ${problems.length} problem${problems.length === 1 ? '' : 's'}:`;
  if (err.code === 'CFG_READ_FAILED') return head;
  const lines = problems.map(
    (p, k) => `  ${k + 1}. ${p.path}${p.line === null ? '' : ` (line ${p.line})`}\n       expected: ${p.expected}\n       found:    ${p.found}`,
  );
  return [head, ...lines].join('\n');
}
