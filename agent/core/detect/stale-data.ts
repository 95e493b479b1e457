/**
 * Data freshness of one feeder. Raised when no valid frame has arrived for
 * `afterMs`, judged only when the caller ticks (the core reads no clock);
 * cleared by the next valid frame. A feeder that never sent anything is timed
 * from its first tick, so a configured but silent feeder is reported too.
 *
 * `now` at a tick must be on the same time base as the frame timestamps; the
 * pipeline extrapolates the newest data time by the idle wall time, so a
 * device clock that runs behind does not make live data look stale.
 *
 * Kept as a small object with two mutable fields rather than a pure step,
 * because it is touched by every frame and must not allocate there.
 */

export type FreshnessPhase = 'fresh' | 'stale';

export class FreshnessMonitor {
  private phaseNow: FreshnessPhase = 'fresh';
  /** Data time of the newest valid frame (or of the first tick before any frame), epoch ms; null before either. */
  private lastTs: number | null = null;

  constructor(private readonly afterMs: number) {}

  phase(): FreshnessPhase {
    return this.phaseNow;
  }

  lastDataTs(): number | null {
    return this.lastTs;
  }

  /** A valid frame whose data ends at `ts`. Returns true when this clears a raised stale-data condition. */
  onData(ts: number): boolean {
    if (this.lastTs === null || ts > this.lastTs) this.lastTs = ts;
    if (this.phaseNow === 'fresh') return false;
    this.phaseNow = 'fresh';
    return true;
  }

  /** A tick at `now`. Returns the age of the newest data (ms) when this raises the condition, otherwise null. */
  onTick(now: number): number | null {
    if (this.lastTs === null) {
      this.lastTs = now;
      return null;
    }
    const age = now - this.lastTs;
    if (this.phaseNow === 'fresh' && age >= this.afterMs) {
      this.phaseNow = 'stale';
      return age;
    }
    return null;
  }

  /** After a restart with stale-data still raised: stays raised, without re-announcing, until data arrives. */
  restoreStale(): void {
    this.phaseNow = 'stale';
  }
}
