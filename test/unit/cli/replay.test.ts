/**
 * `seqmon replay` on fictional COMTRADE records written to a temp folder
 * (test/fixtures/comtrade/fictional-feeder.ts): per-cycle sequence rows,
 * alarms and classified disturbances, formats and exit codes
 * (shared/ARCHITECTURE.md, "Command line"). Expected sequence values are
 * computed independently with mathjs (reference library) from the phasors the
 * record was generated from.
 */
import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { PassThrough } from 'node:stream';
import { abs, add, arg, complex, divide, multiply, type Complex } from 'mathjs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { main } from '../../../agent/cli/main.js';
import { replayCommand } from '../../../agent/cli/replay.js';
import { I_FAULT, I_FAULT_ANGLE, I_LOAD, I_LOAD_ANGLE, START_MS, V_LN, FAULT_V_RATIO, makeCff, makeFixture, type FixtureOptions } from '../../fixtures/comtrade/fictional-feeder.js';

const CYCLES = 150;
const FAULT = { faultStart: 10 / 60, faultEnd: 16 / 60 };

async function run(args: string[]): Promise<{ code: number; out: string; err: string }> {
  const stdout = new PassThrough(), stderr = new PassThrough();
  let out = '', err = '';
  stdout.on('data', (d: Buffer) => (out += d.toString()));
  stderr.on('data', (d: Buffer) => (err += d.toString()));
  const code = await replayCommand(args, { stdout, stderr });
  return { code, out, err };
}

let dir = '';
async function writeRecord(name: string, o: FixtureOptions): Promise<string> {
  const f = makeFixture({ rates: [[1920, 32 * CYCLES]], ...FAULT, ...o });
  await writeFile(join(dir, `${name}.cfg`), f.cfg);
  await writeFile(join(dir, `${name}.dat`), f.dat);
  return join(dir, `${name}.cfg`);
}

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'seqmon-replay-'));
});
afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

const polar = (m: number, d: number) => complex({ r: m, phi: (d * Math.PI) / 180 }) as Complex;
/** Fortescue (amplitude-invariant, CHECKS.md §0) with mathjs: [zero, pos, neg]. */
function sequence(a: Complex, b: Complex, c: Complex): Complex[] {
  const op = polar(1, 120), op2 = polar(1, 240);
  return [
    divide(add(add(a, b), c), 3) as Complex,
    divide(add(add(a, multiply(op, b)), multiply(op2, c)), 3) as Complex,
    divide(add(add(a, multiply(op2, b)), multiply(op, c)), 3) as Complex,
  ];
}
const mag = (z: Complex) => abs(z) as unknown as number;
const deg = (z: Complex) => ((arg(z) as unknown as number) * 180) / Math.PI;

type Row = Record<string, unknown> & { ts: string; window: string; v: Record<string, unknown>; i: Record<string, unknown> };

describe('seqmon replay (jsonl)', () => {
  let rows: Row[] = [];
  let others: Record<string, unknown>[] = [];
  let result: { code: number; out: string; err: string };
  beforeAll(async () => {
    result = await run([await writeRecord('ac12-ascii', { format: 'ASCII' })]);
    const lines = result.out.trim().split('\n').map((l) => JSON.parse(l) as Record<string, unknown>);
    rows = lines.filter((l) => l.output === undefined) as Row[];
    others = lines.filter((l) => l.output !== undefined);
  });

  it('exits 0 and writes one row per nominal cycle with window "cycle"', () => {
    expect(result.code).toBe(0);
    expect(rows.length).toBe(CYCLES);
    expect(new Set(rows.map((r) => r.window))).toEqual(new Set(['cycle']));
  });

  it('stamps each row with the start of its cycle', () => {
    expect(rows[0]!.ts).toBe(new Date(START_MS).toISOString());
    expect(Date.parse(rows[60]!.ts) - START_MS).toBe(1000);
  });

  it('gives the pre-fault positive-sequence voltage and current in primary units (mathjs reference)', () => {
    const r = rows[5]!;
    const [, v1] = sequence(polar(V_LN, 0), polar(V_LN, -120), polar(V_LN, 120));
    const [, i1] = sequence(polar(I_LOAD, I_LOAD_ANGLE), polar(I_LOAD, I_LOAD_ANGLE - 120), polar(I_LOAD, I_LOAD_ANGLE + 120));
    const vpos = r.v.pos as [number, number], ipos = r.i.pos as [number, number];
    // Quantisation of the record is below 1e-4 of full scale, far inside this 0.1 % check.
    expect(Math.abs(vpos[0] - mag(v1!)) / mag(v1!)).toBeLessThan(1e-3);
    expect(Math.abs(ipos[0] - mag(i1!)) / mag(i1!)).toBeLessThan(1e-3);
    expect(ipos[1]).toBeCloseTo(deg(i1!), 1);
    expect(r.v.u2 as number).toBeLessThan(0.05);
  });

  it('gives the fault-cycle sequence currents of the phase-a-to-ground fault (mathjs reference)', () => {
    const r = rows[13]!;
    const [i0, i1, i2] = sequence(polar(I_FAULT, I_FAULT_ANGLE), polar(I_LOAD, I_LOAD_ANGLE - 120), polar(I_LOAD, I_LOAD_ANGLE + 120));
    for (const [k, z] of [['zero', i0], ['pos', i1], ['neg', i2]] as const) {
      const p = r.i[k] as [number, number];
      expect(Math.abs(p[0] - mag(z!)) / mag(z!)).toBeLessThan(1e-3);
    }
    const [, , v2] = sequence(polar(V_LN * FAULT_V_RATIO, 0), polar(V_LN, -120), polar(V_LN, 120));
    expect(Math.abs((r.v.neg as [number, number])[0] - mag(v2!)) / mag(v2!)).toBeLessThan(1e-3);
  });

  it('reports the frequency from the cycle-to-cycle angle advance (60 Hz record)', () => {
    expect(rows[5]!.freq as number).toBeCloseTo(60, 6);
    expect(rows[0]!.freq).toBeNull();
  });

  it('classifies the disturbance as AG with phase a carrying the peak current', () => {
    const ev = others.filter((o) => o.output === 'event');
    expect(ev.length).toBe(1);
    expect(ev[0]).toMatchObject({ type: 'AG', peakPhase: 'a', feeder: 'Alder_Creek_fictional' });
    expect(Math.abs((ev[0]!.peakCurrent as number) - I_FAULT) / I_FAULT).toBeLessThan(1e-3);
  });

  it('raises an open-phase alarm on phase a after the fault clears and the phase stays open', () => {
    const al = others.filter((o) => o.output === 'alarm' && o.condition === 'open-phase');
    expect(al.map((a) => [a.state, a.phase])).toEqual([['raised', 'a']]);
    // Raised no earlier than the 1 s pickup after the fault end (DEFAULT_DETECTION.openPhase.pickupMs).
    expect(Date.parse(al[0]!.ts as string) - START_MS).toBeGreaterThanOrEqual(1000 * FAULT.faultEnd + 1000);
  });

  it('ends with a summary on stderr', () => {
    expect(result.err).toMatch(/150 cycle\(s\), 1 alarm transition\(s\), 1 disturbance event\(s\)/);
  });
});

describe('seqmon replay formats and record layouts', () => {
  it('writes CSV with a header naming units and alarms/events on stderr', async () => {
    const r = await run([await writeRecord('ac12-csv', { format: 'BINARY' }), '--format', 'csv']);
    expect(r.code).toBe(0);
    const lines = r.out.trim().split('\n');
    expect(lines[0]).toMatch(/^ts_utc,feeder,window,duration_ms,freq_Hz,.*v_pos_mag_V,.*i_u2_pct/);
    expect(lines.length).toBe(1 + CYCLES);
    expect(lines[1]!.split(',')[2]).toBe('cycle');
    expect(r.err).toMatch(/event: .* AG/);
  });

  it('gives the same rows from a BINARY32 .cff as from the ASCII .cfg/.dat', async () => {
    const ascii = await run([await writeRecord('same-a', { format: 'ASCII', revision: 2013 })]);
    const f = makeFixture({ rates: [[1920, 32 * CYCLES]], ...FAULT, format: 'BINARY32', revision: 2013 });
    await writeFile(join(dir, 'same-b.cff'), makeCff(f, 'BINARY32'));
    const cff = await run([join(dir, 'same-b.cff')]);
    expect(cff.code).toBe(0);
    const pos = (out: string) => out.trim().split('\n').map((l) => JSON.parse(l) as Row).filter((l) => l.output === undefined).map((l) => (l.v.pos as [number, number])[0]);
    const a = pos(ascii.out), b = pos(cff.out);
    expect(b.length).toBe(a.length);
    // Both are quantised to about 1e-4 of full scale, differently: agree within 0.05 %.
    for (let k = 0; k < a.length; k += 17) expect(Math.abs(a[k]! - b[k]!) / a[k]!).toBeLessThan(5e-4);
  });

  it('analyses each sampling-rate segment of a multi-rate record at its own rate', async () => {
    const r = await run([await writeRecord('multi', { rates: [[3840, 64 * 20], [1000, 500]] })]);
    expect(r.code).toBe(0);
    const rows = r.out.trim().split('\n').map((l) => JSON.parse(l) as Row).filter((l) => l.output === undefined);
    // 20 cycles at 64/cycle; then 500 samples at 16.67/cycle with 2 + 3 interpolation taps: 29 cycles.
    expect(rows.length).toBe(20 + 29);
    const late = rows[40]!;
    expect(Math.abs((late.v.pos as [number, number])[0] - V_LN) / V_LN).toBeLessThan(1e-3);
  });

  it('flags cycles with missing samples and leaves their quantities empty', async () => {
    const r = await run([await writeRecord('gaps', { missing: [40] })]);
    expect(r.code).toBe(0);
    const rows = r.out.trim().split('\n').map((l) => JSON.parse(l) as Row).filter((l) => l.output === undefined);
    expect(rows[1]).toMatchObject({ flagged: true, v: null, i: null });
    expect(rows[2]!.flagged).toBe(false);
    expect(r.err).toMatch(/1 with missing samples, flagged/);
  });

  it('flags the dip of the fault cycles when the nominal voltage is given (IEC 61000-4-30 dip threshold 90 %, from memory)', async () => {
    const path = await writeRecord('dip', {});
    const rows = (await run([path, '--nominal-voltage', String(V_LN)])).out.trim().split('\n').map((l) => JSON.parse(l) as Row).filter((l) => l.output === undefined);
    expect(rows.slice(0, 9).some((r) => r.flagged)).toBe(false);
    expect(rows.slice(11, 16).every((r) => r.flagged)).toBe(true);
    expect(rows.slice(20).some((r) => r.flagged)).toBe(false);
    const plain = (await run([path])).out.trim().split('\n').map((l) => JSON.parse(l) as Row).filter((l) => l.output === undefined);
    expect(plain.some((r) => r.flagged)).toBe(false);
  });

  it('follows --voltage/--current channel choices', async () => {
    const r = await run([await writeRecord('swap', {}), '--voltage', 'VA,VC,VB']);
    expect(r.code).toBe(0);
    const row = JSON.parse(r.out.split('\n')[5]!) as Row;
    // Swapping b and c turns the positive-sequence set into a negative-sequence one.
    expect((row.v.neg as [number, number])[0]).toBeGreaterThan(0.99 * V_LN);
  });
});

describe('seqmon replay through the seqmon command', () => {
  it('is reached as `seqmon replay` and prints its usage with --help', async () => {
    const stdout = new PassThrough(), stderr = new PassThrough();
    let out = '';
    stdout.on('data', (d: Buffer) => (out += d.toString()));
    const code = await main(['replay', '--help'], { stdin: process.stdin, stdout, stderr, env: {} });
    expect(code).toBe(0);
    expect(out).toMatch(/^usage: seqmon replay RECORD\.cfg\|RECORD\.cff/);
  });

  it('analyses a record with currents only, noting the missing voltages', async () => {
    const f = makeFixture({ rates: [[1920, 32 * CYCLES]], ...FAULT });
    const cfg = f.cfg.replace('3,VC,C,AC-12,V,', '3,VX,,AC-12,V,');
    await writeFile(join(dir, 'ionly.cfg'), cfg);
    await writeFile(join(dir, 'ionly.dat'), f.dat);
    const r = await run([join(dir, 'ionly.cfg')]);
    expect(r.code).toBe(0);
    expect(r.err).toMatch(/note: no phase c voltage channel found/);
    const rows = r.out.trim().split('\n').map((l) => JSON.parse(l) as Row).filter((l) => l.output === undefined);
    expect(rows[5]!.v).toBeNull();
    expect(Math.abs((rows[5]!.i.pos as [number, number])[0] - I_LOAD) / I_LOAD).toBeLessThan(1e-3);
    expect(rows[5]!.freq as number).toBeCloseTo(60, 6);
  });
});

describe('seqmon replay errors', () => {
  it('exits 2 with usage when no record is given', async () => {
    const r = await run([]);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/give the record/);
  });

  it('exits 2 on an unknown format', async () => {
    expect((await run(['x.cfg', '--format', 'xml'])).code).toBe(2);
  });

  it('exits 2 naming the file when the record does not exist', async () => {
    const r = await run([join(dir, 'nope.cfg')]);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/nope\.cfg: cannot be read/);
  });

  it('exits 2 naming file, line and field for a malformed CFG', async () => {
    const f = makeFixture();
    await writeFile(join(dir, 'bad.cfg'), f.cfg.replace('\r\n60\r\n', '\r\nsixty\r\n'));
    await writeFile(join(dir, 'bad.dat'), f.dat);
    const r = await run([join(dir, 'bad.cfg')]);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/bad\.cfg:11 field lf/);
  });

  it('exits 2 when the line frequency is neither 50 nor 60 and --nominal-hz is not given', async () => {
    const f = makeFixture();
    await writeFile(join(dir, 'dc.cfg'), f.cfg.replace('\r\n60\r\n', '\r\n0\r\n'));
    await writeFile(join(dir, 'dc.dat'), f.dat);
    const r = await run([join(dir, 'dc.cfg')]);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/give --nominal-hz/);
    expect((await run([join(dir, 'dc.cfg'), '--nominal-hz', '60'])).code).toBe(0);
  });

  it('exits 2 when no cycle has enough samples', async () => {
    const r = await run([await writeRecord('slow', { rates: [[400, 400]] })]);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/nothing to analyse/);
  });
});
