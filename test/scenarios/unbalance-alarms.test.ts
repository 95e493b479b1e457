/**
 * Unbalance alarms end to end: phasor frames every 500 ms through the
 * pipeline, 3-s aggregates (clock-aligned buckets), then the limit alarms.
 * Thresholds are the defaults (agent/core/detect/settings.ts): voltage u2
 * warning 2 % (IEC 61000-2-2 compatibility level, from memory), alarm 3 %
 * (ANSI C84.1 Annex D, published, CHECKS.md §2.1), hysteresis 0.2 points
 * (above the ±0.15 % class A uncertainty of IEC 61000-4-30, from memory),
 * pickup and dropout 60 s (common practice).
 *
 * A 3-s value counts when its interval is complete: the bucket [t, t+3 s) is
 * judged at t + 3 s, so a level that starts at a bucket boundary S picks up at
 * S + 3 s + pickupMs.
 */
import { describe, expect, it } from 'vitest';
import { DEFAULT_DETECTION } from '../../agent/core/detect/settings.js';
import { balanced, voltagesWithUnbalance } from '../unit/detect/results.js';
import { FeederStream, T0, VLN } from './feeder-stream.js';

const VU = DEFAULT_DETECTION.voltageUnbalance;
const FRAME_MS = 500;
const BUCKET_MS = 3000;
const LOAD = balanced(180, -25.8);

/** Frames with voltage u2 = `u2` percent from `from` to `to`. */
function u2Segment(s: FeederStream, from: number, to: number, u2: number): number {
  const v = voltagesWithUnbalance(VLN, u2);
  return s.run(from, to, FRAME_MS, () => ({ v, i: LOAD }));
}

describe('voltage unbalance through the pipeline', () => {
  it('raises the warning 60 s after u2 settles at 2.5 %, keeps it through 1.9 % (inside hysteresis), clears 60 s after u2 falls to 1.5 %', () => {
    const s = new FeederStream();
    let t = u2Segment(s, T0, T0 + 30_000, 0.5);
    const rise = t;
    t = u2Segment(s, t, t + 90_000, 2.5);
    t = u2Segment(s, t, t + 120_000, 1.9);
    const fall = t;
    u2Segment(s, t, t + 90_000, 1.5);
    expect(s.alarmLog()).toEqual([
      ['voltage-unbalance', 'raised', 'warning', null, rise - T0 + BUCKET_MS + VU.pickupMs],
      ['voltage-unbalance', 'cleared', 'warning', null, fall - T0 + BUCKET_MS + VU.dropoutMs],
    ]);
    expect(s.alarms[0]!.value).toBeCloseTo(2.5, 6);
    expect(s.alarms[0]!.limit).toBe(VU.warning);
  });

  it('suppresses chatter: u2 alternating 2.1 % / 1.9 % every 3 s for 10 minutes never raises', () => {
    const s = new FeederStream();
    let t = T0;
    for (let k = 0; k < 200; k++) t = u2Segment(s, t, t + BUCKET_MS, k % 2 === 0 ? 2.1 : 1.9);
    expect(s.alarms).toEqual([]);
  });

  it('escalates to the alarm level when u2 passes 3 % and de-escalates to warning when it returns to 2.5 %', () => {
    const s = new FeederStream();
    let t = u2Segment(s, T0, T0 + 66_000, 2.5);
    const up = t;
    t = u2Segment(s, t, t + 66_000, 3.4);
    const down = t;
    u2Segment(s, t, t + 66_000, 2.5);
    expect(s.alarmLog()).toEqual([
      ['voltage-unbalance', 'raised', 'warning', null, BUCKET_MS + VU.pickupMs],
      ['voltage-unbalance', 'raised', 'alarm', null, up - T0 + BUCKET_MS + VU.pickupMs],
      ['voltage-unbalance', 'raised', 'warning', null, down - T0 + BUCKET_MS + VU.dropoutMs],
    ]);
  });

  it('raises zero-sequence voltage (u0 5 %: a neutral or ground problem) with its own limits, 2 % / 4 % (common practice)', () => {
    const s = new FeederStream();
    const v = voltagesWithUnbalance(VLN, 0.3, 5);
    s.run(T0, T0 + 66_000, FRAME_MS, () => ({ v, i: LOAD }));
    expect(s.alarmLog()).toEqual([['zero-sequence-voltage', 'raised', 'alarm', null, BUCKET_MS + DEFAULT_DETECTION.zeroSequenceVoltage.pickupMs]]);
  });
});
