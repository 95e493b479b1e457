/**
 * Feeders metered with magnitudes only (rms frames: line-to-line voltages and
 * phase-current magnitudes, no angles, no I0). Current u2 then follows from
 * the three magnitudes under the zero-sum assumption (IEC 61000-4-30 §5.7.1
 * β formula, exact for a three-wire feeder); fault types from which phases
 * exceed the pickup. Defaults from agent/core/detect/settings.ts.
 */
import { describe, expect, it } from 'vitest';
import { DEFAULT_DETECTION } from '../../agent/core/detect/settings.js';
import { FeederStream, T0, VLN } from './feeder-stream.js';

const OP = DEFAULT_DETECTION.openPhase;
const VLL = VLN * Math.sqrt(3);
const BUS = { ab: VLL, bc: VLL, ca: VLL };

describe('rms meter frames through the pipeline', () => {
  it('raises open-phase b from current magnitudes 200 / 0 / 200 A of a three-wire feeder (degenerate triangle: |I2|/|I1| = 1, CHECKS.md §1.9 β = 1/2)', () => {
    const s = new FeederStream(DEFAULT_DETECTION, VLN, true);
    let t = T0;
    for (; t < T0 + 2000; t += 100) s.rmsFrame(t, BUS, { a: 200, b: 200, c: 200 });
    const open = t;
    for (; t < open + 2000; t += 100) s.rmsFrame(t, BUS, { a: 200, b: 0, c: 200 });
    expect(s.alarmLog()).toEqual([['open-phase', 'raised', 'alarm', 'b', open - T0 + OP.pickupMs]]);
    expect(s.alarms[0]!.value).toBeCloseTo(1, 6);
  });

  it('records a fault seen on magnitudes only and classifies it by the phases above pickup, saying how', () => {
    const s = new FeederStream();
    let t = T0;
    for (; t < T0 + 200; t += 20) s.rmsFrame(t, BUS, { a: 250, b: 250, c: 250 });
    const start = t;
    for (; t < start + 100; t += 20) s.rmsFrame(t, { ab: 0.6 * VLL, bc: 0.3 * VLL, ca: 0.9 * VLL }, { a: 300, b: 4200, c: 4100 });
    const end = t;
    for (; t < end + 200; t += 20) s.rmsFrame(t, BUS, { a: 250, b: 250, c: 250 });
    expect(s.events.map((e) => [e.type, e.ts - T0, e.durationMs, e.peakPhase])).toEqual([['BC', start - T0, end - start, 'b']]);
    expect(s.events[0]!.i0OverI1).toBeNull();
    expect(s.events[0]!.message).toMatch(/magnitudes only/);
  });
});
