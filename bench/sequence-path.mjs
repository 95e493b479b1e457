// Phasor frames per second through the Fortescue + unbalance path (target:
// at least 5 million per second on one core) and the allocation per frame in
// that hot path (target: none).
import { polarToRectInto } from '../dist/agent/core/complex/complex.js';
import { fortescueInto } from '../dist/agent/core/sequence/fortescue.js';
import { u0Percent, u2Percent } from '../dist/agent/core/sequence/unbalance.js';
import { bestNsPerOp, heapBytesPerOp } from './_timing.mjs';

const N = 5_000_000;
const FRAMES = 1024;

export async function run() {
  // A ring of realistic, slightly unbalanced frames in [magnitude, angle] form, as they arrive.
  const polar = new Float64Array(FRAMES * 6);
  for (let f = 0; f < FRAMES; f++) {
    for (let k = 0; k < 3; k++) {
      polar[f * 6 + 2 * k] = 7200 * (1 + 0.02 * Math.sin(f + k));
      polar[f * 6 + 2 * k + 1] = -120 * k + 0.5 * Math.cos(f * k);
    }
  }
  const abc = new Float64Array(6);
  const seq = new Float64Array(6);
  // A typed-array sink: a captured `let` number would itself be re-boxed on the heap every iteration.
  const sink = new Float64Array(1);

  // Baseline in the same run: a bare loop that only reads and sums the same six numbers per frame.
  const readOnly = (n) => {
    for (let j = 0; j < n; j++) {
      const o = (j & (FRAMES - 1)) * 6;
      sink[0] += polar[o] + polar[o + 1] + polar[o + 2] + polar[o + 3] + polar[o + 4] + polar[o + 5];
    }
  };
  const sequenceOnly = (n) => {
    for (let j = 0; j < n; j++) {
      abc[0] = polar[(j & (FRAMES - 1)) * 6];
      fortescueInto(abc, seq);
      sink[0] += u2Percent(seq) + u0Percent(seq);
    }
  };
  const fullPath = (n) => {
    for (let j = 0; j < n; j++) {
      const o = (j & (FRAMES - 1)) * 6;
      polarToRectInto(polar[o], polar[o + 1], abc, 0);
      polarToRectInto(polar[o + 2], polar[o + 3], abc, 2);
      polarToRectInto(polar[o + 4], polar[o + 5], abc, 4);
      fortescueInto(abc, seq);
      sink[0] += u2Percent(seq) + u0Percent(seq);
    }
  };

  const nsBare = bestNsPerOp(readOnly, N);
  const nsSeq = bestNsPerOp(sequenceOnly, N);
  const nsFull = bestNsPerOp(fullPath, N);
  const bytes = heapBytesPerOp(fullPath, N);
  if (sink[0] === 42) console.log('');
  return {
    name: 'Fortescue + unbalance path',
    figures: {
      'frames/s, Fortescue + u2 + u0 on rectangular buffers': 1e9 / nsSeq,
      'frames/s, incl. polar->rectangular of 3 phasors': 1e9 / nsFull,
      'target 5,000,000 frames/s met': 1e9 / nsFull >= 5e6 ? 'yes' : 'no',
      'ns per frame, full path': nsFull,
      'ratio full path / bare read of the same numbers (baseline, same run)': nsFull / nsBare,
      'heap bytes allocated per frame (target 0)': bytes,
    },
  };
}
