/**
 * Sample timing of a record: from the rate segments, or from timestamps ×
 * timemult (IEEE C37.111-1999 §6/§7 as summarised in shared/CHECKS.md §8.3,
 * from memory).
 */
import { describe, expect, it } from 'vitest';
import { requireFixedRate } from '../../../agent/sources/comtrade/record.js';
import { parseCfg } from '../../../agent/sources/comtrade/cfg-parser.js';
import { parseDat } from '../../../agent/sources/comtrade/dat-parser.js';
import { buildRecord } from '../../../agent/sources/comtrade/record.js';
import { START_MS, makeFixture } from '../../fixtures/comtrade/fictional-feeder.js';
import { recordOf, thrown } from './helpers.js';

describe('sample times', () => {
  it('places samples of one fixed rate 1/samp apart', () => {
    const { record } = recordOf();
    expect(record.timeSec[320]).toBeCloseTo(320 / 1920, 12);
    expect(record.segments).toEqual([{ first: 0, end: 640, rate: 1920 }]);
  });

  it('switches spacing at each endsamp of a multi-rate record', () => {
    const { record, fixture } = recordOf({ rates: [[3840, 128], [1920, 64], [960, 32]] });
    expect(record.segments).toEqual([
      { first: 0, end: 128, rate: 3840 },
      { first: 128, end: 192, rate: 1920 },
      { first: 192, end: 224, rate: 960 },
    ]);
    for (const k of [127, 128, 191, 192, 223]) expect(record.timeSec[k]).toBeCloseTo(fixture.times[k]!, 12);
  });

  it('uses timestamp × timemult µs when nrates is 0', () => {
    const { record, fixture } = recordOf({ revision: 2013, timestampsOnly: true, timeMult: 2 });
    // Timestamps are whole units of 2 µs: within 1 µs of the true time.
    for (const k of [1, 100, 639]) expect(Math.abs(record.timeSec[k]! - fixture.times[k]!)).toBeLessThanOrEqual(1e-6);
  });

  it('reads DAT timestamps in nanoseconds when the CFG times carry nine fractional digits (2013)', () => {
    // Field in ns with timemult 0.001 µs, read as µs: the reference times.
    const f = makeFixture({ revision: 2013, timestampsOnly: true, timeMult: 0.001 });
    const cfgUs = parseCfg(f.cfg, { fileName: 'x.cfg' });
    const ref = buildRecord(cfgUs, parseDat(cfgUs, f.dat, { fileName: 'x.dat' }));
    // Same field, timemult 1, times written to the nanosecond: the field must now be read as ns.
    const lines = f.cfg.split('\r\n');
    lines[13] = '02/03/2026,14:03:07.250000000';
    lines[16] = '1';
    const cfgNs = parseCfg(lines.join('\r\n'), { fileName: 'x.cfg' });
    const ns = buildRecord(cfgNs, parseDat(cfgNs, f.dat, { fileName: 'x.dat' }));
    for (const k of [1, 333, 639]) expect(ns.timeSec[k]).toBeCloseTo(ref.timeSec[k]!, 12);
    // Sample 640 lies 639 periods of 1/1920 s after the first (the fixture's rate); ns timestamps hold that to 1 ns.
    expect(ns.timeSec[639]).toBeCloseTo(639 / 1920, 9);
  });

  it('finds the rate of evenly timestamped samples when nrates is 0', () => {
    const { record } = recordOf({ revision: 2013, timestampsOnly: true });
    expect(record.segments.length).toBe(1);
    expect(record.segments[0]!.rate).toBeCloseTo(1920, 0);
  });

  it('gives the UTC time of the first sample', () => {
    expect(recordOf().record.startEpochMs).toBe(START_MS);
  });

  it('rejects timestamps that do not increase when there is no fixed rate', () => {
    const f = makeFixture({ revision: 2013, timestampsOnly: true });
    const cfg = parseCfg(f.cfg, { fileName: 'x.cfg' });
    const text = new TextDecoder().decode(f.dat).replace(/^(2,)\d+/m, '$10');
    const data = parseDat(cfg, new TextEncoder().encode(text), { fileName: 'x.dat' });
    const e = thrown(() => buildRecord(cfg, data), 'SRC_COMTRADE_INVALID');
    expect(e.message).toMatch(/sample 2 timestamp 0 is not later/);
  });

  it('rejects a missing timestamp when there is no fixed rate', () => {
    const f = makeFixture({ revision: 2013, timestampsOnly: true });
    const cfg = parseCfg(f.cfg, { fileName: 'x.cfg' });
    const text = new TextDecoder().decode(f.dat).replace(/^(3,)\d+/m, '$1');
    const data = parseDat(cfg, new TextEncoder().encode(text), { fileName: 'x.dat' });
    const e = thrown(() => buildRecord(cfg, data), 'SRC_COMTRADE_INVALID');
    expect(e.message).toMatch(/field timestamp: sample 3 has no timestamp/);
  });

  it('refuses per-cycle use of irregularly timestamped samples', () => {
    const f = makeFixture({ revision: 2013, timestampsOnly: true });
    const cfg = parseCfg(f.cfg, { fileName: 'x.cfg' });
    let k = 0;
    const text = new TextDecoder().decode(f.dat).replace(/^(\d+,)(\d+)/gm, (_m, n: string) => `${n}${(k++) ** 2 * 10}`);
    const record = buildRecord(cfg, parseDat(cfg, new TextEncoder().encode(text), { fileName: 'x.dat' }));
    const e = thrown(() => requireFixedRate(record), 'SRC_COMTRADE_UNSUPPORTED');
    expect(e.message).toMatch(/no fixed sampling rate/);
  });
});
