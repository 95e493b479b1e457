/**
 * CFG reading. Layout source: IEEE C37.111-1999 line by line as given in
 * shared/CHECKS.md §8.2 ([S99] for the 1999 field list; 1991 and 2013 details
 * marked there as from memory, where the reader is lenient).
 */
import { describe, expect, it } from 'vitest';
import { parseCfg } from '../../../agent/sources/comtrade/cfg-parser.js';
import { buildRecord } from '../../../agent/sources/comtrade/record.js';
import { parseDat } from '../../../agent/sources/comtrade/dat-parser.js';
import { FICTIONAL_STATION, PT_PRIMARY, PT_SECONDARY, START_MS, makeFixture } from '../../fixtures/comtrade/fictional-feeder.js';
import { cfgLines, thrown, withCfgLine } from './helpers.js';

const parse = (text: string) => parseCfg(text, { fileName: 'ac12.cfg' });
const base = () => makeFixture({ revision: 1999 }).cfg;

describe('CFG 1999 (IEEE C37.111-1999, CHECKS.md §8.2)', () => {
  it('reads station, device and revision from line 1', () => {
    const c = parse(base());
    expect([c.stationName, c.deviceId, c.revision]).toEqual([FICTIONAL_STATION, 'REC-7', 1999]);
  });

  it('reads the channel counts of line 2 and one entry per analog and status line', () => {
    const c = parse(base());
    expect(c.analog.map((a) => a.id)).toEqual(['VA', 'VB', 'VC', 'IA', 'IB', 'IC']);
    expect(c.status.map((s) => [s.id, s.normalState])).toEqual([['52A', 1], ['50G', 0]]);
  });

  it('reads the analog fields a, b, primary, secondary and PS as written', () => {
    const f = makeFixture({ revision: 1999 });
    const c = parse(f.cfg);
    expect(c.analog[0]).toMatchObject({ phase: 'A', unit: 'V', primary: PT_PRIMARY, secondary: PT_SECONDARY, ps: 'S', line: 3 });
    expect(c.analog[0]!.a).toBeCloseTo(f.scale[0]!.a, 12);
    expect(c.analog[3]).toMatchObject({ b: 5, primary: 600, secondary: 5, ps: 'P' });
  });

  it('reads lf, the sampling rates, the data type and timemult', () => {
    const c = parse(makeFixture({ revision: 1999, rates: [[1920, 100], [960, 50]], timeMult: 2 }).cfg);
    expect(c.lineFrequency).toBe(60);
    expect(c.rates).toEqual([{ rate: 1920, endSample: 100 }, { rate: 960, endSample: 150 }]);
    expect(c.format).toBe('ASCII');
    expect(c.timeMult).toBe(2);
  });

  it('reads the first-sample and trigger times as dd/mm/yyyy', () => {
    const c = parse(base());
    expect(c.startTime.epochMs).toBe(START_MS);
    expect(c.triggerTime.epochMs).toBeCloseTo(START_MS + 100, 6);
    expect(c.startTime.fractionDigits).toBe(6);
  });

  it('accepts the data type in any letter case', () => {
    const text = withCfgLine(base(), cfgLines(base()).indexOf('ASCII') + 1, 'binary');
    expect(parse(text).format).toBe('BINARY');
  });

  it('tolerates spaces around fields, LF-only line ends and a byte-order mark', () => {
    const spaced = base().replace('3,VC,C,AC-12,V,', ' 3 , VC , C ,AC-12, V ,');
    expect(spaced).not.toBe(base());
    const c = parse('\ufeff' + spaced.split('\r\n').join('\n'));
    expect([c.analog[2]!.index, c.analog[2]!.id, c.analog[2]!.phase, c.analog[2]!.unit]).toEqual([3, 'VC', 'C', 'V']);
    expect(c.stationName).toBe(FICTIONAL_STATION);
  });

  it('records no warnings for a well-formed file', () => {
    expect(parse(base()).warnings).toEqual([]);
  });
});

describe('CFG 1991 (from memory, read leniently: CHECKS.md §8.2, §8.4)', () => {
  it('takes a missing rev_year as 1991', () => {
    expect(parse(makeFixture({ revision: 1991 }).cfg).revision).toBe(1991);
  });

  it('reads 10-field analog lines with no primary, secondary or PS', () => {
    const c = parse(makeFixture({ revision: 1991 }).cfg);
    expect(c.analog[0]).toMatchObject({ primary: null, secondary: null, ps: null });
  });

  it('reads 3-field status lines Dn,ch_id,y', () => {
    const c = parse(makeFixture({ revision: 1991 }).cfg);
    expect(c.status.map((s) => [s.id, s.normalState, s.phase])).toEqual([['52A', 1, ''], ['50G', 0, '']]);
  });

  it('reads dates as mm/dd/yy and defaults timemult to 1', () => {
    const c = parse(makeFixture({ revision: 1991 }).cfg);
    expect(c.startTime.epochMs).toBe(START_MS);
    expect(c.timeMult).toBe(1);
  });

  it('reads an unambiguous dd/mm date in a 1991 file with a warning', () => {
    const text = withCfgLine(makeFixture({ revision: 1991 }).cfg, 14, '25/03/26,14:03:07.250000');
    const c = parse(text);
    expect(new Date(c.startTime.epochMs).toISOString()).toBe('2026-03-25T14:03:07.250Z');
    expect(c.warnings.join()).toMatch(/read as dd\/mm/);
  });
});

describe('CFG 2013 (IEEE C37.111-2013 / IEC 60255-24:2013, CHECKS.md §8.2)', () => {
  it('reads time_code and shifts the first-sample time to UTC', () => {
    const f = makeFixture({ revision: 2013, timeCode: '-5h30' });
    const c = parse(f.cfg);
    expect(c.utcOffsetMinutes).toBe(-330);
    const rec = buildRecord(c, parseDat(c, f.dat, { fileName: 'ac12.dat' }));
    // Local time UTC-5:30 -> UTC is 5 h 30 min later.
    expect(rec.startEpochMs).toBe(START_MS + 330 * 60_000);
  });

  it('reads tmq_code as a hexadecimal digit and leapsec', () => {
    const lines = cfgLines(makeFixture({ revision: 2013 }).cfg);
    lines[lines.length - 2] = 'B,1';
    const c = parse(lines.join('\r\n'));
    expect([c.timeQuality, c.leapSecond]).toEqual([11, 1]);
  });

  it('reads nine fractional digits (nanoseconds) in the times', () => {
    const f = makeFixture({ revision: 2013 });
    const text = withCfgLine(f.cfg, 14, '02/03/2026,14:03:07.250000500');
    const c = parse(text);
    expect(c.startTime.fractionDigits).toBe(9);
    expect(c.startTime.fractionNs).toBe(250_000_500);
  });

  it('reads nrates = 0 followed by the 2013 "0,endsamp" line', () => {
    const c = parse(makeFixture({ revision: 2013, timestampsOnly: true }).cfg);
    expect(c.rates).toEqual([{ rate: 0, endSample: 640 }]);
  });

  it('accepts a file that stops after timemult, taking the times as UTC with a warning', () => {
    const lines = cfgLines(makeFixture({ revision: 2013 }).cfg).slice(0, -3);
    const c = parse(lines.join('\r\n'));
    expect(c.utcOffsetMinutes).toBeNull();
    expect(c.warnings.join()).toMatch(/time_code/);
  });
});

describe('CFG errors name the file, line and field', () => {
  const cases: [string, (cfg: string) => string, 'SRC_COMTRADE_INVALID' | 'SRC_COMTRADE_UNSUPPORTED', RegExp][] = [
    ['an unknown revision year', (c) => withCfgLine(c, 1, 'X,Y,2005'), 'SRC_COMTRADE_UNSUPPORTED', /ac12\.cfg:1 field rev_year/],
    ['TT differing from ##A + ##D', (c) => withCfgLine(c, 2, '9,6A,2D'), 'SRC_COMTRADE_INVALID', /:2 field TT: TT = 9/],
    ['a non-numeric channel count', (c) => withCfgLine(c, 2, '8,sixA,2D'), 'SRC_COMTRADE_INVALID', /:2 field ##A/],
    ['an analog line with 12 fields', (c) => withCfgLine(c, 3, '1,VA,A,AC-12,V,0.1,0,0,-99998,99998,7200,120'), 'SRC_COMTRADE_INVALID', /:3 field An: .*12 fields/],
    ['a non-numeric multiplier a', (c) => withCfgLine(c, 4, '2,VB,B,AC-12,V,abc,0,0,-99998,99998,7200,120,S'), 'SRC_COMTRADE_INVALID', /:4 field a: a "abc" is not a number/],
    ['an empty multiplier a', (c) => withCfgLine(c, 4, '2,VB,B,AC-12,V,,0,0,-99998,99998,7200,120,S'), 'SRC_COMTRADE_INVALID', /:4 field a: a is empty/],
    ['a PS other than P or S', (c) => withCfgLine(c, 5, '3,VC,C,AC-12,V,0.1,0,0,-99998,99998,7200,120,X'), 'SRC_COMTRADE_INVALID', /:5 field PS/],
    ['PS = S without a ratio', (c) => withCfgLine(c, 5, '3,VC,C,AC-12,V,0.1,0,0,-99998,99998,,,S'), 'SRC_COMTRADE_INVALID', /:5 field primary/],
    ['a zero secondary', (c) => withCfgLine(c, 5, '3,VC,C,AC-12,V,0.1,0,0,-99998,99998,7200,0,S'), 'SRC_COMTRADE_INVALID', /:5 field secondary/],
    ['min greater than max', (c) => withCfgLine(c, 6, '4,IA,A,AC-12,A,0.1,5,0,100,-100,600,5,P'), 'SRC_COMTRADE_INVALID', /:6 field min/],
    ['a status normal state of 2', (c) => withCfgLine(c, 9, '1,52A,,AC-12,2'), 'SRC_COMTRADE_INVALID', /:9 field y/],
    ['a status line of 2 fields', (c) => withCfgLine(c, 10, '2,50G'), 'SRC_COMTRADE_INVALID', /:10 field Dn/],
    ['a non-numeric line frequency', (c) => withCfgLine(c, 11, 'sixty'), 'SRC_COMTRADE_INVALID', /:11 field lf/],
    ['a fractional nrates', (c) => withCfgLine(c, 12, '1.5'), 'SRC_COMTRADE_INVALID', /:12 field nrates/],
    ['a negative sampling rate', (c) => withCfgLine(c, 13, '-1920,640'), 'SRC_COMTRADE_INVALID', /:13 field samp/],
    ['month 13 in the start date', (c) => withCfgLine(c, 14, '13/13/2026,14:03:07.250000'), 'SRC_COMTRADE_INVALID', /:14 field start time date/],
    ['31 February', (c) => withCfgLine(c, 14, '31/02/2026,14:03:07.250000'), 'SRC_COMTRADE_INVALID', /:14 field start time date: .*day 31/],
    ['a malformed trigger time', (c) => withCfgLine(c, 15, '02/03/2026,14h03'), 'SRC_COMTRADE_INVALID', /:15 field trigger time time/],
    ['an unknown data type', (c) => withCfgLine(c, 16, 'HEX'), 'SRC_COMTRADE_UNSUPPORTED', /:16 field ft/],
    ['a zero timemult', (c) => withCfgLine(c, 17, '0'), 'SRC_COMTRADE_INVALID', /:17 field timemult/],
    ['a file that ends before the start time', (c) => cfgLines(c).slice(0, 13).join('\r\n'), 'SRC_COMTRADE_INVALID', /:14 field start time: the file ends/],
  ];
  for (const [what, edit, code, message] of cases) {
    it(`rejects ${what}`, () => {
      const e = thrown(() => parse(edit(base())), code);
      expect(e.message).toMatch(message);
    });
  }

  it('rejects endsamp values that do not increase', () => {
    const c = makeFixture({ revision: 1999, rates: [[1920, 100], [960, 50]] }).cfg;
    const e = thrown(() => parse(withCfgLine(c, 14, '960,90')), 'SRC_COMTRADE_INVALID');
    expect(e.message).toMatch(/:14 field endsamp/);
  });

  it('rejects a 2013 time_code it cannot read', () => {
    const lines = cfgLines(makeFixture({ revision: 2013 }).cfg);
    lines[lines.length - 3] = 'five hours,0';
    const e = thrown(() => parse(lines.join('\r\n')), 'SRC_COMTRADE_INVALID');
    expect(e.message).toMatch(/field time_code/);
  });

  it('carries file, line and field in the error details', () => {
    const e = thrown(() => parse(withCfgLine(base(), 11, 'sixty')), 'SRC_COMTRADE_INVALID');
    expect(e.details).toEqual({ file: 'ac12.cfg', line: 11, field: 'lf' });
  });
});
