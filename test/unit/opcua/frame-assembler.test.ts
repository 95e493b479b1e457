/**
 * Grouping of OPC UA values into frames by source timestamp. The rules are
 * this project's design (agent/sources/opcua/frame-assembler.ts); the output
 * shape is the wire form of shared/ARCHITECTURE.md, checked with the shared
 * frame validator. Feeders and values are fictional.
 */
import { describe, expect, it } from 'vitest';
import { validateFrame } from '../../../agent/core/frames.js';
import { FrameAssembler, feederSlots } from '../../../agent/sources/opcua/frame-assembler.js';
import type { PhasorFeeder, RmsFeeder } from '../../../agent/sources/opcua/options.js';

const RMS: RmsFeeder = { id: 'F2', kind: 'rms', nodes: { i: { a: 'ia', b: 'ib', c: 'ic' } } };
const settings = { toleranceMs: 20, incompleteAfterMs: 1_000, maxPendingGroups: 4 };
const T = 1_772_460_187_000;

function feed(a: FrameAssembler, values: [number, number, number][]): Record<string, unknown>[] {
  const out: Record<string, unknown>[] = [];
  for (const [slot, x, ts] of values) {
    const p = a.offer(slot, x, ts);
    if (p !== null) out.push(p);
  }
  return out;
}

describe('FrameAssembler', () => {
  it('orders slots v (mag, ang per phase), i, then freq for a phasor feeder', () => {
    const f: PhasorFeeder = {
      id: 'F1',
      kind: 'phasor',
      nodes: { v: { a: { mag: 'm1', ang: 'a1' }, b: { mag: 'm2', ang: 'a2' }, c: { mag: 'm3', ang: 'a3' } }, freq: 'f' },
    };
    expect(feederSlots(f).map((s) => s.path)).toEqual(['v.a.mag', 'v.a.ang', 'v.b.mag', 'v.b.ang', 'v.c.mag', 'v.c.ang', 'freq']);
  });

  it('emits a frame once every slot has a value within the tolerance, stamped with the earliest time', () => {
    const a = new FrameAssembler(RMS, settings);
    const out = feed(a, [[0, 200, T + 5], [1, 201, T], [2, 202, T + 20]]);
    expect(out).toEqual([{ feeder: 'F2', kind: 'rms', ts: T, i: { a: 200, b: 201, c: 202 } }]);
    expect(validateFrame(out[0]).ok).toBe(true);
  });

  it('does not join values further apart than the tolerance', () => {
    const a = new FrameAssembler(RMS, settings);
    expect(feed(a, [[0, 200, T], [1, 201, T + 10], [2, 202, T + 31]])).toEqual([]);
  });

  it('keeps two interleaved timestamps apart and emits both in time order', () => {
    const a = new FrameAssembler(RMS, settings);
    const out = feed(a, [[0, 1, T], [0, 2, T + 100], [1, 1, T], [1, 2, T + 100], [2, 1, T], [2, 2, T + 100]]);
    expect(out.map((p) => p.ts)).toEqual([T, T + 100]);
  });

  it('drops older incomplete groups when a newer one completes, and counts them', () => {
    const a = new FrameAssembler(RMS, settings);
    const out = feed(a, [[0, 1, T], [0, 2, T + 100], [1, 2, T + 100], [2, 2, T + 100]]);
    expect(out.map((p) => p.ts)).toEqual([T + 100]);
    expect(a.counters.groupsIncomplete).toBe(1);
  });

  it('counts a value not later than the last emitted frame as late and ignores it', () => {
    const a = new FrameAssembler(RMS, settings);
    feed(a, [[0, 1, T], [1, 1, T], [2, 1, T]]);
    expect(feed(a, [[0, 9, T - 50]])).toEqual([]);
    expect(a.counters.valuesLate).toBe(1);
    expect(a.pendingGroups).toBe(0);
  });

  it('drops a group once data newer by incompleteAfterMs arrives', () => {
    const a = new FrameAssembler(RMS, settings);
    feed(a, [[0, 1, T], [0, 1, T + 1_001]]);
    expect(a.counters.groupsIncomplete).toBe(1);
    expect(a.pendingGroups).toBe(1);
  });

  it('bounds the number of pending groups', () => {
    const a = new FrameAssembler(RMS, settings);
    feed(a, [0, 1, 2, 3, 4, 5].map((k) => [0, 1, T + k * 100] as [number, number, number]));
    expect(a.pendingGroups).toBe(4);
    expect(a.counters.groupsIncomplete).toBe(2);
  });

  it('scales magnitudes and converts radians to degrees for a phasor feeder', () => {
    const f: PhasorFeeder = {
      id: 'F1',
      kind: 'phasor',
      angleUnit: 'rad',
      voltageScale: 1000,
      nodes: { v: { a: { mag: 'm1', ang: 'a1' }, b: { mag: 'm2', ang: 'a2' }, c: { mag: 'm3', ang: 'a3' } } },
    };
    const a = new FrameAssembler(f, settings);
    const out = feed(a, [[0, 7.2, T], [1, 0, T], [2, 7.2, T], [3, -(2 * Math.PI) / 3, T], [4, 7.2, T], [5, (2 * Math.PI) / 3, T]]);
    const v = out[0]!.v as Record<string, [number, number]>;
    expect(v.a[0]).toBeCloseTo(7200, 9);
    expect(v.b[1]).toBeCloseTo(-120, 9);
    expect(v.c[1]).toBeCloseTo(120, 9);
  });
});
