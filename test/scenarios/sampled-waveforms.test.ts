/**
 * Detection on basic windows of sampled waveforms (IEC 61000-4-30 basic
 * interval: 12 cycles at 60 Hz, 200 ms; from memory, CHECKS.md §3): samples
 * frames through the pipeline's estimator, then the open-phase detector.
 * A basic window counts at its end (ts + durationMs), so an open phase that
 * starts on a window boundary is first seen complete 200 ms later and raised
 * openPhase.pickupMs (1 s, settings.ts) after that.
 */
import { describe, expect, it } from 'vitest';
import { DEFAULT_DETECTION } from '../../agent/core/detect/settings.js';
import type { PolarSet } from '../unit/detect/results.js';
import { balanced } from '../unit/detect/results.js';
import { FeederStream, T0, VLN } from './feeder-stream.js';

const RATE = 7680; // 128 samples per cycle at 60 Hz
const BLOCK = 1536; // 12 cycles: one basic window per block
const BLOCK_MS = (1000 * BLOCK) / RATE;
const HZ = 60;
const OP = DEFAULT_DETECTION.openPhase;

/** Instantaneous values of a phasor set (RMS magnitudes) for one block starting `startMs` after T0, on a continuous 60 Hz clock. */
function waves(set: PolarSet, startMs: number): [number[], number[], number[]] {
  const ph = [set.a, set.b, set.c];
  return ph.map(([mag, deg]) => {
    const out = new Array<number>(BLOCK);
    for (let n = 0; n < BLOCK; n++) {
      const t = startMs / 1000 + n / RATE;
      out[n] = Math.SQRT2 * mag * Math.cos(2 * Math.PI * HZ * t + (deg * Math.PI) / 180);
    }
    return out;
  }) as [number[], number[], number[]];
}

describe('sampled waveforms through the pipeline', () => {
  it('raises open-phase c from basic windows one window plus pickupMs after the phase opens', () => {
    const s = new FeederStream();
    const v = balanced(VLN);
    const load = balanced(200, -25.8);
    const open: PolarSet = { ...load, c: [0, 0] };
    const blocks = 20;
    const openBlock = 8;
    for (let k = 0; k < blocks; k++) {
      const start = k * BLOCK_MS;
      s.samplesFrame(T0 + start, RATE, waves(v, start), waves(k >= openBlock ? open : load, start));
    }
    expect(s.alarms.map((a) => [a.condition, a.state, a.phase])).toEqual([['open-phase', 'raised', 'c']]);
    const expected = openBlock * BLOCK_MS + BLOCK_MS + OP.pickupMs;
    // Window edges follow the estimator's own alignment and the tracked frequency, not the block edges: within a few
    // samples of them at a steady 60 Hz (one sample is 0.13 ms), far below the 200 ms window.
    expect(Math.abs(s.alarms[0]!.ts - T0 - expected)).toBeLessThan(1);
    expect(s.alarms[0]!.value).toBeCloseTo(0.5, 3);
  });
});
