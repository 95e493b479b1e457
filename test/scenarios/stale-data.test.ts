/**
 * Stale data end to end: the pipeline's tick(now) with `now` on the data
 * clock. Default afterMs 30 s (settings.ts; common practice: ten missed 3-s
 * values). The pipeline extrapolates the newest data time by the wall time
 * elapsed since the first tick after that data, so ticks are given here on
 * the same clock as the frames.
 */
import { describe, expect, it } from 'vitest';
import { DEFAULT_DETECTION } from '../../agent/core/detect/settings.js';
import { balanced } from '../unit/detect/results.js';
import { FEEDER, FeederStream, T0, VLN } from './feeder-stream.js';

const AFTER = DEFAULT_DETECTION.staleData.afterMs;
const FRAME = () => ({ v: balanced(VLN), i: balanced(150, -25.8) });

describe('stale data through the pipeline', () => {
  it('raises at the tick afterMs after the newest frame, and clears on the next frame', () => {
    const s = new FeederStream();
    const end = s.run(T0, T0 + 5000, 500, FRAME);
    const last = end - 500;
    s.tick(last);
    s.tick(last + AFTER - 1);
    expect(s.alarms).toEqual([]);
    s.tick(last + AFTER);
    s.tick(last + AFTER + 10_000);
    const back = last + AFTER + 15_000;
    s.frame(back, FRAME().v, FRAME().i);
    expect(s.alarmLog()).toEqual([
      ['stale-data', 'raised', 'alarm', null, last - T0 + AFTER],
      ['stale-data', 'cleared', 'alarm', null, back - T0],
    ]);
    expect(s.alarms[0]!.value).toBe(AFTER);
    expect(s.alarms[0]!.limit).toBe(AFTER);
    expect(s.alarms[0]!.message).toMatch(/blind/);
  });

  it('reports a configured feeder that never sends data, afterMs after the first tick', () => {
    const s = new FeederStream();
    s.tick(T0);
    s.tick(T0 + AFTER - 1);
    s.tick(T0 + AFTER);
    expect(s.alarmLog()).toEqual([['stale-data', 'raised', 'alarm', null, AFTER]]);
  });

  it('does not re-announce a stale-data alarm restored after a restart; the first frame clears it', () => {
    const s = new FeederStream();
    s.pipeline.restoreAlarms([
      { ts: T0 - 60_000, feeder: FEEDER, condition: 'stale-data', state: 'raised', level: 'alarm', value: AFTER, limit: AFTER, phase: null, message: 'before restart' },
    ]);
    s.tick(T0);
    s.tick(T0 + 5 * AFTER);
    s.frame(T0 + 5 * AFTER + 1, FRAME().v, FRAME().i);
    expect(s.alarmLog()).toEqual([['stale-data', 'cleared', 'alarm', null, 5 * AFTER + 1]]);
  });
});
