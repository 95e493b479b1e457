/** 2013 combined files (.cff): section markers per shared/CHECKS.md §8.3 (spelling from memory, matched loosely). */
import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { splitCff } from '../../../agent/sources/comtrade/cff.js';
import { readComtradeRecord } from '../../../agent/sources/comtrade/read-record.js';
import { makeCff, makeFixture } from '../../fixtures/comtrade/fictional-feeder.js';
import { thrown } from './helpers.js';

const enc = (s: string) => new TextEncoder().encode(s);

describe('CFF sections', () => {
  it('splits CFG, HDR and an ASCII DAT section', () => {
    const f = makeFixture({ revision: 2013 });
    const s = splitCff(makeCff(f, 'ASCII'), 'ac12.cff');
    expect(s.cfg).toBe(f.cfg);
    expect(s.hdr).toMatch(/Fictional/);
    expect(s.datType).toBe('ASCII');
    expect(new TextDecoder().decode(s.dat)).toBe(new TextDecoder().decode(f.dat));
  });

  it('takes exactly the announced byte count of a binary DAT section', () => {
    const f = makeFixture({ revision: 2013, format: 'BINARY' });
    const s = splitCff(makeCff(f, 'BINARY'), 'ac12.cff');
    expect(s.datType).toBe('BINARY');
    expect(Buffer.from(s.dat).equals(Buffer.from(f.dat))).toBe(true);
  });

  it('accepts markers in other letter case and dash counts', () => {
    const f = makeFixture({ revision: 2013 });
    const text = `-- File Type: cfg --\r\n${f.cfg}----- FILE TYPE: dat ascii -----\r\n${new TextDecoder().decode(f.dat)}`;
    expect(splitCff(enc(text), 'x.cff').cfg).toBe(f.cfg);
  });

  it('rejects a file with no CFG section', () => {
    const e = thrown(() => splitCff(enc('--- file type: DAT ASCII ---\r\n1,0,1\r\n'), 'x.cff'), 'SRC_COMTRADE_INVALID');
    expect(e.message).toMatch(/x\.cff field file type: no CFG section/);
  });

  it('rejects a binary DAT marker without a byte count', () => {
    const e = thrown(() => splitCff(enc('--- file type: CFG ---\r\nA\r\n--- file type: DAT BINARY ---\r\n'), 'x.cff'), 'SRC_COMTRADE_INVALID');
    expect(e.message).toMatch(/x\.cff:3 .*must give the byte count/);
  });

  it('rejects a byte count larger than the data that follows', () => {
    const e = thrown(() => splitCff(enc('--- file type: CFG ---\r\nA\r\n--- file type: DAT BINARY: 999 ---\r\nabc'), 'x.cff'), 'SRC_COMTRADE_INVALID');
    expect(e.message).toMatch(/announces 999 bytes but only 3 follow/);
  });

  it('rejects text before the first marker', () => {
    const e = thrown(() => splitCff(enc('hello\r\n--- file type: CFG ---\r\n'), 'x.cff'), 'SRC_COMTRADE_INVALID');
    expect(e.message).toMatch(/x\.cff:1 .*text outside a section/);
  });
});

describe('reading records from disk', () => {
  let dir = '';
  beforeAll(async () => {
    dir = await mkdtemp(join(tmpdir(), 'seqmon-comtrade-'));
  });
  afterAll(async () => {
    await rm(dir, { recursive: true, force: true });
  });

  it('reads a .cff whose CFG and DAT agree', async () => {
    const f = makeFixture({ revision: 2013, format: 'FLOAT32' });
    const path = join(dir, 'ac12.cff');
    await writeFile(path, makeCff(f, 'FLOAT32'));
    const r = await readComtradeRecord(path);
    expect(r.data.sampleCount).toBe(640);
    expect(r.header).toMatch(/Fictional/);
  });

  it('rejects a .cff whose DAT marker disagrees with ft', async () => {
    const f = makeFixture({ revision: 2013, format: 'BINARY' });
    const path = join(dir, 'mismatch.cff');
    const bytes = Buffer.from(makeCff(f, 'BINARY')).toString('latin1').replace('DAT BINARY:', 'DAT BINARY32:');
    await writeFile(path, Buffer.from(bytes, 'latin1'));
    await expect(readComtradeRecord(path)).rejects.toMatchObject({ code: 'SRC_COMTRADE_INVALID', message: expect.stringMatching(/ft = BINARY but the DAT section is marked BINARY32/) });
  });

  it('finds the .DAT beside a .cfg whatever the letter case', async () => {
    const f = makeFixture({ format: 'BINARY' });
    await writeFile(join(dir, 'upper.cfg'), f.cfg);
    await writeFile(join(dir, 'UPPER.DAT'), f.dat);
    expect((await readComtradeRecord(join(dir, 'upper.cfg'))).data.sampleCount).toBe(640);
  });

  it('rejects a .cfg with no .dat beside it', async () => {
    await writeFile(join(dir, 'alone.cfg'), makeFixture().cfg);
    await expect(readComtradeRecord(join(dir, 'alone.cfg'))).rejects.toMatchObject({ code: 'SRC_COMTRADE_INVALID', message: expect.stringMatching(/no \.dat file named alone\.dat/) });
  });

  it('rejects a path that does not exist with a typed error', async () => {
    await expect(readComtradeRecord(join(dir, 'nothing.cff'))).rejects.toMatchObject({ code: 'SRC_COMTRADE_INVALID', message: expect.stringMatching(/cannot be read \(ENOENT/) });
  });
});
