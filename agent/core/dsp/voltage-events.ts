/**
 * Dip, swell and interruption detection on Urms(1/2) (the RMS over one cycle,
 * refreshed every half cycle) for a polyphase system, following the rules of
 * IEC 61000-4-30 §5.4 (from memory: §5.4.2 dips, §5.4.3 swells, §5.4.4
 * interruptions; thresholds in percent of the declared input voltage Udin,
 * here the nominal line-to-neutral voltage):
 *  - dip: begins when Urms(1/2) of one or more channels falls below the dip
 *    threshold, ends when all channels are at or above threshold + hysteresis;
 *  - swell: begins when one or more channels rise above the swell threshold,
 *    ends when all are at or below threshold - hysteresis;
 *  - interruption: begins when all channels fall below the interruption
 *    threshold, ends when any channel is at or above threshold + hysteresis.
 * The detector is fed the Urms(1/2) values of a basic window in time order and
 * reports which events were in progress at any moment of that window; those
 * are the window's IEC 61000-4-30 §4.7 flags.
 */

/** Typical thresholds given by IEC 61000-4-30 §5.4 (from memory), fractions of Udin. */
export const DIP_THRESHOLD = 0.9;
export const SWELL_THRESHOLD = 1.1;
export const INTERRUPTION_THRESHOLD = 0.05;
/** Typical hysteresis, 2 % of Udin (IEC 61000-4-30 §5.4.2.1, from memory). */
export const EVENT_HYSTERESIS = 0.02;

export type EventState = 'normal' | 'in-event';

export class VoltageEventDetector {
  private readonly dipStart: number;
  private readonly dipEnd: number;
  private readonly swellStart: number;
  private readonly swellEnd: number;
  private readonly interruptionStart: number;
  private readonly interruptionEnd: number;
  dipState: EventState = 'normal';
  swellState: EventState = 'normal';
  interruptionState: EventState = 'normal';
  /** Whether each event was in progress at any Urms(1/2) since beginWindow(). */
  dipSeen = false;
  swellSeen = false;
  interruptionSeen = false;

  constructor(nominalVoltageLN: number) {
    this.dipStart = DIP_THRESHOLD * nominalVoltageLN;
    this.dipEnd = (DIP_THRESHOLD + EVENT_HYSTERESIS) * nominalVoltageLN;
    this.swellStart = SWELL_THRESHOLD * nominalVoltageLN;
    this.swellEnd = (SWELL_THRESHOLD - EVENT_HYSTERESIS) * nominalVoltageLN;
    this.interruptionStart = INTERRUPTION_THRESHOLD * nominalVoltageLN;
    this.interruptionEnd = (INTERRUPTION_THRESHOLD + EVENT_HYSTERESIS) * nominalVoltageLN;
  }

  /** Starts a new window: the window flags start from the states carried over. */
  beginWindow(): void {
    this.dipSeen = this.dipState === 'in-event';
    this.swellSeen = this.swellState === 'in-event';
    this.interruptionSeen = this.interruptionState === 'in-event';
  }

  /** One set of Urms(1/2) values, one per phase. */
  step(ua: number, ub: number, uc: number): void {
    const lo = Math.min(ua, ub, uc), hi = Math.max(ua, ub, uc);
    if (this.dipState === 'normal') {
      if (lo < this.dipStart) this.dipState = 'in-event';
    } else if (lo >= this.dipEnd) this.dipState = 'normal';
    if (this.swellState === 'normal') {
      if (hi > this.swellStart) this.swellState = 'in-event';
    } else if (hi <= this.swellEnd) this.swellState = 'normal';
    if (this.interruptionState === 'normal') {
      if (hi < this.interruptionStart) this.interruptionState = 'in-event';
    } else if (hi >= this.interruptionEnd) this.interruptionState = 'normal';
    if (this.dipState === 'in-event') this.dipSeen = true;
    if (this.swellState === 'in-event') this.swellSeen = true;
    if (this.interruptionState === 'in-event') this.interruptionSeen = true;
  }

  reset(): void {
    this.dipState = 'normal';
    this.swellState = 'normal';
    this.interruptionState = 'normal';
    this.dipSeen = false;
    this.swellSeen = false;
    this.interruptionSeen = false;
  }
}
