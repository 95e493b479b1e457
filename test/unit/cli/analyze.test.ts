/**
 * `seqmon analyze` as the command-line contract describes it: one result line
 * per phasor/rms frame and per basic window of samples; bad lines reported
 * with line, field and reason, counted, and skipped; exit 2 when any line was
 * rejected.
 */
import { PassThrough, Readable } from 'node:stream';
import { complex, type Complex, add, multiply, divide, abs } from 'mathjs';
import { describe, expect, it } from 'vitest';
import { main } from '../../../agent/cli/main.js';

async function runCli(args: string[], input: string): Promise<{ code: number; out: string; err: string }> {
  const stdout = new PassThrough();
  const stderr = new PassThrough();
  let out = '';
  let err = '';
  stdout.on('data', (d: Buffer) => (out += d.toString()));
  stderr.on('data', (d: Buffer) => (err += d.toString()));
  const code = await main(args, { stdin: Readable.from([input]), stdout, stderr, env: {} });
  return { code, out, err };
}

const PHASOR = '{"ts":"2026-03-02T14:03:07.250Z","freq":59.98,"v":{"a":[7212.4,0.0],"b":[7190.1,-120.4],"c":[7168.8,119.7]},"i":{"a":[212.0,-24.8],"b":[205.3,-146.1],"c":[198.6,95.0]}}';
const RMS = '{"ts":1772460187250,"vll":{"ab":12470.2,"bc":12391.0,"ca":12440.7},"i":{"a":212.0,"b":205.3,"c":198.6}}';

/** u2 of a polar set computed independently with mathjs (reference library). */
function mathjsU2(set: [number, number][]): number {
  const [a, b, c] = set.map(([m, d]) => complex({ r: m, phi: (d * Math.PI) / 180 }) as Complex);
  const op = complex({ r: 1, phi: (2 * Math.PI) / 3 }) as Complex;
  const op2 = multiply(op, op) as Complex;
  const pos = divide(add(add(a!, multiply(op, b!)), multiply(op2, c!)), 3) as Complex;
  const neg = divide(add(add(a!, multiply(op2, b!)), multiply(op, c!)), 3) as Complex;
  return (100 * (abs(neg) as unknown as number)) / (abs(pos) as unknown as number);
}

describe('seqmon analyze', () => {
  it('writes one result per phasor frame with the sequence fields of the contract', async () => {
    const { code, out } = await runCli(['analyze', '-'], `${PHASOR}\n`);
    expect(code).toBe(0);
    const lines = out.trim().split('\n');
    expect(lines).toHaveLength(1);
    const r = JSON.parse(lines[0]!);
    expect(r).toMatchObject({ ts: '2026-03-02T14:03:07.250Z', window: 'frame', freq: 59.98, flagged: false });
    expect(r.v.u2).toBeCloseTo(mathjsU2([[7212.4, 0], [7190.1, -120.4], [7168.8, 119.7]]), 7);
    expect(r.i.u2).toBeCloseTo(mathjsU2([[212, -24.8], [205.3, -146.1], [198.6, 95]]), 7);
    expect(r.v.pos[0]).toBeGreaterThan(7000);
    expect(r.v.zero).toHaveLength(2);
  });

  it('computes u2 of an rms frame from the line-to-line magnitudes (IEC 61000-4-30 β formula) and leaves u0 null', async () => {
    const { code, out } = await runCli(['analyze'], `${RMS}\n`);
    expect(code).toBe(0);
    const r = JSON.parse(out.trim());
    // Reference: close the L-L triangle with the law of cosines and apply Fortescue with mathjs.
    const [ab, bc, ca] = [12470.2, 12391.0, 12440.7];
    const angB = Math.acos((ab * ab + bc * bc - ca * ca) / (2 * ab * bc)); // interior angle between ab and bc
    const vab: [number, number] = [ab, 0];
    const vbc: [number, number] = [bc, -(180 - (angB * 180) / Math.PI)];
    const x = ab * Math.cos(0) + bc * Math.cos((vbc[1] * Math.PI) / 180);
    const y = bc * Math.sin((vbc[1] * Math.PI) / 180);
    const vca: [number, number] = [Math.hypot(x, y), (Math.atan2(-y, -x) * 180) / Math.PI];
    expect(r.v.u2).toBeCloseTo(mathjsU2([vab, vbc, vca]), 7);
    expect(r.v.u0).toBeNull();
    expect(r.v.pos[1]).toBeNull();
    expect(r.v.lvur).toBeGreaterThan(0);
  });

  it('reports a bad line with its number, field and reason, keeps going, and exits 2', async () => {
    const bad = '{"ts":"2026-03-02T14:03:08.250Z","v":{"a":[7212.4,0.0],"b":[7190.1,-120.4]}}';
    const later = PHASOR.replace('07.250Z', '09.250Z');
    const { code, out, err } = await runCli(['analyze'], `${PHASOR}\nnot json\n${bad}\n${later}\n`);
    expect(code).toBe(2);
    expect(out.trim().split('\n')).toHaveLength(2);
    expect(err).toContain('line 2:');
    expect(err).toContain('FRAME_NOT_JSON');
    expect(err).toMatch(/line 3: v\.c: .*FRAME_MISSING_FIELD/);
    expect(err).toContain('2 of 4 line(s) rejected');
  });

  it('rejects a repeated timestamp of the same feeder as a duplicate', async () => {
    const { code, err } = await runCli(['analyze'], `${PHASOR}\n${PHASOR}\n`);
    expect(code).toBe(2);
    expect(err).toContain('FRAME_TIME_REVERSED');
  });

  it('keeps feeders apart when lines name them', async () => {
    const a = PHASOR.replace('{', '{"feeder":"F1",');
    const b = PHASOR.replace('{', '{"feeder":"F2",');
    const { code, out } = await runCli(['analyze'], `${a}\n${b}\n`);
    expect(code).toBe(0);
    expect(out.trim().split('\n').map((l) => JSON.parse(l).feeder)).toEqual(['F1', 'F2']);
  });

  it('writes CSV with a header that names units when asked', async () => {
    const { code, out } = await runCli(['analyze', '--format', 'csv'], `${PHASOR}\n`);
    expect(code).toBe(0);
    const [header, row] = out.trim().split('\n');
    expect(header).toContain('v_u2_pct');
    expect(header).toContain('i_pos_mag_A');
    expect(row!.split(',')).toHaveLength(header!.split(',').length);
  });

  it('writes one result per basic window of samples: 12 cycles at 60 Hz (IEC 61000-4-30 §4.4)', async () => {
    // One second of a balanced 60 Hz set at 7680 S/s plus 2 % negative sequence: five 200 ms windows.
    const rate = 7680;
    const n = rate;
    const ph: Record<string, number[]> = { a: [], b: [], c: [] };
    const amp = 7200 * Math.SQRT2;
    for (let k = 0; k < n; k++) {
      const t = k / rate;
      (['a', 'b', 'c'] as const).forEach((p, j) => {
        const w = 2 * Math.PI * 60 * t;
        const v = amp * Math.cos(w - (2 * Math.PI * j) / 3) + 0.02 * amp * Math.cos(w + (2 * Math.PI * j) / 3);
        ph[p]!.push(Math.round(v * 100) / 100);
      });
    }
    const line = JSON.stringify({ ts: '2026-03-02T14:03:07.000Z', rate, v: ph });
    const { code, out, err } = await runCli(['analyze', '--nominal-hz', '60'], `${line}\n`);
    expect(err).toBe('');
    expect(code).toBe(0);
    const rows = out.trim().split('\n').map((l) => JSON.parse(l));
    expect(rows.length).toBeGreaterThanOrEqual(4);
    for (const r of rows) {
      expect(r.window).toBe('basic');
      expect(r.v.u2).toBeCloseTo(2, 1);
    }
  });

  it('refuses an unknown option with exit code 2', async () => {
    const { code, err } = await runCli(['analyze', '--colour'], '');
    expect(code).toBe(2);
    expect(err).toContain('unknown option --colour');
  });

  it('refuses a nominal frequency other than 50 or 60 Hz', async () => {
    const { code } = await runCli(['analyze', '--nominal-hz', '55'], '');
    expect(code).toBe(2);
  });

  it('reports a missing input file with exit code 2', async () => {
    const { code, err } = await runCli(['analyze', '/nonexistent/frames.jsonl'], '');
    expect(code).toBe(2);
    expect(err).toContain('cannot read');
  });
});
