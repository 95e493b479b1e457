// Cost of one FeederDetector.onValue step (freshness, fault recorder, open-phase
// verdict and timers) per phasor result, against the Fortescue transform of the
// same phasors measured in the same run, and the heap allocated per step
// (target: none on a steady stream).
import { polarToRectInto } from '../dist/agent/core/complex/complex.js';
import { createDetectionOutput, FeederDetector } from '../dist/agent/core/detect/feeder-detector.js';
import { DEFAULT_DETECTION } from '../dist/agent/core/detect/settings.js';
import { fortescueInto } from '../dist/agent/core/sequence/fortescue.js';
import { quantityFromPhasors, SequenceScratch, voltageFromPhasors } from '../dist/agent/core/sequence/quantities.js';
import { u2Percent } from '../dist/agent/core/sequence/unbalance.js';
import { bestNsPerOp, heapBytesPerOp } from './_timing.mjs';

const N = 2_000_000;
const RING = 16; // power of two; a few results, as each live result is fresh in cache when detection runs
const T0 = Date.UTC(2026, 2, 2, 14, 0, 0);

export async function run() {
  const scratch = new SequenceScratch();
  const vRect = new Float64Array(RING * 6);
  const iRect = new Float64Array(RING * 6);
  const results = [];
  for (let f = 0; f < RING; f++) {
    const v = new Float64Array(6);
    const i = new Float64Array(6);
    for (let k = 0; k < 3; k++) {
      polarToRectInto(7200 * (1 + 0.01 * Math.sin(f + k)), -120 * k + 0.3 * Math.cos(f * k), v, 2 * k);
      polarToRectInto(200 * (1 + 0.05 * Math.sin(3 * f + k)), -120 * k - 25.8, i, 2 * k);
    }
    vRect.set(v, f * 6);
    iRect.set(i, f * 6);
    results.push({ ts: 0, feeder: 'FICT-SUB1-F3', window: 'frame', durationMs: 0, freq: 60, flagged: false, v: voltageFromPhasors(v, scratch), i: quantityFromPhasors(i, scratch), count: 1 });
  }

  const detector = new FeederDetector('FICT-SUB1-F3', DEFAULT_DETECTION, { voltageLN: 7200 });
  const out = createDetectionOutput();
  const seq = new Float64Array(6);
  const abc = new Float64Array(6);
  let sink = 0;
  let t = T0;

  // Baseline: the Fortescue transform and u2 of the same voltage and current phasors.
  const fortescue = (n) => {
    for (let j = 0; j < n; j++) {
      const o = (j & (RING - 1)) * 6;
      for (let k = 0; k < 6; k++) abc[k] = vRect[o + k];
      fortescueInto(abc, seq);
      sink += u2Percent(seq);
      for (let k = 0; k < 6; k++) abc[k] = iRect[o + k];
      fortescueInto(abc, seq);
      sink += u2Percent(seq);
    }
  };
  const step = (n) => {
    for (let j = 0; j < n; j++) {
      const r = results[j & (RING - 1)];
      t += 20; // 50 frames per second of data time
      r.ts = t;
      detector.onValue(r, out);
    }
    sink += out.alarms.length + out.events.length;
  };

  const nsBase = bestNsPerOp(fortescue, N);
  const nsStep = bestNsPerOp(step, N);
  const bytes = heapBytesPerOp(step, N);
  if (sink === 42) console.log('');
  if (out.alarms.length + out.events.length + out.diagnostics.length !== 0) throw new Error('a healthy stream produced detection output');
  return {
    name: 'FeederDetector.onValue step',
    figures: {
      'ns per onValue step (healthy phasor stream, V and I)': nsStep,
      'steps/s': 1e9 / nsStep,
      'ns per Fortescue + u2 of V and I (baseline, same run)': nsBase,
      'ratio onValue step / Fortescue baseline': nsStep / nsBase,
      'heap bytes allocated per step (target 0)': bytes,
    },
  };
}
