import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { describe, expect, test } from 'vitest';
import { formatConfigErrors, loadConfig, parseConfigText, toPipelineSettings } from '../../../agent/config/load-config.js';
import type { ConfigProblem } from '../../../agent/config/types.js';
import { DEFAULT_DETECTION } from '../../../agent/core/detect/settings.js';
import { AgentError } from '../../../agent/core/errors.js';
import { DEFAULT_FRAME_LIMITS } from '../../../agent/core/frames.js';

const CWD = '/srv/seqmon';
const parse = (text: string, env: Record<string, string> = {}) => parseConfigText(text, 'test.yaml', env, CWD);

function failure(fn: () => unknown): AgentError {
  try {
    fn();
  } catch (e) {
    if (e instanceof AgentError) return e;
    throw e;
  }
  throw new Error('expected an AgentError');
}
const problemsOf = (e: AgentError): ConfigProblem[] => e.details!.problems as ConfigProblem[];

describe('defaults', () => {
  test('without a file seqmon runs on the documented defaults (shared/ARCHITECTURE.md, seqmon run)', async () => {
    const c = await loadConfig(null, {}, { cwd: CWD });
    expect(c.mqtt.url).toBe('mqtt://127.0.0.1:1883');
    expect(c.feeders.discover).toBe(true);
    expect(c.feeders.defaults.nominalHz).toBe(60);
    expect(c.store.kind).toBe('sqlite');
    expect(c.store.path).toBe(resolve(CWD, 'data/seqmon.db'));
    expect(c.http.host).toBe('127.0.0.1');
    expect(c.http.port).toBe(8080);
    expect(c.mqtt.inputPrefix).toBe('seqmon/in');
    expect(c.mqtt.outputPrefix).toBe('seqmon/out');
    expect(c.source).toBeNull();
  });

  test('an empty file gives the same configuration as no file', async () => {
    const none = await loadConfig(null, {}, { cwd: CWD });
    expect({ ...parse(''), source: null }).toEqual(none);
  });

  test('a section header with every key commented out counts as an empty section', () => {
    const c = parse('mqtt:\n#  url: mqtt://10.0.0.1:1883\nhttp:\n');
    expect(c.mqtt.url).toBe('mqtt://127.0.0.1:1883');
    expect(c.http.port).toBe(8080);
  });

  test('the loaded configuration is deep-frozen', () => {
    const c = parse('feeders:\n  list:\n    - id: F1\n');
    expect(Object.isFrozen(c)).toBe(true);
    expect(Object.isFrozen(c.mqtt.reconnect)).toBe(true);
    expect(Object.isFrozen(c.feeders.list[0]!.detection.openPhase)).toBe(true);
    expect(() => {
      (c.http as { port: number }).port = 1;
    }).toThrow(TypeError);
  });

  test('every optional field is present as null rather than missing', () => {
    const c = parse('');
    expect(c.mqtt.password).toBeNull();
    expect(c.mqtt.tls).toBeNull();
    expect(c.http.token).toBeNull();
    expect(c.store.url).toBeNull();
    expect(c.opcua.user).toBeNull();
    expect(c.feeders.defaults.nominalVoltageLN).toBeNull();
  });

  test('relative paths are resolved against the working directory; dataDir moves the derived paths', () => {
    const c = parse('dataDir: var/sm\n');
    expect(c.dataDir).toBe('/srv/seqmon/var/sm');
    expect(c.store.path).toBe('/srv/seqmon/var/sm/seqmon.db');
    expect(c.store.spool.dir).toBe('/srv/seqmon/var/sm/spool');
    expect(c.opcua.certificateDir).toBe('/srv/seqmon/var/sm/pki');
  });
});

describe('explained errors', () => {
  test('every problem in a file is reported at once, each with path, expected, found and line', () => {
    const e = failure(() => parse('mqtt:\n  qos: 2\n  reconnect:\n    minMs: 50\nhttp:\n  port: "80"\nfeeders:\n  list:\n    - id: "bad id"\n'));
    expect(e.code).toBe('CFG_INVALID');
    const p = problemsOf(e);
    expect(p.map((x) => x.path)).toEqual(['mqtt.qos', 'mqtt.reconnect.minMs', 'http.port', 'feeders.list[0].id']);
    expect(p[0]).toEqual({ path: 'mqtt.qos', expected: 'one of 0, 1', found: 'the integer 2', line: 2 });
    expect(p[1]).toMatchObject({ expected: 'a value >= 100', found: 'the integer 50', line: 4 });
    expect(p[2]).toMatchObject({ expected: 'an integer', found: 'text "80"', line: 6 });
    expect(p[3]!.expected).toMatch(/feeder id/);
  });

  test('an unknown key is refused with the allowed keys and the nearest one suggested', () => {
    const p = problemsOf(failure(() => parse('mqtt:\n  inputPrefx: a/b\n')));
    expect(p).toHaveLength(1);
    expect(p[0]!.path).toBe('mqtt.inputPrefx');
    expect(p[0]!.found).toBe('the unknown key "inputPrefx"');
    expect(p[0]!.expected).toMatch(/did you mean inputPrefix\?/);
  });

  test('a renamed key is refused with CFG_RENAMED_KEY naming its new name', () => {
    const e = failure(() => parse('mqtt:\n  broker: mqtt://10.0.0.1:1883\n'));
    expect(e.code).toBe('CFG_RENAMED_KEY');
    expect(e.message).toMatch(/mqtt\.broker \(line 2\) was renamed: use mqtt\.url/);
  });

  test('a YAML syntax error is CFG_READ_FAILED with its line', () => {
    const e = failure(() => parse('mqtt:\n  url: [unclosed\nhttp: {}\n'));
    expect(e.code).toBe('CFG_READ_FAILED');
    expect(e.message).toMatch(/line \d/);
  });

  test('a duplicate key is refused rather than silently taking the last one', () => {
    expect(failure(() => parse('http:\n  port: 1\nhttp:\n  port: 2\n')).code).toBe('CFG_READ_FAILED');
  });

  test('a missing file is CFG_READ_FAILED naming the file', async () => {
    await expect(loadConfig('/nonexistent/seqmon.yaml', {})).rejects.toMatchObject({ code: 'CFG_READ_FAILED', message: expect.stringMatching(/nonexistent\/seqmon\.yaml.*does not exist/) });
  });

  test('a file whose top level is not a mapping is CFG_INVALID', () => {
    const p = problemsOf(failure(() => parse('- a\n- b\n')));
    expect(p[0]).toMatchObject({ path: '(root)', found: 'a list of 2 items' });
  });

  test('formatConfigErrors prints one numbered problem per entry with expected and found', () => {
    const text = formatConfigErrors(failure(() => parse('mqtt:\n  qos: 2\nhttp:\n  port: -1\n')));
    expect(text).toMatch(/CFG_INVALID: test\.yaml has 2 problems:/);
    expect(text).toMatch(/1\. mqtt\.qos \(line 2\)\n\s+expected: one of 0, 1\n\s+found:\s+the integer 2/);
    expect(text).toMatch(/2\. http\.port \(line 4\)/);
  });
});

describe('cross-field rules', () => {
  const cases: [string, string, RegExp][] = [
    ['reconnect bounds in order', 'mqtt:\n  reconnect: {minMs: 5000, maxMs: 1000}\n', /mqtt\.reconnect\.maxMs/],
    ['alarm level not below warning', 'feeders:\n  defaults:\n    detection:\n      voltageUnbalance: {warning: 3, alarm: 2}\n', /feeders\.defaults\.detection\.voltageUnbalance\.alarm/],
    ['influx needs url and database', 'store:\n  kind: influx\n', /store\.url.*store\.database|store\.url/],
    ['feeder ids unique', 'feeders:\n  list:\n    - id: F1\n    - id: F1\n', /feeders\.list\[1\]\.id/],
    ['opcua enabled needs an endpoint', 'opcua:\n  enabled: true\n', /opcua\.endpointUrl/],
    ['opcua security mode and policy agree', 'opcua:\n  securityMode: None\n', /opcua\.securityPolicy/],
    ['embedded broker only on loopback', 'mqtt:\n  url: mqtt://10.1.2.3:1883\n  embeddedBroker: true\n', /mqtt\.url/],
    ['kept sessions need a fixed client id', 'mqtt:\n  cleanSession: false\n', /mqtt\.clientId/],
    ['discovery off needs listed feeders', 'feeders:\n  discover: false\n', /feeders\.list/],
    ['LN and LL nominal voltages agree', 'feeders:\n  defaults:\n    nominalVoltageLN: 7200\n    nominalVoltageLL: 13800\n', /nominalVoltageLL/],
  ];
  test.each(cases)('%s', (_name, text, path) => {
    const e = failure(() => parse(text));
    expect(e.code).toBe('CFG_INVALID');
    expect(problemsOf(e).map((p) => p.path).join(' ')).toMatch(path);
  });
});

describe('secrets from the environment', () => {
  test('passwordEnv and tokenEnv are read from the environment', () => {
    const c = parse('mqtt:\n  username: u\n  passwordEnv: MQ_PW\nhttp:\n  tokenEnv: API_TOKEN\n', { MQ_PW: 's3cret', API_TOKEN: 'abcdefghijklmnopq' });
    expect(c.mqtt.password).toBe('s3cret');
    expect(c.http.token).toBe('abcdefghijklmnopq');
  });

  test('a secret variable that is not set is reported by name', () => {
    const p = problemsOf(failure(() => parse('store:\n  passwordEnv: INFLUX_PW\n')));
    expect(p[0]).toMatchObject({ path: 'store.passwordEnv', found: 'INFLUX_PW is not set' });
  });

  test('giving both the secret and its variable is refused', () => {
    const p = problemsOf(failure(() => parse('mqtt:\n  password: a\n  passwordEnv: B\n', { B: 'b' })));
    expect(p[0]).toMatchObject({ path: 'mqtt.passwordEnv', expected: 'only one of password and passwordEnv' });
  });

  test('a bearer token shorter than 16 characters is refused', () => {
    expect(problemsOf(failure(() => parse('http:\n  tokenEnv: T\n', { T: 'short' })))[0]!.path).toBe('http.tokenEnv');
  });
});

describe('environment overrides (shared/ARCHITECTURE.md)', () => {
  test('SEQMON_* variables override the file', () => {
    const c = parse('mqtt:\n  url: mqtt://10.0.0.1:1883\nhttp:\n  port: 9000\n', {
      SEQMON_MQTT_URL: 'mqtts://broker.example:8883',
      SEQMON_STORE: 'influx:http://127.0.0.1:8086/seqmon',
      SEQMON_HTTP_HOST: '0.0.0.0',
      SEQMON_HTTP_PORT: '18080',
      SEQMON_NOMINAL_HZ: '50',
      SEQMON_DATA_DIR: '/var/lib/seqmon',
    });
    expect(c.mqtt.url).toBe('mqtts://broker.example:8883');
    expect(c.store).toMatchObject({ kind: 'influx', url: 'http://127.0.0.1:8086', database: 'seqmon', spool: { dir: '/var/lib/seqmon/spool' } });
    expect(c.http.host).toBe('0.0.0.0');
    expect(c.http.port).toBe(18080);
    expect(c.feeders.defaults.nominalHz).toBe(50);
    expect(c.dataDir).toBe('/var/lib/seqmon');
  });

  test('SEQMON_STORE=sqlite:PATH selects SQLite at that path', () => {
    const c = parse('', { SEQMON_STORE: 'sqlite:trend/x.db' });
    expect(c.store).toMatchObject({ kind: 'sqlite', path: '/srv/seqmon/trend/x.db' });
  });

  test('SEQMON_NOMINAL_HZ sets every feeder, listed ones included', () => {
    const c = parse('feeders:\n  list:\n    - {id: F1, nominalHz: 60}\n', { SEQMON_NOMINAL_HZ: '50' });
    expect(c.feeders.list[0]!.nominalHz).toBe(50);
  });

  test('an empty variable counts as unset', () => {
    expect(parse('', { SEQMON_HTTP_PORT: '', SEQMON_MQTT_URL: '  ' }).http.port).toBe(8080);
  });

  const bad: [string, string][] = [
    ['SEQMON_MQTT_URL', 'http://broker:1883'],
    ['SEQMON_STORE', 'postgres://db/x'],
    ['SEQMON_STORE', 'influx:http://127.0.0.1:8086'],
    ['SEQMON_HTTP_HOST', 'http://0.0.0.0'],
    ['SEQMON_HTTP_PORT', '80a'],
    ['SEQMON_HTTP_PORT', '70000'],
    ['SEQMON_NOMINAL_HZ', '55'],
  ];
  test.each(bad)('%s=%s is refused as CFG_ENV_INVALID naming the variable', (name, value) => {
    const e = failure(() => parse('', { [name]: value }));
    expect(e.code).toBe('CFG_ENV_INVALID');
    expect(e.message).toContain(name);
    expect(problemsOf(e)[0]).toMatchObject({ path: name, found: JSON.stringify(value) });
  });
});

describe('feeder settings', () => {
  test('a feeder override changes only the keys it names; the rest come from feeders.defaults, then DEFAULT_DETECTION', () => {
    const c = parse(
      'feeders:\n  defaults:\n    detection:\n      voltageUnbalance: {alarm: 4}\n  list:\n    - id: F1\n      detection:\n        voltageUnbalance: {warning: 1.5}\n        fault: {pickupA: 1200}\n    - id: F2\n',
    );
    const [f1, f2] = c.feeders.list;
    expect(f1!.detection.voltageUnbalance).toEqual({ ...DEFAULT_DETECTION.voltageUnbalance, warning: 1.5, alarm: 4 });
    expect(f1!.detection.fault).toEqual({ ...DEFAULT_DETECTION.fault, pickupA: 1200 });
    expect(f1!.detection.openPhase).toEqual(DEFAULT_DETECTION.openPhase);
    expect(f2!.detection.voltageUnbalance).toEqual({ ...DEFAULT_DETECTION.voltageUnbalance, alarm: 4 });
  });

  test('nominalVoltageLL gives the line-to-neutral value LL/√3 (balanced three-phase relation, Glover, Sarma & Overbye ch. 2)', () => {
    const c = parse('feeders:\n  defaults:\n    nominalVoltageLL: 12470\n  list:\n    - {id: F1}\n    - {id: F2, nominalVoltageLN: 14400}\n    - {id: F3, nominalVoltageLN: null}\n');
    // 12470 / 1.7320508 = 7199.56 V (computed; the 7.2 kV class of 12.47 kV systems, ANSI C84.1 table, from memory).
    expect(c.feeders.defaults.nominalVoltageLN).toBeCloseTo(7199.56, 2);
    expect(c.feeders.list.map((f) => f.nominalVoltageLN)).toEqual([c.feeders.defaults.nominalVoltageLN, 14400, null]);
  });

  test('toPipelineSettings carries discovery, defaults, feeders, the payload limit and the feeder bound', () => {
    const c = parse('mqtt:\n  maxPayloadBytes: 65536\nfeeders:\n  discover: false\n  max: 10\n  defaults: {nominalHz: 50}\n  list:\n    - {id: F1, name: One, nominalVoltageLN: 230}\n');
    const s = toPipelineSettings(c);
    expect(s.discoverFeeders).toBe(false);
    expect(s.maxFeeders).toBe(10);
    expect(s.defaults).toEqual({ nominalHz: 50, nominalVoltageLN: null, detection: DEFAULT_DETECTION, currentsSumToZero: false });
    expect(s.feeders).toEqual([{ id: 'F1', nominalHz: 50, nominalVoltageLN: 230, detection: DEFAULT_DETECTION, currentsSumToZero: false }]);
    expect(s.limits).toEqual({ ...DEFAULT_FRAME_LIMITS, maxPayloadBytes: 65536 });
  });
});

describe('opcua feeder mapping', () => {
  test('a phasor feeder takes magnitude and angle nodes, an rms feeder one node per quantity', () => {
    const dir = mkdtempSync(join(tmpdir(), 'seqmon-cfg-'));
    const n = (s: string) => `"ns=2;s=${s}"`;
    const ph = (p: string) => `{magnitude: ${n(`V${p}m`)}, angle: ${n(`V${p}a`)}}`;
    writeFileSync(
      join(dir, 'c.yaml'),
      `opcua:\n  enabled: true\n  endpointUrl: opc.tcp://127.0.0.1:4840\n  feeders:\n    - {id: P1, kind: phasor, v: {a: ${ph('a')}, b: ${ph('b')}, c: ${ph('c')}}}\n    - {id: R1, kind: rms, freq: ${n('f')}, i: {a: ${n('ia')}, b: ${n('ib')}, c: ${n('ic')}}}\n`,
    );
    return loadConfig(join(dir, 'c.yaml'), {}).then((c) => {
      expect(c.opcua.feeders[0]).toEqual({ id: 'P1', kind: 'phasor', freq: null, v: { a: { magnitude: 'ns=2;s=Vam', angle: 'ns=2;s=Vaa' }, b: { magnitude: 'ns=2;s=Vbm', angle: 'ns=2;s=Vba' }, c: { magnitude: 'ns=2;s=Vcm', angle: 'ns=2;s=Vca' } }, i: null });
      expect(c.opcua.feeders[1]).toEqual({ id: 'R1', kind: 'rms', freq: 'ns=2;s=f', vll: null, vln: null, i: { a: 'ns=2;s=ia', b: 'ns=2;s=ib', c: 'ns=2;s=ic' } });
    });
  });

  test('an rms feeder given phasor-only keys is refused with the keys its kind takes', () => {
    const p = problemsOf(failure(() => parse('opcua:\n  feeders:\n    - id: R1\n      kind: rms\n      v: {a: {magnitude: "i=1", angle: "i=2"}, b: {magnitude: "i=3", angle: "i=4"}, c: {magnitude: "i=5", angle: "i=6"}}\n')));
    expect(p.map((x) => x.path)).toContain('opcua.feeders[0].v');
    expect(p.find((x) => x.path === 'opcua.feeders[0]')!.expected).toBe('at least one of the keys vll, vln, i');
  });
});
