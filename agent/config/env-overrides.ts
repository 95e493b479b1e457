/**
 * Environment variables that override the file and the defaults
 * (shared/ARCHITECTURE.md, "Command line"). Each value is checked here, so a
 * bad one is reported by the name of the variable (CFG_ENV_INVALID) rather
 * than as a schema path the user never wrote. An empty variable counts as
 * unset, because container tooling often passes empty strings.
 */
import { AgentError } from '../core/errors.js';
import type { ConfigProblem } from './types.js';

export const ENV_OVERRIDES = ['SEQMON_MQTT_URL', 'SEQMON_STORE', 'SEQMON_HTTP_HOST', 'SEQMON_HTTP_PORT', 'SEQMON_NOMINAL_HZ', 'SEQMON_DATA_DIR'] as const;
export type EnvOverrideName = (typeof ENV_OVERRIDES)[number];

export type Env = Readonly<Record<string, string | undefined>>;

const MQTT_URL = /^(mqtt|mqtts|tcp|tls|ws|wss):\/\/[^\s/]+(:[0-9]{1,5})?(\/\S*)?$/;
const INFLUX_STORE = /^influx:(https?:\/\/[^\s/]+(?::[0-9]{1,5})?)\/([A-Za-z0-9_.-]{1,64})\/?$/;
// An IPv4/IPv6 literal or a host name; no spaces, schemes or paths.
const HOST = /^(\[?[0-9A-Fa-f:.]+\]?|[A-Za-z0-9]([A-Za-z0-9-]{0,62})(\.[A-Za-z0-9]([A-Za-z0-9-]{0,62}))*)$/;

/** The overrides to apply, each a dotted path into the raw configuration and a value. */
export interface EnvOverride {
  readonly variable: EnvOverrideName;
  readonly apply: (raw: Record<string, unknown>) => void;
}

function valueOf(env: Env, name: EnvOverrideName): string | null {
  const v = env[name];
  return v === undefined || v.trim() === '' ? null : v.trim();
}

function objectAt(raw: Record<string, unknown>, key: string): Record<string, unknown> {
  const cur = raw[key];
  if (cur !== null && typeof cur === 'object' && !Array.isArray(cur)) return cur as Record<string, unknown>;
  const fresh: Record<string, unknown> = {};
  raw[key] = fresh;
  return fresh;
}

/** Reads and checks every override; throws CFG_ENV_INVALID listing each bad variable. */
export function readEnvOverrides(env: Env): EnvOverride[] {
  const out: EnvOverride[] = [];
  const problems: ConfigProblem[] = [];
  const bad = (variable: EnvOverrideName, expected: string, found: string): void => {
    problems.push({ path: variable, expected, found: JSON.stringify(found), line: null });
  };

  const url = valueOf(env, 'SEQMON_MQTT_URL');
  if (url !== null) {
    if (!MQTT_URL.test(url)) bad('SEQMON_MQTT_URL', 'a broker URL such as mqtt://127.0.0.1:1883 (schemes mqtt, mqtts, tcp, tls, ws, wss)', url);
    else out.push({ variable: 'SEQMON_MQTT_URL', apply: (raw) => void (objectAt(raw, 'mqtt').url = url) });
  }

  const store = valueOf(env, 'SEQMON_STORE');
  if (store !== null) {
    const influx = INFLUX_STORE.exec(store);
    if (store.startsWith('sqlite:') && store.length > 'sqlite:'.length) {
      const path = store.slice('sqlite:'.length);
      out.push({
        variable: 'SEQMON_STORE',
        apply: (raw) => {
          const s = objectAt(raw, 'store');
          s.kind = 'sqlite';
          s.path = path;
        },
      });
    } else if (influx !== null) {
      out.push({
        variable: 'SEQMON_STORE',
        apply: (raw) => {
          const s = objectAt(raw, 'store');
          s.kind = 'influx';
          s.url = influx[1];
          s.database = influx[2];
        },
      });
    } else {
      bad('SEQMON_STORE', 'sqlite:PATH or influx:http://HOST:PORT/DATABASE', store);
    }
  }

  const host = valueOf(env, 'SEQMON_HTTP_HOST');
  if (host !== null) {
    if (!HOST.test(host)) bad('SEQMON_HTTP_HOST', 'an IP address or host name such as 127.0.0.1 or 0.0.0.0', host);
    else out.push({ variable: 'SEQMON_HTTP_HOST', apply: (raw) => void (objectAt(raw, 'http').host = host) });
  }

  const port = valueOf(env, 'SEQMON_HTTP_PORT');
  if (port !== null) {
    const n = /^[0-9]{1,5}$/.test(port) ? Number(port) : Number.NaN;
    if (!(n >= 0 && n <= 65535)) bad('SEQMON_HTTP_PORT', 'a port number from 0 to 65535', port);
    else out.push({ variable: 'SEQMON_HTTP_PORT', apply: (raw) => void (objectAt(raw, 'http').port = n) });
  }

  const hz = valueOf(env, 'SEQMON_NOMINAL_HZ');
  if (hz !== null) {
    if (hz !== '50' && hz !== '60') bad('SEQMON_NOMINAL_HZ', '50 or 60', hz);
    else {
      const n = Number(hz);
      out.push({
        variable: 'SEQMON_NOMINAL_HZ',
        // One power system has one frequency: every feeder, listed or not, and the simulator.
        apply: (raw) => {
          const feeders = objectAt(raw, 'feeders');
          objectAt(feeders, 'defaults').nominalHz = n;
          if (Array.isArray(feeders.list)) {
            for (const f of feeders.list) if (f !== null && typeof f === 'object' && !Array.isArray(f)) (f as Record<string, unknown>).nominalHz = n;
          }
          objectAt(raw, 'simulator').nominalHz = n;
        },
      });
    }
  }

  const dataDir = valueOf(env, 'SEQMON_DATA_DIR');
  if (dataDir !== null) out.push({ variable: 'SEQMON_DATA_DIR', apply: (raw) => void (raw.dataDir = dataDir) });

  if (problems.length > 0) {
    throw new AgentError(
      'CFG_ENV_INVALID',
      `environment override${problems.length === 1 ? '' : 's'} ${problems.map((p) => p.path).join(', ')} ${problems.length === 1 ? 'has a value' : 'have values'} that cannot be used: ${problems
        .map((p) => `${p.path}: expected ${p.expected}, found ${p.found}`)
        .join('; ')}`,
      { details: { problems, variables: problems.map((p) => p.path) } },
    );
  }
  return out;
}
