import { describe, expect, test } from 'vitest';
import { parseConfigText } from '../../../agent/config/load-config.js';
import { configWarnings } from '../../../agent/config/warnings.js';

const warn = (text: string, env: Record<string, string> = {}) => configWarnings(parseConfigText(text, null, env, '/'));

describe('configuration warnings (valid, but worth a second look)', () => {
  test('the defaults raise no warning', () => {
    expect(warn('')).toEqual([]);
  });

  test('a public plain-HTTP listener without acknowledgement will be refused at start', () => {
    expect(warn('http:\n  host: 0.0.0.0\n').join('\n')).toMatch(/API_INSECURE_BIND/);
  });

  test('an acknowledged public listener without a token is open to anyone who can reach it', () => {
    const w = warn('http:\n  host: 0.0.0.0\n  acknowledgeInsecureBind: true\n');
    expect(w).toHaveLength(1);
    expect(w[0]).toMatch(/no http\.tokenEnv/);
    expect(warn('http:\n  host: 0.0.0.0\n  acknowledgeInsecureBind: true\n  tokenEnv: T\n', { T: '0123456789abcdef' })).toEqual([]);
  });

  test('a broker certificate that is not verified is flagged', () => {
    expect(warn('mqtt:\n  url: mqtts://b.example:8883\n  tls: {rejectUnauthorized: false}\n').join('\n')).toMatch(/not verified/);
  });

  test('a password sent without TLS to a remote broker is flagged, but not to a loopback one', () => {
    expect(warn('mqtt:\n  url: mqtt://10.0.0.2:1883\n  passwordEnv: P\n', { P: 'x' }).join('\n')).toMatch(/without TLS/);
    expect(warn('mqtt:\n  passwordEnv: P\n', { P: 'x' })).toEqual([]);
  });

  test('listed feeders left at the 2000 A placeholder fault pickup are named', () => {
    const w = warn('feeders:\n  list:\n    - id: F1\n    - {id: F2, detection: {fault: {pickupA: 1500}}}\n');
    expect(w).toEqual([expect.stringMatching(/placeholder for F1: set it from the feeder's protection study/)]);
  });
});
