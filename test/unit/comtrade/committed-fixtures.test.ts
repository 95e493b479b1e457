/** The committed sample records (fictional) stay equal to their generator and replay as described in their header. */
import { readFile } from 'node:fs/promises';
import { join } from 'node:path';
import { PassThrough } from 'node:stream';
import { describe, expect, it } from 'vitest';
import { replayCommand } from '../../../agent/cli/replay.js';
import { readComtradeRecord } from '../../../agent/sources/comtrade/read-record.js';
import { SAMPLE_HEADER, SAMPLE_RECORDS } from '../../fixtures/comtrade/sample-records.js';

const DIR = join(import.meta.dirname, '../../fixtures/comtrade');

describe('committed sample records', () => {
  for (const r of SAMPLE_RECORDS) {
    it(`${r.name} equals the generator output (regenerate with write-fixtures.ts)`, async () => {
      const f = r.make();
      expect(await readFile(join(DIR, `${r.name}.cfg`), 'latin1')).toBe(f.cfg);
      expect(Buffer.from(await readFile(join(DIR, `${r.name}.dat`))).equals(Buffer.from(f.dat))).toBe(true);
    });

    it(`${r.name} carries its fictional-record header`, async () => {
      expect((await readComtradeRecord(join(DIR, `${r.name}.cfg`))).header).toBe(SAMPLE_HEADER);
    });
  }

  it('replays to one AG disturbance and an open-phase alarm on phase a', async () => {
    const stdout = new PassThrough(), stderr = new PassThrough();
    let out = '';
    stdout.on('data', (d: Buffer) => (out += d.toString()));
    stderr.resume();
    const code = await replayCommand([join(DIR, 'alder-creek-ag-fault-binary.cfg')], { stdout, stderr });
    expect(code).toBe(0);
    const lines = out.trim().split('\n').map((l) => JSON.parse(l) as Record<string, unknown>);
    expect(lines.filter((l) => l.output === 'event').map((l) => l.type)).toEqual(['AG']);
    expect(lines.filter((l) => l.output === 'alarm').map((l) => [l.condition, l.state, l.phase])).toEqual([['open-phase', 'raised', 'a']]);
  });
});
