import { describe, expect, test } from 'vitest';
import { DEFAULT_DETECTION } from '../../../agent/core/detect/settings.js';
import { validateFrame } from '../../../agent/core/frames.js';
import type { PhasorFrame, RmsFrame } from '../../../agent/core/frames.js';
import { fortescueInto } from '../../../agent/core/sequence/fortescue.js';
import { u0Percent, u2FromLineMagnitudesPercent, u2Percent } from '../../../agent/core/sequence/unbalance.js';
import { SubstationSimulator } from '../../../agent/sources/simulator/generator.js';
import type { SimulatedFrame } from '../../../agent/sources/simulator/generator.js';
import { SUBSTATION_NAME, WRENMOOR_FEEDERS } from '../../../agent/sources/simulator/substation.js';

const ORIGIN = Date.UTC(2026, 2, 2, 0, 0, 0);
const sim = new SubstationSimulator({ originMs: ORIGIN, seed: 7, speed: 1, startHour: 0 });
const HOUR = 3_600_000;

function phasorFrame(f: SimulatedFrame): PhasorFrame {
  const r = validateFrame(f.payload, { feeder: f.feeder, kind: f.kind });
  if (!r.ok || r.frame.kind !== 'phasor') throw new Error(`not a valid phasor frame: ${JSON.stringify(r)}`);
  return r.frame;
}

function ratio(buf: Float64Array, num: 0 | 2, seq = new Float64Array(6)): number {
  fortescueInto(buf, seq);
  return Math.hypot(seq[2 * (num === 0 ? 0 : 2)]!, seq[2 * (num === 0 ? 0 : 2) + 1]!) / Math.hypot(seq[2]!, seq[3]!);
}

const mags = (b: Float64Array): [number, number, number] => [Math.hypot(b[0]!, b[1]!), Math.hypot(b[2]!, b[3]!), Math.hypot(b[4]!, b[5]!)];

/** Times every 20 simulated minutes through one day, skipping any within a second of a fault or fuse event. */
function quietTimes(feederId: string): number[] {
  const out: number[] = [];
  for (let m = 0; m < 24 * 60; m += 20) {
    const ts = ORIGIN + m * 60_000;
    const all = sim.feeders.map((f) => sim.truth(f.id, ts));
    if (all.some((t) => t.faultActive)) continue;
    if (sim.truth(feederId, ts).fuseOpen) continue;
    out.push(ts);
  }
  return out;
}

describe('fictional substation simulator: frames', () => {
  test('the substation and every feeder are labelled fictional', () => {
    expect(SUBSTATION_NAME).toMatch(/fictional/);
    for (const f of WRENMOOR_FEEDERS) expect(f.name).toMatch(/\(fictional\)$/);
  });

  test('every frame of every feeder passes the edge validator, including during faults and with the fuse open', () => {
    const times = [ORIGIN + 2 * HOUR, sim.faultWindows('WM-104', 0)[1]![0], sim.fuseWindow('WM-103', 0)!.faultFrom, sim.fuseWindow('WM-103', 0)!.blowsAt + 60_000];
    let checked = 0;
    for (const t of times) {
      for (const f of sim.framesBetween(t - 1_000, t + 1_000)) {
        const r = validateFrame(JSON.parse(JSON.stringify(f.payload)), { feeder: f.feeder, kind: f.kind });
        expect(r.ok, JSON.stringify(r)).toBe(true);
        checked++;
      }
    }
    // 4 phasor + 1 samples feeders at 10/s and 1 rms at 1/s over 2 s, at 4 instants.
    expect(checked).toBe(4 * (5 * 20 + 2));
  });

  test('phasor and sample-block feeders report 10 frames per second, the rms meter 1 per second', () => {
    const frames = sim.framesBetween(ORIGIN + 10 * HOUR, ORIGIN + 10 * HOUR + 3_000);
    const count = (id: string): number => frames.filter((f) => f.feeder === id).length;
    for (const f of WRENMOOR_FEEDERS) expect(count(f.id)).toBe(f.kind === 'rms' ? 3 : 30);
    expect(new Set(WRENMOOR_FEEDERS.map((f) => f.kind))).toEqual(new Set(['phasor', 'rms', 'samples']));
  });

  test('frames are a pure function of seed and time: the same seed repeats them, another seed changes them', () => {
    const ts = ORIGIN + 9 * HOUR;
    const again = new SubstationSimulator({ originMs: ORIGIN, seed: 7, speed: 1, startHour: 0 });
    const other = new SubstationSimulator({ originMs: ORIGIN, seed: 8, speed: 1, startHour: 0 });
    for (const f of WRENMOOR_FEEDERS) {
      expect(again.frame(f.id, ts)).toEqual(sim.frame(f.id, ts));
      expect(other.frame(f.id, ts)).not.toEqual(sim.frame(f.id, ts));
    }
  });

  test('frames of one feeder can be asked for alone', () => {
    const frames = sim.framesBetween(ORIGIN, ORIGIN + 1_000, 'WM-106');
    expect(frames.map((f) => [f.feeder, f.ts])).toEqual([['WM-106', ORIGIN + 1_000]]);
    expect(() => sim.framesBetween(ORIGIN, ORIGIN + 1_000, 'XX-1')).toThrow(/no feeder XX-1/);
  });

  test('frames are in time order and stamped on multiples of each feeder period', () => {
    const frames = sim.framesBetween(ORIGIN + 5_050, ORIGIN + 7_000);
    for (let k = 1; k < frames.length; k++) expect(frames[k]!.ts).toBeGreaterThanOrEqual(frames[k - 1]!.ts);
    for (const f of frames) expect(f.ts % WRENMOOR_FEEDERS.find((x) => x.id === f.feeder)!.periodMs).toBe(0);
  });
});

describe('fictional substation simulator: realistic unbalance', () => {
  // Typical steady-state voltage unbalance on distribution systems is 0.5-2 % (IEEE 1159, from memory; shared/CHECKS.md §2.1);
  // the simulator is meant to sit inside 0.3-2 % away from events.
  const U2_LOW = 0.3;
  const U2_HIGH = 2;

  test('voltage u2 of the phasor feeders, computed from their frames, stays within 0.3-2 % all day', () => {
    const seq = new Float64Array(6);
    for (const id of ['WM-101', 'WM-102', 'WM-104']) {
      for (const ts of quietTimes(id)) {
        const fr = phasorFrame(sim.frame(id, ts));
        fortescueInto(fr.v!, seq);
        const u2 = u2Percent(seq);
        expect(u2, `${id} at ${new Date(ts).toISOString()}`).toBeGreaterThan(U2_LOW);
        expect(u2).toBeLessThan(U2_HIGH);
      }
    }
  });

  test('voltage u2 of the rms meter feeder, from its line-to-line magnitudes (IEC 61000-4-30 §5.7.1 formula), stays within 0.3-2 %', () => {
    for (const ts of quietTimes('WM-106')) {
      const f = sim.frame('WM-106', Math.floor(ts / 1000) * 1000);
      const r = validateFrame(f.payload, { feeder: f.feeder, kind: f.kind });
      expect(r.ok).toBe(true);
      const vll = (r as { frame: RmsFrame }).frame.vll!;
      const u2 = u2FromLineMagnitudesPercent(vll[0]!, vll[1]!, vll[2]!);
      expect(u2).toBeGreaterThan(U2_LOW);
      expect(u2).toBeLessThan(U2_HIGH);
    }
  });

  test('the supply carries a small zero-sequence voltage (u0 below 1 %) away from faults', () => {
    const seq = new Float64Array(6);
    for (const ts of quietTimes('WM-101')) {
      fortescueInto(sim.truth('WM-101', ts).v, seq);
      const u0 = u0Percent(seq);
      expect(u0).toBeGreaterThan(0);
      expect(u0).toBeLessThan(1);
    }
  });

  test('current unbalance of a feeder with single-phase laterals changes through the day by several points', () => {
    const values = quietTimes('WM-101').map((ts) => 100 * ratio(sim.truth('WM-101', ts).i, 2));
    expect(Math.max(...values) - Math.min(...values)).toBeGreaterThan(5);
    // ...and never looks like an open phase in normal operation.
    expect(Math.max(...values)).toBeLessThan(DEFAULT_DETECTION.openPhase.negToPosCurrentRatio * 100);
  });

  test('load follows the time of day: the evening peak is well above the small hours', () => {
    const sum = (ts: number): number => mags(sim.truth('WM-101', ts).i).reduce((a, b) => a + b, 0);
    expect(sum(ORIGIN + 19 * HOUR)).toBeGreaterThan(1.8 * sum(ORIGIN + 3 * HOUR));
  });
});

describe('fictional substation simulator: events', () => {
  test('with the lateral fuse blown, phase c current collapses and I2/I1 reaches the open-phase signature', () => {
    const w = sim.fuseWindow('WM-103', 0)!;
    const during = sim.truth('WM-103', w.blowsAt + 10 * 60_000);
    expect(during.fuseOpen).toBe(true);
    const [ia, ib, ic] = mags(during.i);
    // Collapse and I2/I1 thresholds of the shipped open-phase defaults (agent/core/detect/settings.ts).
    expect(ic).toBeLessThan(DEFAULT_DETECTION.openPhase.currentCollapseRatio * ((ia + ib) / 2));
    expect(Math.min(ia, ib)).toBeGreaterThan(DEFAULT_DETECTION.openPhase.minLoadA);
    // Ideal three-wire open phase gives |I2|/|I1| = 1 (Glover, Sarma & Overbye, Example 8.2, from memory); a grounded-wye load 0.5
    // (shared/CHECKS.md). With a little three-phase load left on phase c the ratio sits between 0.4 and 0.6.
    const r = ratio(during.i, 2);
    expect(r).toBeGreaterThan(DEFAULT_DETECTION.openPhase.negToPosCurrentRatio);
    expect(r).toBeLessThan(0.6);
  });

  test('before the fuse blows and after it is replaced the same feeder is ordinarily balanced', () => {
    const w = sim.fuseWindow('WM-103', 0)!;
    for (const ts of [w.faultFrom - 10 * 60_000, w.replacedAt + 10 * 60_000]) {
      const t = sim.truth('WM-103', ts);
      expect(t.fuseOpen).toBe(false);
      expect(ratio(t.i, 2)).toBeLessThan(0.15);
    }
  });

  test('the fuse is preceded by a short phase-c-to-ground fault on the tap', () => {
    const w = sim.fuseWindow('WM-103', 0)!;
    const t = sim.truth('WM-103', w.faultFrom + 10);
    expect(t.faultActive).toBe(true);
    const [ia, , ic] = mags(t.i);
    expect(ic).toBeGreaterThan(5 * ia);
  });

  test('the AG fault on WM-104 draws fault-level phase a current with ground involvement, then clears', () => {
    const [from, to] = sim.faultWindows('WM-104', 0)[1]!;
    const during = sim.truth('WM-104', from + 50);
    expect(during.faultActive).toBe(true);
    const [ia, ib, ic] = mags(during.i);
    expect(ia).toBeGreaterThan(DEFAULT_DETECTION.fault.pickupA);
    expect(Math.max(ib, ic)).toBeLessThan(500);
    // |I0|/|I1| above the ground ratio marks ground involvement (settings.ts default, common practice).
    expect(ratio(during.i, 0)).toBeGreaterThan(DEFAULT_DETECTION.fault.groundRatio);
    const [va, vb] = mags(during.v);
    expect(va).toBeLessThan(0.5 * vb);
    const after = sim.truth('WM-104', to + 1);
    expect(after.faultActive).toBe(false);
    expect(mags(after.i)[0]).toBeLessThan(500);
  });

  test('a fault on one feeder sags the same phase on the other feeders of the bus', () => {
    const [from] = sim.faultWindows('WM-104', 0)[1]!;
    const before = mags(sim.truth('WM-101', from - 100).v)[0];
    const during = mags(sim.truth('WM-101', from + 50).v)[0];
    expect(during).toBeLessThan(0.8 * before);
  });

  test('speed compresses the day: at speed 240 one simulated hour passes in 15 real seconds', () => {
    const fast = new SubstationSimulator({ originMs: ORIGIN, seed: 7, speed: 240, startHour: 6 });
    expect(fast.hourOfDay(ORIGIN)).toBeCloseTo(6, 12);
    expect(fast.hourOfDay(ORIGIN + 15_000)).toBeCloseTo(7, 12);
    expect(fast.hourOfDay(ORIGIN + 18 * 15_000 + 1)).toBeCloseTo(0, 3);
    // Events keep their real duration: a fault is 200 ms long at any speed.
    const [a, b] = fast.faultWindows('WM-104', 1)[0]!;
    expect(b - a).toBe(200);
  });
});

describe('fictional substation simulator: sampled waveforms', () => {
  const ts = ORIGIN + 12 * HOUR;
  const f = sim.frame('WM-105', ts);
  const payload = f.payload as { rate: number; v: Record<string, number[]>; i: Record<string, number[]> };
  const truth = sim.truth('WM-105', ts);
  const feeder = WRENMOOR_FEEDERS.find((x) => x.id === 'WM-105')!;

  test('blocks are 100 ms of 3840 samples per second, so consecutive blocks are contiguous', () => {
    expect(payload.rate).toBe(3840);
    for (const p of ['a', 'b', 'c']) {
      expect(payload.v[p]).toHaveLength(384);
      expect(payload.i[p]).toHaveLength(384);
    }
    const next = sim.framesBetween(ts, ts + 100).find((x) => x.feeder === 'WM-105')!;
    expect(next.ts - ts).toBe((384 / 3840) * 1000);
  });

  test('the RMS of each channel equals the phasor magnitude with its harmonics, √(1 + Σ h²) (Parseval, over whole cycles)', () => {
    // 100 ms holds 6 whole cycles at 60 Hz, so the harmonics are orthogonal over the block (textbook Fourier series).
    // Tolerance: 0.5 % covers the ±0.05 % sample noise, rounding and the ±0.02 Hz frequency wander.
    const [va] = mags(truth.v);
    const [ia] = mags(truth.i);
    const rms = (x: number[]): number => Math.sqrt(x.reduce((s, y) => s + y * y, 0) / x.length);
    const kv = Math.sqrt(1 + feeder.harmonics.reduce((s, h) => s + h[1] ** 2, 0));
    const ki = Math.sqrt(1 + feeder.harmonics.reduce((s, h) => s + h[2] ** 2, 0));
    expect(Math.abs(rms(payload.v.a!) / (va * kv) - 1)).toBeLessThan(0.005);
    expect(Math.abs(rms(payload.i.a!) / (ia * ki) - 1)).toBeLessThan(0.005);
  });

  test('a DFT of the block at the fundamental returns the true phase b voltage phasor', () => {
    // Single-bin DFT over an integer number of cycles: X = (√2/N) Σ x[k]·e^{-jωk/rate} (IEEE C37.118.1 phasor definition, RMS scaling).
    const x = payload.v.b!;
    const N = x.length;
    let re = 0;
    let im = 0;
    const t0 = (ts - ORIGIN) / 1000;
    for (let k = 0; k < N; k++) {
      const w = 2 * Math.PI * 60 * (t0 + k / payload.rate);
      re += x[k]! * Math.cos(w);
      im -= x[k]! * Math.sin(w);
    }
    const m = (Math.SQRT2 / N) * Math.hypot(re, im);
    const ang = (Math.atan2(im, re) * 180) / Math.PI;
    const trueM = Math.hypot(truth.v[2]!, truth.v[3]!);
    const trueAng = (Math.atan2(truth.v[3]!, truth.v[2]!) * 180) / Math.PI;
    expect(Math.abs(m / trueM - 1)).toBeLessThan(0.005);
    const d = ((ang - trueAng + 540) % 360) - 180;
    expect(Math.abs(d)).toBeLessThan(0.5);
  });
});
