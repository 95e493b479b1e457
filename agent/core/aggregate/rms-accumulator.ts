/**
 * Combines SequenceResults into one aggregate value, field by field, by the
 * IEC 61000-4-30 §4.5 aggregation rule: the square root of the arithmetic
 * mean of the squared input values ("RMS aggregation"). Applied to every
 * magnitude: sequence-component magnitudes, u2, u0, per-phase and
 * line-to-line RMS, THD, LVUR and PVUR. Exceptions:
 *  - frequency: arithmetic mean of the values (IEC 61000-4-30 §5.1 defines
 *    frequency as cycles over time, a mean; squares have no meaning there);
 *  - sequence-component angles: those of the last value. Off nominal
 *    frequency a phasor rotates at 360°·Δf per second relative to any fixed
 *    reference (108° over 3 s at 50.1 Hz), so a mean of angles over an
 *    interval is meaningless, while the last angle is a true snapshot.
 * A null input field is skipped; a field null in every input stays null.
 */
import type { PhasorOut, QuantityResult, SequenceResult, VoltageResult } from '../result.js';

// Slots of one quantity's running sums, kept in flat typed arrays: an interval's
// accumulator is two small arrays instead of dozens of small objects, which keeps
// the per-frame path compact in cache across hundreds of feeders.
const ZERO = 0, POS = 1, NEG = 2, U2 = 3, U0 = 4, RMS = 5, THD = 8, RMS_LL = 11, LVUR = 14, PVUR = 15;
const QUANTITY_SLOTS = 11;
const VOLTAGE_SLOTS = 16;

/** RMS aggregation of a set of scalar slots; sequence angles keep the last value. */
class QuantityAccumulator {
  private present = false;
  private readonly sumSq: Float64Array;
  private readonly n: Uint32Array;
  /** Last angle of zero, pos, neg; NaN stands for "no angle" (magnitude-only input). */
  private readonly angle = new Float64Array(3);

  constructor(slots: number) {
    this.sumSq = new Float64Array(slots);
    this.n = new Uint32Array(slots);
  }

  protected put(slot: number, x: number | null): void {
    if (x === null || !Number.isFinite(x)) return;
    this.sumSq[slot]! += x * x;
    this.n[slot]!++;
  }

  private phasor(k: number, p: PhasorOut | null): void {
    if (p === null || !Number.isFinite(p[0])) return;
    this.put(k, p[0]);
    this.angle[k] = p[1] === null ? Number.NaN : p[1];
  }

  addQuantity(q: QuantityResult | null): void {
    if (q === null) return;
    this.present = true;
    this.phasor(ZERO, q.zero);
    this.phasor(POS, q.pos);
    this.phasor(NEG, q.neg);
    this.put(U2, q.u2);
    this.put(U0, q.u0);
    if (q.rms !== null) {
      this.put(RMS, q.rms.a);
      this.put(RMS + 1, q.rms.b);
      this.put(RMS + 2, q.rms.c);
    }
    if (q.thd !== null) {
      this.put(THD, q.thd.a);
      this.put(THD + 1, q.thd.b);
      this.put(THD + 2, q.thd.c);
    }
  }

  protected value(slot: number): number | null {
    const n = this.n[slot]!;
    return n > 0 ? Math.sqrt(this.sumSq[slot]! / n) : null;
  }

  private phasorValue(k: number): PhasorOut | null {
    const m = this.value(k);
    if (m === null) return null;
    const a = this.angle[k]!;
    return [m, Number.isNaN(a) ? null : a];
  }

  /** [a, b, c] aggregated, or null when a member never had a finite value. */
  protected triple(slot: number): [number, number, number] | null {
    const a = this.value(slot), b = this.value(slot + 1), c = this.value(slot + 2);
    return a === null || b === null || c === null ? null : [a, b, c];
  }

  quantity(): QuantityResult | null {
    if (!this.present) return null;
    const rms = this.triple(RMS), thd = this.triple(THD);
    return {
      zero: this.phasorValue(ZERO),
      pos: this.phasorValue(POS),
      neg: this.phasorValue(NEG),
      u2: this.value(U2),
      u0: this.value(U0),
      rms: rms === null ? null : { a: rms[0], b: rms[1], c: rms[2] },
      thd: thd === null ? null : { a: thd[0], b: thd[1], c: thd[2] },
    };
  }

  /** Adds everything `o` accumulated, as if its values had been added here (sums and counts add exactly). */
  mergeQuantity(o: QuantityAccumulator): void {
    if (!o.present) return;
    this.present = true;
    for (let k = 0; k < this.sumSq.length; k++) {
      this.sumSq[k]! += o.sumSq[k]!;
      this.n[k]! += o.n[k]!;
    }
    // `o` holds later values: its angles are the newer ones.
    for (let k = 0; k < 3; k++) if (o.n[k]! > 0) this.angle[k] = o.angle[k]!;
  }

  resetQuantity(): void {
    this.present = false;
    this.sumSq.fill(0);
    this.n.fill(0);
    this.angle.fill(Number.NaN);
  }
}

class VoltageAccumulator extends QuantityAccumulator {
  constructor() {
    super(VOLTAGE_SLOTS);
  }

  add(v: VoltageResult | null): void {
    if (v === null) return;
    this.addQuantity(v);
    if (v.rmsLL !== null) {
      this.put(RMS_LL, v.rmsLL.ab);
      this.put(RMS_LL + 1, v.rmsLL.bc);
      this.put(RMS_LL + 2, v.rmsLL.ca);
    }
    this.put(LVUR, v.lvur);
    this.put(PVUR, v.pvur);
  }

  voltage(): VoltageResult | null {
    const q = this.quantity();
    if (q === null) return null;
    const ll = this.triple(RMS_LL);
    // An explicit literal rather than a spread of q: one stable object shape (spreads are slow in V8's hot paths).
    return {
      zero: q.zero,
      pos: q.pos,
      neg: q.neg,
      u2: q.u2,
      u0: q.u0,
      rms: q.rms,
      thd: q.thd,
      rmsLL: ll === null ? null : { ab: ll[0], bc: ll[1], ca: ll[2] },
      lvur: this.value(LVUR),
      pvur: this.value(PVUR),
    };
  }

  reset(): void {
    this.resetQuantity();
  }
}

/** Accumulates SequenceResults of one interval. */
export class RmsAccumulator {
  private readonly v = new VoltageAccumulator();
  private readonly i = new QuantityAccumulator(QUANTITY_SLOTS);
  private freqSum = 0;
  private freqN = 0;
  /** Values added since the last reset. */
  count = 0;
  /** Any added value was flagged (IEC 61000-4-30 §4.7). */
  flagged = false;

  /** Adds an interval's accumulated values (which follow everything added here so far). */
  merge(o: RmsAccumulator): void {
    this.v.mergeQuantity(o.v);
    this.i.mergeQuantity(o.i);
    this.freqSum += o.freqSum;
    this.freqN += o.freqN;
    this.count += o.count;
    if (o.flagged) this.flagged = true;
  }

  add(r: SequenceResult): void {
    this.v.add(r.v);
    this.i.addQuantity(r.i);
    if (r.freq !== null && Number.isFinite(r.freq)) {
      this.freqSum += r.freq;
      this.freqN++;
    }
    this.count++;
    if (r.flagged) this.flagged = true;
  }

  /** The aggregate record; every field present (null where no input had it). */
  build(feeder: string, window: SequenceResult['window'], ts: number, durationMs: number, flagged: boolean): SequenceResult {
    return {
      ts,
      feeder,
      window,
      durationMs,
      freq: this.freqN > 0 ? this.freqSum / this.freqN : null,
      flagged: this.flagged || flagged,
      v: this.v.voltage(),
      i: this.i.quantity(),
      count: this.count,
    };
  }

  reset(): void {
    this.v.reset();
    this.i.resetQuantity();
    this.freqSum = 0;
    this.freqN = 0;
    this.count = 0;
    this.flagged = false;
  }
}
