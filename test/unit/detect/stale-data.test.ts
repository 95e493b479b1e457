/**
 * Data freshness, default afterMs 30 s (agent/core/detect/settings.ts;
 * common practice: ten missed 3-s intervals).
 */
import { describe, expect, it } from 'vitest';
import { DEFAULT_DETECTION } from '../../../agent/core/detect/settings.js';
import { FreshnessMonitor } from '../../../agent/core/detect/stale-data.js';

const AFTER = DEFAULT_DETECTION.staleData.afterMs;
const T0 = Date.UTC(2026, 2, 2, 14, 0, 0);

describe('FreshnessMonitor', () => {
  it('raises at the first tick at or after afterMs since the newest frame, reporting the age', () => {
    const m = new FreshnessMonitor(AFTER);
    m.onData(T0);
    expect(m.onTick(T0 + AFTER - 1)).toBeNull();
    expect(m.onTick(T0 + AFTER)).toBe(AFTER);
    expect(m.phase()).toBe('stale');
  });

  it('raises only once while the data stays away', () => {
    const m = new FreshnessMonitor(AFTER);
    m.onData(T0);
    m.onTick(T0 + AFTER);
    expect(m.onTick(T0 + 2 * AFTER)).toBeNull();
  });

  it('clears on the next valid frame', () => {
    const m = new FreshnessMonitor(AFTER);
    m.onData(T0);
    m.onTick(T0 + AFTER);
    expect(m.onData(T0 + AFTER + 500)).toBe(true);
    expect(m.phase()).toBe('fresh');
    expect(m.onData(T0 + AFTER + 600)).toBe(false);
  });

  it('times a feeder that never sent data from its first tick', () => {
    const m = new FreshnessMonitor(AFTER);
    expect(m.onTick(T0)).toBeNull();
    expect(m.onTick(T0 + AFTER - 1)).toBeNull();
    expect(m.onTick(T0 + AFTER)).toBe(AFTER);
  });

  it('keeps the newest data time when an older frame (another frame kind) arrives later', () => {
    const m = new FreshnessMonitor(AFTER);
    m.onData(T0 + 1000);
    m.onData(T0);
    expect(m.onTick(T0 + AFTER)).toBeNull();
    expect(m.onTick(T0 + 1000 + AFTER)).toBe(AFTER);
  });

  it('stays raised after a restore until data arrives, without raising again', () => {
    const m = new FreshnessMonitor(AFTER);
    m.restoreStale();
    expect(m.onTick(T0)).toBeNull();
    expect(m.onTick(T0 + 5 * AFTER)).toBeNull();
    expect(m.onData(T0 + 5 * AFTER)).toBe(true);
  });
});
