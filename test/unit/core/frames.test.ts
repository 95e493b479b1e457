/**
 * The edge validator: every input frame of shared/ARCHITECTURE.md is accepted
 * as written there, and every malformed frame is rejected whole with a named
 * field and a stable FRAME_* code.
 */
import { describe, expect, it } from 'vitest';
import { createPhasorScratch, parseFrame, parseTimestamp, validateFrame } from '../../../agent/core/frames.js';

const PHASOR_EXAMPLE = {
  ts: '2026-03-02T14:03:07.250Z',
  freq: 59.98,
  v: { a: [7212.4, 0.0], b: [7190.1, -120.4], c: [7168.8, 119.7] },
  i: { a: [212.0, -24.8], b: [205.3, -146.1], c: [198.6, 95.0] },
};
const RMS_EXAMPLE = { ts: 1772460187250, vll: { ab: 12470.2, bc: 12391.0, ca: 12440.7 }, i: { a: 212.0, b: 205.3, c: 198.6 } };

function rejectionOf(payload: unknown, opts = { feeder: 'F1' }) {
  const r = validateFrame(payload, opts);
  if (r.ok) throw new Error('expected a rejection');
  return r.error;
}

describe('accepting the contract examples', () => {
  it('accepts the phasor example and converts polar to rectangular once', () => {
    const r = validateFrame(PHASOR_EXAMPLE, { feeder: 'F1', kind: 'phasor' });
    expect(r.ok).toBe(true);
    if (!r.ok || r.frame.kind !== 'phasor') return;
    expect(r.frame.ts).toBe(Date.parse('2026-03-02T14:03:07.250Z'));
    expect(r.frame.freq).toBe(59.98);
    expect(r.frame.v![0]).toBeCloseTo(7212.4, 9);
    expect(Math.hypot(r.frame.v![2]!, r.frame.v![3]!)).toBeCloseTo(7190.1, 9);
  });

  it('accepts the rms example with an epoch-millisecond timestamp', () => {
    const r = validateFrame(RMS_EXAMPLE, { feeder: 'F1' });
    expect(r.ok && r.frame.kind).toBe('rms');
  });

  it('infers the kind from the fields when neither topic nor payload names it', () => {
    expect(validateFrame(PHASOR_EXAMPLE, { feeder: 'F1' }).ok && (validateFrame(PHASOR_EXAMPLE, { feeder: 'F1' }) as { frame: { kind: string } }).frame.kind).toBe('phasor');
    const samples = { ts: 1772460187000, rate: 7680, v: { a: [0, 1], b: [0, 1], c: [0, 1] } };
    const r = validateFrame(samples, { feeder: 'F1' });
    expect(r.ok && r.frame.kind).toBe('samples');
  });

  it('takes the feeder from the payload when the topic gives none', () => {
    const r = validateFrame({ ...RMS_EXAMPLE, feeder: 'North-7' }, {});
    expect(r.ok && r.frame.feeder).toBe('North-7');
  });
});

describe('rejecting malformed frames with a named field and reason', () => {
  it('refuses a payload larger than the limit before parsing it', () => {
    const r = parseFrame('x'.repeat(100), { feeder: 'F1', limits: { ...defaultLimits(), maxPayloadBytes: 10 } });
    expect(!r.ok && r.error.code).toBe('FRAME_TOO_LARGE');
  });

  it('rejects text that is not JSON', () => {
    const r = parseFrame('{"ts": 1,', { feeder: 'F1' });
    expect(!r.ok && r.error.code).toBe('FRAME_NOT_JSON');
  });

  it('rejects JSON that is not an object', () => {
    expect(rejectionOf([1, 2, 3]).code).toBe('FRAME_NOT_OBJECT');
  });

  it('rejects a missing phase and names it', () => {
    const e = rejectionOf({ ...PHASOR_EXAMPLE, v: { a: [1, 0], b: [1, -120] } });
    expect(e).toMatchObject({ code: 'FRAME_MISSING_FIELD', field: 'v.c' });
  });

  it('rejects a magnitude given as a string', () => {
    const e = rejectionOf({ ...PHASOR_EXAMPLE, i: { a: ['212', 0], b: [1, 0], c: [1, 0] } });
    expect(e).toMatchObject({ code: 'FRAME_BAD_VALUE', field: 'i.a[0]' });
  });

  it('rejects a negative magnitude', () => {
    const e = rejectionOf({ ...RMS_EXAMPLE, vll: { ab: -1, bc: 1, ca: 1 } });
    expect(e).toMatchObject({ code: 'FRAME_BAD_VALUE', field: 'vll.ab' });
  });

  it('rejects NaN or Infinity smuggled in as strings', () => {
    expect(rejectionOf({ ...RMS_EXAMPLE, i: { a: 'NaN', b: 1, c: 1 } }).code).toBe('FRAME_BAD_VALUE');
    expect(rejectionOf({ ...RMS_EXAMPLE, i: { a: 'Infinity', b: 1, c: 1 } }).code).toBe('FRAME_BAD_VALUE');
  });

  it('rejects a non-finite number handed over by a non-JSON source', () => {
    expect(rejectionOf({ ...RMS_EXAMPLE, i: { a: Number.NaN, b: 1, c: 1 } }).code).toBe('FRAME_BAD_VALUE');
    expect(rejectionOf({ ...RMS_EXAMPLE, i: { a: Number.POSITIVE_INFINITY, b: 1, c: 1 } }).code).toBe('FRAME_BAD_VALUE');
  });

  it('rejects a phasor that is not a [magnitude, angle] pair', () => {
    expect(rejectionOf({ ...PHASOR_EXAMPLE, v: { a: [1, 0, 0], b: [1, 0], c: [1, 0] } })).toMatchObject({ code: 'FRAME_BAD_VALUE', field: 'v.a' });
  });

  it('rejects sample arrays of different lengths', () => {
    const e = rejectionOf({ ts: 1772460187000, rate: 7680, v: { a: [0, 1, 2], b: [0, 1], c: [0, 1, 2] } });
    expect(e.code).toBe('FRAME_BAD_LENGTH');
  });

  it('rejects a huge sample array beyond the configured limit', () => {
    const big = new Array(200_000).fill(0);
    const e = rejectionOf({ ts: 1772460187000, rate: 7680, v: { a: big, b: big, c: big } });
    expect(e).toMatchObject({ code: 'FRAME_BAD_LENGTH', field: 'v.a' });
  });

  it('rejects a sample rate outside the supported range', () => {
    expect(rejectionOf({ ts: 1772460187000, rate: 10, v: { a: [0], b: [0], c: [0] } }).code).toBe('FRAME_BAD_RATE');
  });

  it('rejects a frequency outside 30-90 Hz as a unit mistake', () => {
    expect(rejectionOf({ ...PHASOR_EXAMPLE, freq: 376.8 })).toMatchObject({ code: 'FRAME_BAD_VALUE', field: 'freq' });
  });

  it('rejects a feeder id outside [A-Za-z0-9_.-]{1,64}', () => {
    expect(rejectionOf(RMS_EXAMPLE, { feeder: 'bad/feeder' }).code).toBe('FRAME_BAD_FEEDER');
    expect(rejectionOf(RMS_EXAMPLE, { feeder: 'x'.repeat(65) }).code).toBe('FRAME_BAD_FEEDER');
  });

  it('rejects a payload feeder that contradicts the topic', () => {
    expect(rejectionOf({ ...RMS_EXAMPLE, feeder: 'F2' }).code).toBe('FRAME_BAD_FEEDER');
  });

  it('rejects a frame with no data fields at all', () => {
    expect(rejectionOf({ ts: 1772460187000, kind: 'rms' }).code).toBe('FRAME_MISSING_FIELD');
  });

  it('rejects an unknown kind', () => {
    expect(rejectionOf({ ...RMS_EXAMPLE, kind: 'waveform' })).toMatchObject({ code: 'FRAME_UNKNOWN_KIND', field: 'kind' });
  });
});

describe('timestamps (ISO-8601 or epoch milliseconds)', () => {
  it('reads ISO-8601 with an offset', () => {
    expect(parseTimestamp('2026-03-02T16:03:07.250+02:00')).toBe(Date.parse('2026-03-02T14:03:07.250Z'));
  });

  it('refuses an ISO string without a time zone, which would be read in local time', () => {
    expect(rejectionOf({ ...RMS_EXAMPLE, ts: '2026-03-02T14:03:07' }).code).toBe('FRAME_BAD_TIMESTAMP');
  });

  it('refuses epoch seconds sent in place of milliseconds', () => {
    expect(rejectionOf({ ...RMS_EXAMPLE, ts: 1772460187 }).code).toBe('FRAME_BAD_TIMESTAMP');
  });

  it('refuses a missing timestamp', () => {
    const { ts: _ts, ...rest } = RMS_EXAMPLE;
    expect(rejectionOf(rest)).toMatchObject({ code: 'FRAME_BAD_TIMESTAMP', field: 'ts' });
  });
});

function defaultLimits() {
  return { maxPayloadBytes: 4 << 20, maxSamplesPerChannel: 131072, minSampleRate: 960, maxSampleRate: 1e6, minFreqHz: 30, maxFreqHz: 90 };
}

describe('phasor sets written into caller scratch buffers', () => {
  it('writes v and i into the given buffers, with the values of new arrays', () => {
    const scratch = createPhasorScratch();
    const own = validateFrame(PHASOR_EXAMPLE, { feeder: 'F1', kind: 'phasor' });
    const into = validateFrame(PHASOR_EXAMPLE, { feeder: 'F1', kind: 'phasor', scratch });
    if (!own.ok || own.frame.kind !== 'phasor' || !into.ok || into.frame.kind !== 'phasor') throw new Error('expected phasor frames');
    expect(into.frame.v).toBe(scratch.v);
    expect(into.frame.i).toBe(scratch.i);
    expect([...into.frame.v!]).toEqual([...own.frame.v!]);
    expect([...into.frame.i!]).toEqual([...own.frame.i!]);
  });

  it('still names the phase at fault when a set is malformed', () => {
    const r = validateFrame({ ...PHASOR_EXAMPLE, i: { ...PHASOR_EXAMPLE.i, b: [205.3] } }, { feeder: 'F1', kind: 'phasor', scratch: createPhasorScratch() });
    expect(r.ok).toBe(false);
    if (r.ok) return;
    expect(r.error.code).toBe('FRAME_BAD_VALUE');
    expect(r.error.field).toBe('i.b');
  });
});

describe('a byte order mark before the JSON text', () => {
  // RFC 8259 §8.1 (from memory): senders must not add one, parsers may ignore it; some UTF-8 encoders write it anyway.
  it('is ignored, in a byte payload and in a string payload', () => {
    const text = JSON.stringify(PHASOR_EXAMPLE);
    const bytes = Buffer.concat([Buffer.from([0xef, 0xbb, 0xbf]), Buffer.from(text)]);
    expect(parseFrame(bytes, { feeder: 'F1', kind: 'phasor' }).ok).toBe(true);
    expect(parseFrame(`\uFEFF${text}`, { feeder: 'F1', kind: 'phasor' }).ok).toBe(true);
  });

  it('is ignored only at the start: one inside the text is still not JSON', () => {
    const r = parseFrame(`{"ts":\uFEFF1}`, { feeder: 'F1', kind: 'phasor' });
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.error.code).toBe('FRAME_NOT_JSON');
  });
});
