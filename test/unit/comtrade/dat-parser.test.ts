/**
 * DAT reading in the four layouts. Layouts: IEEE C37.111-1999/2013 as given
 * in shared/CHECKS.md §8.3 (ASCII [S13]; binary widths, bit order and
 * endianness from memory). Expected values come from the fictional fixture's
 * generating waveforms, so each check compares against the known signal.
 */
import { describe, expect, it } from 'vitest';
import { parseCfg } from '../../../agent/sources/comtrade/cfg-parser.js';
import { binaryRecordSize, parseDat } from '../../../agent/sources/comtrade/dat-parser.js';
import { scaledChannel } from '../../../agent/sources/comtrade/samples-frames.js';
import { MISSING_STATUS, type DatFormat } from '../../../agent/sources/comtrade/types.js';
import { makeFixture } from '../../fixtures/comtrade/fictional-feeder.js';
import { recordOf, thrown } from './helpers.js';

/** Quantisation step of the fixture: a is about 1/25000 of the peak, so one count is < 0.01 % of full scale. */
const COUNT_REL = 1e-4;

function maxRelError(format: DatFormat, revision: 1999 | 2013 = 2013): number {
  const { fixture, record } = recordOf({ format, revision });
  const ia = scaledChannel(record, 3);
  const va = scaledChannel(record, 0);
  let worst = 0;
  for (let n = 0; n < record.data.sampleCount; n++) {
    const t = fixture.times[n]!;
    worst = Math.max(worst, Math.abs(ia[n]! - fixture.sample('ia', t)) / (3000 * Math.SQRT2));
    worst = Math.max(worst, Math.abs(va[n]! - fixture.sample('va', t)) / (7200 * Math.SQRT2));
  }
  return worst;
}

describe('DAT layouts reproduce the recorded signal', () => {
  for (const format of ['ASCII', 'BINARY', 'BINARY32', 'FLOAT32'] as const) {
    it(`${format}: every sample equals the generating waveform within one count`, () => {
      expect(maxRelError(format)).toBeLessThan(COUNT_REL);
    });
  }

  it('reads sample numbers and timestamps of every record', () => {
    const { record } = recordOf({ format: 'BINARY' });
    expect(record.data.sampleCount).toBe(640);
    expect(record.data.sampleNumber[639]).toBe(640);
    expect(record.data.timestamp[1]).toBe(Math.round(1e6 / 1920));
  });

  it('uses 8 + 2·##A + 2·⌈##D/16⌉ bytes per BINARY record and 8 + 4·##A + ... for BINARY32/FLOAT32 (CHECKS.md §8.3)', () => {
    const cfgB = parseCfg(makeFixture({ format: 'BINARY' }).cfg, { fileName: 'x.cfg' });
    const cfgF = parseCfg(makeFixture({ format: 'FLOAT32', revision: 2013 }).cfg, { fileName: 'x.cfg' });
    expect(binaryRecordSize(cfgB)).toBe(8 + 12 + 2);
    expect(binaryRecordSize(cfgF)).toBe(8 + 24 + 2);
  });

  it('decodes status bits with the first channel in the least significant bit', () => {
    const { fixture, record } = recordOf({ format: 'BINARY' });
    const inFault = fixture.times.findIndex((t) => t >= fixture.faultStart + 3 / 60);
    expect([record.data.status[0]![0], record.data.status[1]![0]]).toEqual([1, 0]);
    expect([record.data.status[0]![inFault], record.data.status[1]![inFault]]).toEqual([0, 1]);
  });

  it('reads ASCII status columns as 0/1', () => {
    const { record } = recordOf({ format: 'ASCII' });
    expect(record.data.status[0]![0]).toBe(1);
  });
});

describe('missing values become NaN (markers uncertain in the sources, all accepted: CHECKS.md §8.3)', () => {
  const cases: [string, Parameters<typeof recordOf>[0]][] = [
    ['ASCII empty field (2013)', { format: 'ASCII', revision: 2013, missing: [5] }],
    ['ASCII 99999 outside the declared max (1999)', { format: 'ASCII', revision: 1999, missing: [5], asciiMissing99999: true }],
    ['BINARY 0x8000', { format: 'BINARY', missing: [5] }],
    ['BINARY32 0x80000000', { format: 'BINARY32', revision: 2013, missing: [5] }],
    ['FLOAT32 NaN', { format: 'FLOAT32', revision: 2013, missing: [5] }],
  ];
  for (const [what, o] of cases) {
    it(`${what} marks the sample missing and leaves its neighbours`, () => {
      const { record } = recordOf(o);
      expect(Number.isNaN(record.data.analog[0]![5])).toBe(true);
      expect(Number.isNaN(record.data.analog[0]![4])).toBe(false);
      expect(Number.isNaN(record.data.analog[0]![6])).toBe(false);
    });
  }

  it('keeps 99999 as a value when the CFG declares a max that includes it', () => {
    const f = makeFixture({ format: 'ASCII', revision: 1999, missing: [5], asciiMissing99999: true });
    const cfg = parseCfg(f.cfg.replace('-99998,99998', '-99999,99999'), { fileName: 'x.cfg' });
    expect(parseDat(cfg, f.dat, { fileName: 'x.dat' }).analog[0]![5]).toBe(99999);
  });

  it('marks an empty ASCII status field missing', () => {
    const f = makeFixture({ format: 'ASCII' });
    const cfg = parseCfg(f.cfg, { fileName: 'x.cfg' });
    const text = new TextDecoder().decode(f.dat).replace(/,1,0\r\n/, ',,0\r\n');
    expect(parseDat(cfg, new TextEncoder().encode(text), { fileName: 'x.dat' }).status[0]![0]).toBe(MISSING_STATUS);
  });

  it('marks a BINARY timestamp of 0xFFFFFFFF missing', () => {
    const f = makeFixture({ format: 'BINARY' });
    new DataView(f.dat.buffer).setUint32(4, 0xffffffff, true);
    const cfg = parseCfg(f.cfg, { fileName: 'x.cfg' });
    expect(Number.isNaN(parseDat(cfg, f.dat, { fileName: 'x.dat' }).timestamp[0])).toBe(true);
  });
});

describe('ASCII leniency', () => {
  it('joins a record wrapped over two lines (CHECKS.md §8.3)', () => {
    const f = makeFixture({ format: 'ASCII' });
    const cfg = parseCfg(f.cfg, { fileName: 'x.cfg' });
    const lines = new TextDecoder().decode(f.dat).split('\r\n');
    const parts = lines[0]!.split(',');
    lines[0] = `${parts.slice(0, 4).join(',')}\r\n${parts.slice(4).join(',')}`;
    const wrapped = parseDat(cfg, new TextEncoder().encode(lines.join('\r\n')), { fileName: 'x.dat' });
    const plain = parseDat(cfg, f.dat, { fileName: 'x.dat' });
    expect(wrapped.sampleCount).toBe(plain.sampleCount);
    expect(Array.from(wrapped.analog[5]!.slice(0, 3))).toEqual(Array.from(plain.analog[5]!.slice(0, 3)));
  });

  it('tolerates a trailing comma and blank lines', () => {
    const f = makeFixture({ format: 'ASCII' });
    const cfg = parseCfg(f.cfg, { fileName: 'x.cfg' });
    const text = new TextDecoder().decode(f.dat).replace(/\r\n/g, ',\r\n\r\n');
    expect(parseDat(cfg, new TextEncoder().encode(text), { fileName: 'x.dat' }).sampleCount).toBe(640);
  });

  it('reads a record shorter than the CFG announces with a truncation warning', () => {
    const f = makeFixture({ format: 'ASCII' });
    const cfg = parseCfg(f.cfg, { fileName: 'x.cfg' });
    const text = new TextDecoder().decode(f.dat).split('\r\n').slice(0, 100).join('\r\n');
    const d = parseDat(cfg, new TextEncoder().encode(text), { fileName: 'x.dat' });
    expect(d.sampleCount).toBe(100);
    expect(d.warnings.join()).toMatch(/100 samples where the CFG announces 640/);
  });
});

describe('DAT errors name the file, line and field', () => {
  const asciiWith = (edit: (lines: string[]) => void) => {
    const f = makeFixture({ format: 'ASCII' });
    const cfg = parseCfg(f.cfg, { fileName: 'x.cfg' });
    const lines = new TextDecoder().decode(f.dat).split('\r\n');
    edit(lines);
    return () => parseDat(cfg, new TextEncoder().encode(lines.join('\r\n')), { fileName: 'x.dat' });
  };

  it('rejects a non-numeric analog value, naming the line and channel', () => {
    const e = thrown(asciiWith((l) => (l[9] = l[9]!.replace(/^(\d+,\d+,)-?\d+/, '$1x1'))), 'SRC_COMTRADE_INVALID');
    expect(e.message).toMatch(/x\.dat:10 field analog 1 \(VA\): value "x1"/);
  });

  it('rejects a status value other than 0 or 1', () => {
    const e = thrown(asciiWith((l) => (l[2] = l[2]!.replace(/,[01],([01])$/, ',2,$1'))), 'SRC_COMTRADE_INVALID');
    expect(e.message).toMatch(/x\.dat:3 field status 1 \(52A\)/);
  });

  it('rejects a record with extra non-empty fields', () => {
    const e = thrown(asciiWith((l) => (l[0] = `${l[0]},7`)), 'SRC_COMTRADE_INVALID');
    expect(e.message).toMatch(/x\.dat:1 field record: record has 11 fields; expected 10/);
  });

  it('rejects a last record cut short', () => {
    const e = thrown(asciiWith((l) => (l[639] = l[639]!.split(',').slice(0, 5).join(','))), 'SRC_COMTRADE_INVALID');
    expect(e.message).toMatch(/x\.dat:640 field record: the last record has 5 fields/);
  });

  it('rejects a sample number that is not a whole number', () => {
    const e = thrown(asciiWith((l) => (l[3] = l[3]!.replace(/^\d+/, '4.5'))), 'SRC_COMTRADE_INVALID');
    expect(e.message).toMatch(/x\.dat:4 field n/);
  });

  it('rejects binary data shorter than one record', () => {
    const f = makeFixture({ format: 'BINARY' });
    const cfg = parseCfg(f.cfg, { fileName: 'x.cfg' });
    const e = thrown(() => parseDat(cfg, f.dat.subarray(0, 10), { fileName: 'x.dat' }), 'SRC_COMTRADE_INVALID');
    expect(e.message).toMatch(/10 bytes is shorter than one 22-byte BINARY record/);
  });

  it('reads binary data with a partial last record, dropping the partial record with a warning', () => {
    const f = makeFixture({ format: 'BINARY32', revision: 2013 });
    const cfg = parseCfg(f.cfg, { fileName: 'x.cfg' });
    const d = parseDat(cfg, f.dat.subarray(0, f.dat.byteLength - 3), { fileName: 'x.dat' });
    expect(d.sampleCount).toBe(639);
    expect(d.warnings.join()).toMatch(/last 31 byte\(s\) were ignored/);
  });
});
