/**
 * All detection for one feeder, built once from its frozen settings:
 * - per frame/basic/cycle result: data freshness, fault recording and
 *   classification, open-phase and loss of potential;
 * - per 3-s aggregate: voltage unbalance (v.u2), zero-sequence voltage (v.u0),
 *   current unbalance (i.u2, supervised by |I1| ≥ minPositiveSequenceA);
 * - per tick: stale data.
 * Outputs are appended to the caller's arrays; nothing is sent from here.
 *
 * Time is data time: a result counts at the end of its interval
 * (ts + durationMs), so a 3-s value is judged when it is complete. The
 * disturbance start is the start (ts) of the first result above the pickup.
 */
import { AgentError } from '../errors.js';
import { AGGREGATE_WINDOWS } from '../result.js';
import type { SequenceResult, WindowName } from '../result.js';
import type { DelayState } from './delay-timer.js';
import { DELAY_NORMAL, DELAY_RAISED, isRaised, stepDelay } from './delay-timer.js';
import { FaultRecorder } from './fault-recorder.js';
import type { FaultRecord } from './fault-recorder.js';
import type { LimitAlarmState } from './limit-alarm.js';
import { LIMIT_NORMAL, publishedLevel, restoredLimitState, stepLimitAlarm } from './limit-alarm.js';
import type { LimitCondition } from './messages.js';
import {
  faultEventMessage,
  limitMessage,
  lossOfPotentialClearedMessage,
  lossOfPotentialMessage,
  openPhaseClearedMessage,
  openPhaseRaisedMessage,
  staleClearedMessage,
  staleRaisedMessage,
} from './messages.js';
import { evaluateOpenPhase, OpenPhaseFinding } from './open-phase.js';
import type { DetectionSettings, LimitSettings } from './settings.js';
import { FreshnessMonitor } from './stale-data.js';
import type { AlarmCondition, AlarmTransition, DisturbanceEvent, Phase } from './types.js';

export interface DetectionDiagnostic {
  ts: number;
  feeder: string;
  /** One of DIAGNOSTIC_KINDS. */
  kind: string;
  message: string;
}

export interface DetectionOutput {
  alarms: AlarmTransition[];
  events: DisturbanceEvent[];
  diagnostics: DetectionDiagnostic[];
}

/** Diagnostics are findings that are not one of the contract's alarm conditions. */
export const DIAGNOSTIC_KINDS = ['loss-of-potential', 'loss-of-potential-cleared'] as const;

export function createDetectionOutput(): DetectionOutput {
  return { alarms: [], events: [], diagnostics: [] };
}

const AGGREGATES: ReadonlySet<WindowName> = new Set<WindowName>(AGGREGATE_WINDOWS);

export class FeederDetector {
  private vu: LimitAlarmState = LIMIT_NORMAL;
  private u0: LimitAlarmState = LIMIT_NORMAL;
  private iu: LimitAlarmState = LIMIT_NORMAL;
  private open: DelayState = DELAY_NORMAL;
  private openPhase: Phase | null = null;
  private lop: DelayState = DELAY_NORMAL;
  /** Data time of the newest result that carried phase currents; -Infinity before the first (a number, so a step allocates nothing). */
  private lastCurrentTs = Number.NEGATIVE_INFINITY;
  private readonly fresh: FreshnessMonitor;
  private readonly faults: FaultRecorder;
  private readonly finding = new OpenPhaseFinding();
  private readonly raised = new Map<AlarmCondition, AlarmTransition>();

  constructor(
    readonly feeder: string,
    private readonly settings: DetectionSettings,
    private readonly nominal: { readonly voltageLN: number | null },
  ) {
    checkSettings(settings, nominal.voltageLN);
    this.fresh = new FreshnessMonitor(settings.staleData.afterMs);
    this.faults = new FaultRecorder(settings.fault);
  }

  /** A per-frame, per-basic-window or per-cycle result. Aggregates passed here are ignored. */
  onValue(r: SequenceResult, out: DetectionOutput): void {
    if (AGGREGATES.has(r.window)) return;
    const s = this.settings;
    const now = r.ts + r.durationMs;

    if (s.staleData.enabled && this.fresh.onData(now)) {
      this.emit(out, now, 'stale-data', 'cleared', 'alarm', null, s.staleData.afterMs, null, staleClearedMessage(this.feeder));
    }

    if (s.fault.enabled) {
      const rec = this.faults.step(r.ts, r.i);
      if (rec !== null) this.emitEvent(out, rec);
    }

    if (s.openPhase.enabled) this.openPhaseStep(r, now, out);
  }

  /** A closed aggregation interval; only '3s' values are evaluated. */
  onAggregate(r: SequenceResult, out: DetectionOutput): void {
    if (r.window !== '3s') return;
    const s = this.settings;
    const now = r.ts + r.durationMs;
    // While a loss of potential is diagnosed the voltages are a measurement fault, not the network: voltage
    // functions are blocked (state held), as relays block voltage-dependent elements on VT fuse failure (common practice).
    const v = isRaised(this.lop) ? null : r.v;
    const i = r.i;
    if (s.voltageUnbalance.enabled) this.vu = this.limitStep(out, 'voltage-unbalance', s.voltageUnbalance, this.vu, v === null ? null : v.u2, now);
    if (s.zeroSequenceVoltage.enabled) this.u0 = this.limitStep(out, 'zero-sequence-voltage', s.zeroSequenceVoltage, this.u0, v === null ? null : v.u0, now);
    if (s.currentUnbalance.enabled) {
      // Below the |I1| supervision level the ratio is dominated by single-phase load noise: not observable, state held.
      const supervised = i !== null && i.pos !== null && i.pos[0] >= s.currentUnbalance.minPositiveSequenceA;
      this.iu = this.limitStep(out, 'current-unbalance', s.currentUnbalance, this.iu, supervised ? i.u2 : null, now);
    }
  }

  /** Passage of time without data (`now` on the data time base): stale data, and closing a fault whose current has gone. */
  onTick(now: number, out: DetectionOutput): void {
    const s = this.settings;
    if (s.staleData.enabled) {
      const age = this.fresh.onTick(now);
      if (age !== null) this.emit(out, now, 'stale-data', 'raised', 'alarm', age, s.staleData.afterMs, null, staleRaisedMessage(this.feeder, age, s.staleData.afterMs));
    }
    if (s.fault.enabled) {
      const rec = this.faults.onTime(now);
      if (rec !== null) this.emitEvent(out, rec);
    }
  }

  /**
   * Restores raised alarms after a restart (from the store), so they are
   * neither lost nor published again; they clear through the normal dropout
   * when the data says so. Transitions of other feeders, cleared ones and
   * disabled conditions are ignored.
   */
  restore(active: readonly AlarmTransition[]): void {
    const s = this.settings;
    for (const t of active) {
      if (t.feeder !== this.feeder || t.state !== 'raised') continue;
      switch (t.condition) {
        case 'voltage-unbalance':
          if (!s.voltageUnbalance.enabled) continue;
          this.vu = restoredLimitState(t.level);
          break;
        case 'zero-sequence-voltage':
          if (!s.zeroSequenceVoltage.enabled) continue;
          this.u0 = restoredLimitState(t.level);
          break;
        case 'current-unbalance':
          if (!s.currentUnbalance.enabled) continue;
          this.iu = restoredLimitState(t.level);
          break;
        case 'open-phase':
          if (!s.openPhase.enabled) continue;
          this.open = DELAY_RAISED;
          this.openPhase = t.phase;
          break;
        case 'stale-data':
          if (!s.staleData.enabled) continue;
          this.fresh.restoreStale();
          break;
      }
      this.raised.set(t.condition, t);
    }
  }

  /** The raised alarms, one per condition: the transition that raised it (or last changed its level). */
  active(): AlarmTransition[] {
    return [...this.raised.values()];
  }

  private openPhaseStep(r: SequenceResult, now: number, out: DetectionOutput): void {
    const cfg = this.settings.openPhase;
    const f = this.finding;
    // A feeder that sent currents within the stale-data window measures currents: a result without them is a gap.
    const hasCurrents = r.i !== null && r.i.rms !== null;
    if (hasCurrents) this.lastCurrentTs = now;
    const currentsExpected = !hasCurrents && now - this.lastCurrentTs <= this.settings.staleData.afterMs;
    if (this.faults.active()) f.reset('fault-blocked');
    else evaluateOpenPhase(cfg, this.settings.fault.pickupA, this.nominal.voltageLN, r, f, currentsExpected);

    const verdict = f.verdict;
    if (verdict === 'unobservable' || verdict === 'fault-blocked') return; // hold: no evidence either way

    const before = this.open;
    this.open = stepDelay(before, verdict === 'open-phase', verdict !== 'open-phase', now, cfg);
    if (!isRaised(before) && isRaised(this.open)) {
      this.openPhase = f.phase;
      this.emit(out, now, 'open-phase', 'raised', 'alarm', f.value, f.limit, f.phase, openPhaseRaisedMessage(f.phase!, f.quantity!, f.value!, f.limit!, f.basis!, cfg.pickupMs));
    } else if (isRaised(before) && !isRaised(this.open)) {
      const phase = this.openPhase;
      this.openPhase = null;
      this.emit(out, now, 'open-phase', 'cleared', 'alarm', f.value, f.limit, phase, openPhaseClearedMessage(phase, cfg.dropoutMs));
    }

    // Loss of potential: a diagnostic with the same timing, never an alarm.
    const lopBefore = this.lop;
    this.lop = stepDelay(lopBefore, verdict === 'loss-of-potential', verdict !== 'loss-of-potential', now, cfg);
    if (!isRaised(lopBefore) && isRaised(this.lop)) {
      out.diagnostics.push({ ts: now, feeder: this.feeder, kind: 'loss-of-potential', message: lossOfPotentialMessage(f.phase!, f.quantity!, f.value!) });
    } else if (isRaised(lopBefore) && !isRaised(this.lop)) {
      out.diagnostics.push({ ts: now, feeder: this.feeder, kind: 'loss-of-potential-cleared', message: lossOfPotentialClearedMessage() });
    }
  }

  private limitStep(out: DetectionOutput, condition: LimitCondition, cfg: LimitSettings, s: LimitAlarmState, value: number | null, now: number): LimitAlarmState {
    const step = stepLimitAlarm(cfg, s, value, now);
    const c = step.change;
    if (c !== null) {
      const before = publishedLevel(s);
      const kind = c.state === 'cleared' ? 'cleared' : before === null ? 'raised' : c.level === 'alarm' ? 'escalated' : 'de-escalated';
      const message = limitMessage({ condition, change: kind, level: c.level, value: value!, limit: c.limit, hysteresis: cfg.hysteresis, pickupMs: cfg.pickupMs, dropoutMs: cfg.dropoutMs });
      this.emit(out, now, condition, c.state, c.level, value, c.limit, null, message);
    }
    return step.state;
  }

  private emit(out: DetectionOutput, ts: number, condition: AlarmCondition, state: AlarmTransition['state'], level: AlarmTransition['level'], value: number | null, limit: number | null, phase: Phase | null, message: string): void {
    const t: AlarmTransition = { ts, feeder: this.feeder, condition, state, level, value, limit, phase, message };
    out.alarms.push(t);
    if (state === 'raised') this.raised.set(condition, t);
    else this.raised.delete(condition);
  }

  private emitEvent(out: DetectionOutput, rec: FaultRecord): void {
    const c = rec.classification;
    out.events.push({
      ts: rec.startTs,
      feeder: this.feeder,
      type: c.type,
      durationMs: rec.durationMs,
      peakCurrent: rec.peakCurrent,
      peakPhase: rec.peakPhase,
      i0OverI1: c.i0OverI1,
      i2OverI1: c.i2OverI1,
      message: faultEventMessage(c, rec.peakCurrent, rec.peakPhase, rec.durationMs),
    });
  }
}

/** Settings the config schema should already have refused; checked again so a hand-built object fails clearly. */
function checkSettings(s: DetectionSettings, nominalVLN: number | null): void {
  const problems: string[] = [];
  const limit = (name: string, l: LimitSettings): void => {
    if (!(l.warning >= 0)) problems.push(`${name}.warning must be a number >= 0 (found ${l.warning})`);
    if (!(l.alarm >= l.warning)) problems.push(`${name}.alarm must be >= ${name}.warning (found ${l.alarm} < ${l.warning})`);
    if (!(l.hysteresis >= 0 && l.hysteresis <= l.warning)) problems.push(`${name}.hysteresis must be between 0 and ${name}.warning (found ${l.hysteresis})`);
    if (!(l.pickupMs >= 0) || !(l.dropoutMs >= 0)) problems.push(`${name}.pickupMs and ${name}.dropoutMs must be >= 0`);
  };
  limit('voltageUnbalance', s.voltageUnbalance);
  limit('zeroSequenceVoltage', s.zeroSequenceVoltage);
  limit('currentUnbalance', s.currentUnbalance);
  if (!(s.currentUnbalance.minPositiveSequenceA >= 0)) problems.push('currentUnbalance.minPositiveSequenceA must be >= 0');
  const op = s.openPhase;
  if (!(op.pickupMs >= 0) || !(op.dropoutMs >= 0)) problems.push('openPhase.pickupMs and openPhase.dropoutMs must be >= 0');
  for (const k of ['currentCollapseRatio', 'negToPosCurrentRatio', 'voltageCollapseRatio', 'negToPosVoltageRatio'] as const) {
    if (!(op[k] > 0 && op[k] <= 1)) problems.push(`openPhase.${k} must be in (0, 1] (found ${op[k]})`);
  }
  if (!(op.minLoadA >= 0)) problems.push(`openPhase.minLoadA must be >= 0 (found ${op.minLoadA})`);
  if (!(s.staleData.afterMs > 0)) problems.push(`staleData.afterMs must be > 0 (found ${s.staleData.afterMs})`);
  if (!(s.fault.pickupA > 0)) problems.push(`fault.pickupA must be > 0 (found ${s.fault.pickupA})`);
  if (!(s.fault.groundRatio > 0)) problems.push(`fault.groundRatio must be > 0 (found ${s.fault.groundRatio})`);
  if (nominalVLN !== null && !(nominalVLN > 0)) problems.push(`nominal line-to-neutral voltage must be > 0 or null (found ${nominalVLN})`);
  if (problems.length > 0) {
    throw new AgentError('CFG_INVALID', `Invalid detection settings: ${problems.join('; ')}`, { details: { problems } });
  }
}
