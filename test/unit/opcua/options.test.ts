/** Validation of OPC UA source options: each bad option is a SRC_CONFIG error naming its path. */
import { describe, expect, it } from 'vitest';
import { isAgentError } from '../../../agent/core/errors.js';
import { validateOpcuaOptions, type OpcuaSourceOptions } from '../../../agent/sources/opcua/options.js';

const good: OpcuaSourceOptions = {
  endpointUrl: 'opc.tcp://127.0.0.1:4840',
  securityMode: 'SignAndEncrypt',
  securityPolicy: 'Basic256Sha256',
  certificateFolder: '/tmp/pki',
  samplingIntervalMs: 100,
  publishingIntervalMs: 200,
  feeders: [{ id: 'F1', kind: 'rms', nodes: { i: { a: 'ns=2;s=a', b: 'ns=2;s=b', c: 'ns=2;s=c' } } }],
  reconnect: { minMs: 500, maxMs: 30_000 },
};

function error(o: unknown): string {
  try {
    validateOpcuaOptions(o as OpcuaSourceOptions);
  } catch (e) {
    if (isAgentError(e) && e.code === 'SRC_CONFIG') return e.message;
    throw e;
  }
  throw new Error('no error');
}

describe('OPC UA options', () => {
  it('accepts a complete secured configuration', () => {
    expect(() => validateOpcuaOptions(good)).not.toThrow();
  });

  const cases: [string, unknown, RegExp][] = [
    ['an http endpoint', { ...good, endpointUrl: 'http://x' }, /opcua\.endpointUrl: must be an opc\.tcp/],
    ['the PKCS#1 v1.5 policy Basic256', { ...good, securityPolicy: 'Basic256' }, /securityPolicy: .*PKCS#1 v1\.5/],
    ['mode None with a real policy', { ...good, securityMode: 'None' }, /securityPolicy: securityMode None cannot be used with securityPolicy Basic256Sha256/],
    ['SignAndEncrypt without a certificate folder', { ...good, certificateFolder: undefined }, /opcua\.certificateFolder: is required/],
    ['an empty user name', { ...good, user: { username: '', password: 'x' } }, /opcua\.user/],
    ['a negative sampling interval', { ...good, samplingIntervalMs: -1 }, /opcua\.samplingIntervalMs/],
    ['reconnect max below min', { ...good, reconnect: { minMs: 1000, maxMs: 10 } }, /opcua\.reconnect\.maxMs/],
    ['no feeders', { ...good, feeders: [] }, /opcua\.feeders: needs at least one/],
    ['a bad feeder id', { ...good, feeders: [{ ...good.feeders[0], id: 'F 1' }] }, /opcua\.feeders\[0\]\.id/],
    ['a duplicate feeder', { ...good, feeders: [good.feeders[0], good.feeders[0]] }, /opcua\.feeders\[1\]\.id: feeder "F1" is configured twice/],
    ['a phasor feeder missing an angle node', { ...good, feeders: [{ id: 'F1', kind: 'phasor', nodes: { v: { a: { mag: 'x' }, b: { mag: 'x', ang: 'y' }, c: { mag: 'x', ang: 'y' } } } }] }, /feeders\[0\]\.nodes\.v\.a\.ang/],
    ['an rms node set under a phasor feeder', { ...good, feeders: [{ id: 'F1', kind: 'phasor', nodes: { vll: { ab: 'a', bc: 'b', ca: 'c' }, i: undefined } }] }, /feeders\[0\]\.nodes: a phasor feeder needs v and\/or i/],
    ['an unknown kind', { ...good, feeders: [{ id: 'F1', kind: 'samples', nodes: {} }] }, /feeders\[0\]\.kind: must be phasor or rms/],
    ['a zero voltage scale', { ...good, feeders: [{ ...good.feeders[0], voltageScale: 0 }] }, /feeders\[0\]\.voltageScale/],
  ];
  for (const [what, o, re] of cases) {
    it(`rejects ${what}`, () => {
      expect(error(o)).toMatch(re);
    });
  }
});
