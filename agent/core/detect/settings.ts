/**
 * Detection settings per feeder, with defaults and where each default comes
 * from. The configuration file may override any field (config/schema); the
 * loader deep-merges the file over these defaults and freezes the result.
 */

/** A limit evaluated with pickup/dropout delays and hysteresis, so a value hovering at the limit does not chatter. */
export interface LimitSettings {
  readonly enabled: boolean;
  /** Warning level, percent. */
  readonly warning: number;
  /** Alarm level, percent (>= warning). */
  readonly alarm: number;
  /** A raised level clears only below (limit - hysteresis), percentage points. */
  readonly hysteresis: number;
  /** The value must stay above the limit this long before the level is raised, ms. */
  readonly pickupMs: number;
  /** The value must stay below limit - hysteresis this long before the level clears, ms. */
  readonly dropoutMs: number;
}

export interface CurrentUnbalanceSettings extends LimitSettings {
  /** No evaluation while |I1| is below this, A: a lightly loaded feeder's I2/I1 is dominated by single-phase noise. */
  readonly minPositiveSequenceA: number;
}

export interface OpenPhaseSettings {
  readonly enabled: boolean;
  /** The condition must persist this long before raising, ms (target: within 2 s of the condition in the data). */
  readonly pickupMs: number;
  readonly dropoutMs: number;
  /** A phase current below this fraction of the mean of the other two counts as collapsed. */
  readonly currentCollapseRatio: number;
  /** The other two phase currents must each exceed this, A (the feeder must be carrying load). */
  readonly minLoadA: number;
  /** |I2|/|I1| at or above this supports an open phase of a three-wire (delta or ungrounded) load. */
  readonly negToPosCurrentRatio: number;
  /** A phase voltage below this fraction of nominal counts as collapsed. */
  readonly voltageCollapseRatio: number;
  /** |V2|/|V1| at or above this, with a collapsed phase voltage, supports an open phase seen on voltages. */
  readonly negToPosVoltageRatio: number;
}

export interface StaleDataSettings {
  readonly enabled: boolean;
  /** Raised when no valid frame arrived for this long, ms. */
  readonly afterMs: number;
}

export interface FaultSettings {
  readonly enabled: boolean;
  /** Any phase current above this is fault level, A. Blocks open-phase and starts disturbance classification. */
  readonly pickupA: number;
  /** |I0|/|I1| above this means the fault involves ground. */
  readonly groundRatio: number;
}

export interface DetectionSettings {
  readonly voltageUnbalance: LimitSettings;
  readonly zeroSequenceVoltage: LimitSettings;
  readonly currentUnbalance: CurrentUnbalanceSettings;
  readonly openPhase: OpenPhaseSettings;
  readonly staleData: StaleDataSettings;
  readonly fault: FaultSettings;
}

export const DEFAULT_DETECTION: DetectionSettings = Object.freeze({
  voltageUnbalance: Object.freeze({
    enabled: true,
    // 2 %: compatibility level of IEC 61000-2-2 (LV) and IEC 61000-2-12 (MV), and the EN 50160 weekly 95 % limit (from memory).
    warning: 2,
    // 3 %: ANSI C84.1 Annex D recommends supply systems be limited to 3 % (published, quoted in shared/CHECKS.md §2.1).
    alarm: 3,
    // 0.2 points: above the ±0.15 point class A uncertainty (IEC 61000-4-30, from memory), so noise alone cannot clear it.
    hysteresis: 0.2,
    // Sixty seconds of 3-s values: unbalance matters when sustained (motor heating), not per cycle (common practice).
    pickupMs: 60_000,
    dropoutMs: 60_000,
  }),
  zeroSequenceVoltage: Object.freeze({
    enabled: true,
    // No standard limit exists for u0 (EN 50160 sets none, from memory); 2 %/4 % flag a ground or neutral problem (common practice).
    warning: 2,
    alarm: 4,
    hysteresis: 0.2,
    pickupMs: 60_000,
    dropoutMs: 60_000,
  }),
  currentUnbalance: Object.freeze({
    enabled: true,
    // Current unbalance of 10–30 % is ordinary on distribution feeders (IEEE 1159 typical range 1–30 %, from memory);
    // warning 15 %, alarm 25 % point at load to move (common practice).
    warning: 15,
    alarm: 25,
    hysteresis: 1,
    pickupMs: 300_000,
    dropoutMs: 300_000,
    minPositiveSequenceA: 10,
  }),
  openPhase: Object.freeze({
    enabled: true,
    // 1 s: long enough to ride through a fault's clearing and a phasor estimator's transient, short enough to raise
    // within 2 s of the condition (the target); 5 s dropout so a reclosing sequence does not clear and re-raise (common practice).
    pickupMs: 1_000,
    dropoutMs: 5_000,
    // A blown fuse leaves at most a few percent of load current (capacitive or backfed): 10 % is clear of that (common practice).
    currentCollapseRatio: 0.1,
    // 5 A: below it a phase current near zero is ordinary on a feeder (a few single-phase loads); the relay practice of
    // supervising I2/I1 with a minimum I1 of about 0.1 In (CHECKS.md §7, common practice) scaled to feeder CTs.
    minLoadA: 5,
    // Open phase of a three-wire load gives |I2|/|I1| = 1 exactly (Glover, Sarma & Overbye, Example 8.2);
    // a grounded-wye load gives 0.5 (shared/CHECKS.md §7, published worked example "Examples" Ex. 2 (scribd 906678531)). 0.4 catches both.
    negToPosCurrentRatio: 0.4,
    // Below 60 % of nominal the phase is not merely sagging (common practice; dips are 10–90 % per IEC 61000-4-30).
    voltageCollapseRatio: 0.6,
    negToPosVoltageRatio: 0.2,
  }),
  // 30 s: ten missed 3-s values (IEC 61000-4-30 150/180-cycle interval), long enough for a broker reconnect (common practice).
  staleData: Object.freeze({ enabled: true, afterMs: 30_000 }),
  fault: Object.freeze({
    enabled: true,
    // Fault level must be set per feeder from the protection study; 2000 A is a placeholder well above distribution load.
    pickupA: 2_000,
    // |I0|/|I1| above 0.1 marks ground involvement; ungrounded phase-to-phase faults give ~0 (common practice).
    groundRatio: 0.1,
  }),
});
