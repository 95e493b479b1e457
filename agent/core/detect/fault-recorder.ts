/**
 * Follows one fault from its start to its end and produces the disturbance
 * record: start time, duration, peak current and phase, the classification at
 * the peak (the most developed state of the fault; an evolving fault is
 * reported as what it became), and the sequence ratios there.
 *
 * States: 'idle' → 'in-fault' (some phase current above pickupA) → 'ending'
 * (every phase below RESET_RATIO × pickupA) → 'idle' once that has lasted
 * FAULT_DROPOUT_MS; a return above the pickup while 'ending' continues the
 * same disturbance (a fault that re-strikes within the dropout is one event).
 * The event's duration runs from the first result above the pickup to the
 * first one below the reset level, so it is as fine as the data's time step.
 *
 * A small object with mutable fields: it is consulted on every frame and
 * must not allocate there.
 */
import type { QuantityResult } from '../result.js';
import type { FaultClassification } from './fault-classifier.js';
import { classifyFault } from './fault-classifier.js';
import type { FaultSettings } from './settings.js';
import type { Phase } from './types.js';

/**
 * Reset (dropout) level as a fraction of the pickup: overcurrent elements reset
 * at ≥ 95 % of the setting (IEC 60255-151 reset ratio, from memory), so a
 * current hovering at the pickup does not open and close disturbances.
 */
export const RESET_RATIO = 0.95;

/**
 * The current must stay below the reset level this long before the
 * disturbance is closed: three cycles at 60 Hz (2.5 at 50 Hz), long enough to
 * ride through the current zero of an arcing fault, far shorter than a
 * reclosing dead time (0.3 s and up), so each reclose onto a fault is its own
 * event (common practice).
 */
export const FAULT_DROPOUT_MS = 50;

export type FaultPhase = 'idle' | 'in-fault' | 'ending';

export interface FaultRecord {
  readonly startTs: number;
  readonly durationMs: number;
  readonly peakCurrent: number;
  readonly peakPhase: Phase;
  readonly classification: FaultClassification;
}

export class FaultRecorder {
  private phaseNow: FaultPhase = 'idle';
  private startTs = 0;
  private endTs = 0;
  private peak = 0;
  private peakPhase: Phase = 'a';
  private classification: FaultClassification | null = null;

  constructor(private readonly cfg: FaultSettings) {}

  phase(): FaultPhase {
    return this.phaseNow;
  }

  /** True while a fault is in progress or ending (fault-level blocking of other functions follows this). */
  active(): boolean {
    return this.phaseNow !== 'idle';
  }

  /**
   * One result with its start time `ts` and currents `i`. Returns the finished
   * record when this step closes a disturbance, otherwise null.
   */
  step(ts: number, i: QuantityResult | null): FaultRecord | null {
    const rms = i === null ? null : i.rms;
    if (rms === null) return null; // no current, nothing to judge: the state holds
    const max = Math.max(rms.a, rms.b, rms.c);
    const above = max > this.cfg.pickupA;
    switch (this.phaseNow) {
      case 'idle':
        if (!above) return null;
        this.phaseNow = 'in-fault';
        this.startTs = ts;
        this.peak = 0;
        this.classification = null;
        this.track(max, rms.a, rms.b, i!);
        return null;
      case 'in-fault':
        if (above || max >= RESET_RATIO * this.cfg.pickupA) {
          if (above) this.track(max, rms.a, rms.b, i!);
          return null;
        }
        this.phaseNow = 'ending';
        this.endTs = ts;
        return null;
      case 'ending':
        if (max >= RESET_RATIO * this.cfg.pickupA) {
          this.phaseNow = 'in-fault';
          if (above) this.track(max, rms.a, rms.b, i!);
          return null;
        }
        return this.closeIfDue(ts);
    }
  }

  /** Data time passing without results (a tick): closes an ending disturbance whose dropout has run out. */
  onTime(now: number): FaultRecord | null {
    return this.phaseNow === 'ending' ? this.closeIfDue(now) : null;
  }

  private closeIfDue(now: number): FaultRecord | null {
    if (now - this.endTs < FAULT_DROPOUT_MS) return null;
    this.phaseNow = 'idle';
    return {
      startTs: this.startTs,
      durationMs: this.endTs - this.startTs,
      peakCurrent: this.peak,
      peakPhase: this.peakPhase,
      classification: this.classification!,
    };
  }

  private track(max: number, a: number, b: number, i: QuantityResult): void {
    if (max <= this.peak) return;
    this.peak = max;
    this.peakPhase = max === a ? 'a' : max === b ? 'b' : 'c';
    this.classification = classifyFault(i, this.cfg);
  }
}
