/**
 * Builds SequenceResults for detection tests with the project's own sequence
 * code (agent/core/sequence/quantities.ts), from phasor sets given as
 * [magnitude, angleDegrees] per phase, and loads the shared check vectors.
 */
import { readFileSync } from 'node:fs';
import { polarToRectInto } from '../../../agent/core/complex/complex.js';
import type { QuantityResult, SequenceResult, VoltageResult, WindowName } from '../../../agent/core/result.js';
import { inverseFortescueInto } from '../../../agent/core/sequence/fortescue.js';
import { quantityFromPhasors, SequenceScratch, voltageFromPhasors } from '../../../agent/core/sequence/quantities.js';

export type Polar = [number, number];
export interface PolarSet {
  a: Polar;
  b: Polar;
  c: Polar;
}

export function rect(s: PolarSet): Float64Array {
  const buf = new Float64Array(6);
  polarToRectInto(s.a[0], s.a[1], buf, 0);
  polarToRectInto(s.b[0], s.b[1], buf, 2);
  polarToRectInto(s.c[0], s.c[1], buf, 4);
  return buf;
}

const scratch = new SequenceScratch();

export function currents(s: PolarSet): QuantityResult {
  return quantityFromPhasors(rect(s), scratch);
}

export function voltages(s: PolarSet): VoltageResult {
  return voltageFromPhasors(rect(s), scratch);
}

export function balanced(mag: number, angle = 0): PolarSet {
  return { a: [mag, angle], b: [mag, angle - 120], c: [mag, angle + 120] };
}

export function scaled(s: PolarSet, k: number): PolarSet {
  return { a: [s.a[0] * k, s.a[1]], b: [s.b[0] * k, s.b[1]], c: [s.c[0] * k, s.c[1]] };
}

export interface ResultSpec {
  ts: number;
  feeder?: string;
  window?: WindowName;
  durationMs?: number;
  v?: PolarSet | null;
  i?: PolarSet | null;
}

export function result(spec: ResultSpec): SequenceResult {
  return {
    ts: spec.ts,
    feeder: spec.feeder ?? 'F1',
    window: spec.window ?? 'frame',
    durationMs: spec.durationMs ?? 0,
    freq: 60,
    flagged: false,
    v: spec.v === undefined || spec.v === null ? null : voltages(spec.v),
    i: spec.i === undefined || spec.i === null ? null : currents(spec.i),
    count: 1,
  };
}

/**
 * Phase voltages with a chosen positive-sequence magnitude and u2/u0 (percent),
 * built by the inverse Fortescue transform: V1 = vln∠0, V2 = u2·vln∠−71.4°,
 * V0 = u0·vln∠33° (arbitrary angles; u2 and u0 depend only on the magnitudes).
 */
export function voltagesWithUnbalance(vln: number, u2Percent: number, u0Percent = 0): PolarSet {
  const seq = new Float64Array(6);
  polarToRectInto((u0Percent / 100) * vln, 33, seq, 0);
  polarToRectInto(vln, 0, seq, 2);
  polarToRectInto((u2Percent / 100) * vln, -71.4, seq, 4);
  const abc = new Float64Array(6);
  inverseFortescueInto(seq, abc);
  const polar = (k: number): Polar => [Math.hypot(abc[2 * k]!, abc[2 * k + 1]!), (Math.atan2(abc[2 * k + 1]!, abc[2 * k]!) * 180) / Math.PI];
  return { a: polar(0), b: polar(1), c: polar(2) };
}

/** Phase currents with |I1| = i1 (lagging 25.8°, pf 0.9) and the chosen u2 (percent). */
export function currentsWithUnbalance(i1: number, u2Percent: number): PolarSet {
  const v = voltagesWithUnbalance(i1, u2Percent, 0);
  return { a: [v.a[0], v.a[1] - 25.8], b: [v.b[0], v.b[1] - 25.8], c: [v.c[0], v.c[1] - 25.8] };
}

/** A '3s' aggregate carrying the given voltage u2/u0 and, optionally, currents. */
export function aggregate3s(endTs: number, v: PolarSet | null, i: PolarSet | null = null, feeder = 'F1'): SequenceResult {
  return { ...result({ ts: endTs - 3000, durationMs: 3000, window: '3s', v, i, feeder }), count: 15 };
}

export interface CheckVector {
  name: string;
  source: string;
  provenance: string;
  inputs: PolarSet;
  expected: { neg_over_pos: number | null; zero_over_pos: number | null; angle_neg_minus_zero_deg?: number };
}

let vectors: CheckVector[] | null = null;

/** One vector of test/fixtures/check-vectors.json (a copy of the project's shared check vectors). */
export function checkVector(name: string): CheckVector {
  vectors ??= JSON.parse(readFileSync(new URL('../../fixtures/check-vectors.json', import.meta.url), 'utf8')) as CheckVector[];
  const v = vectors.find((x) => x.name === name);
  if (v === undefined) throw new Error(`check vector ${name} not found`);
  return v;
}

/** The check vector whose inputs are exactly these phasors (a published problem is identified by its statement). */
export function vectorWithInputs(inputs: PolarSet): CheckVector {
  checkVector('fault-slg-a-g');
  const same = (x: Polar, y: Polar): boolean => x[0] === y[0] && x[1] === y[1];
  const v = vectors!.find((x) => same(x.inputs.a, inputs.a) && same(x.inputs.b, inputs.b) && same(x.inputs.c, inputs.c));
  if (v === undefined) throw new Error('no check vector has these inputs');
  return v;
}
