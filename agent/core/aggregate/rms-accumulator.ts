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

/** RMS aggregation of one scalar field. */
class RmsField {
  private sumSq = 0;
  private n = 0;

  add(x: number | null): void {
    if (x === null || !Number.isFinite(x)) return;
    this.sumSq += x * x;
    this.n++;
  }

  value(): number | null {
    return this.n > 0 ? Math.sqrt(this.sumSq / this.n) : null;
  }

  reset(): void {
    this.sumSq = 0;
    this.n = 0;
  }
}

/** RMS aggregation of a magnitude, last value of the angle. */
class PhasorField {
  private readonly mag = new RmsField();
  private lastAngle: number | null = null;
  private seen = false;

  add(p: PhasorOut | null): void {
    if (p === null || !Number.isFinite(p[0])) return;
    this.mag.add(p[0]);
    this.lastAngle = p[1];
    this.seen = true;
  }

  value(): PhasorOut | null {
    return this.seen ? [this.mag.value()!, this.lastAngle] : null;
  }

  reset(): void {
    this.mag.reset();
    this.lastAngle = null;
    this.seen = false;
  }
}

class TripleField {
  private readonly x = new RmsField();
  private readonly y = new RmsField();
  private readonly z = new RmsField();
  private seen = false;

  add(a: number, b: number, c: number): void {
    this.x.add(a);
    this.y.add(b);
    this.z.add(c);
    this.seen = true;
  }

  /** [x, y, z] aggregated, or null when no triple was added or a member never had a finite value. */
  values(): [number, number, number] | null {
    if (!this.seen) return null;
    const a = this.x.value(), b = this.y.value(), c = this.z.value();
    return a === null || b === null || c === null ? null : [a, b, c];
  }

  reset(): void {
    this.x.reset();
    this.y.reset();
    this.z.reset();
    this.seen = false;
  }
}

class QuantityAccumulator {
  protected present = false;
  private readonly zero = new PhasorField();
  private readonly pos = new PhasorField();
  private readonly neg = new PhasorField();
  private readonly u2 = new RmsField();
  private readonly u0 = new RmsField();
  private readonly rms = new TripleField();
  private readonly thd = new TripleField();

  addQuantity(q: QuantityResult | null): void {
    if (q === null) return;
    this.present = true;
    this.zero.add(q.zero);
    this.pos.add(q.pos);
    this.neg.add(q.neg);
    this.u2.add(q.u2);
    this.u0.add(q.u0);
    if (q.rms !== null) this.rms.add(q.rms.a, q.rms.b, q.rms.c);
    if (q.thd !== null) this.thd.add(q.thd.a, q.thd.b, q.thd.c);
  }

  quantity(): QuantityResult | null {
    if (!this.present) return null;
    const rms = this.rms.values(), thd = this.thd.values();
    return {
      zero: this.zero.value(),
      pos: this.pos.value(),
      neg: this.neg.value(),
      u2: this.u2.value(),
      u0: this.u0.value(),
      rms: rms === null ? null : { a: rms[0], b: rms[1], c: rms[2] },
      thd: thd === null ? null : { a: thd[0], b: thd[1], c: thd[2] },
    };
  }

  resetQuantity(): void {
    this.present = false;
    this.zero.reset();
    this.pos.reset();
    this.neg.reset();
    this.u2.reset();
    this.u0.reset();
    this.rms.reset();
    this.thd.reset();
  }
}

class VoltageAccumulator extends QuantityAccumulator {
  private readonly rmsLL = new TripleField();
  private readonly lvur = new RmsField();
  private readonly pvur = new RmsField();

  add(v: VoltageResult | null): void {
    if (v === null) return;
    this.addQuantity(v);
    if (v.rmsLL !== null) this.rmsLL.add(v.rmsLL.ab, v.rmsLL.bc, v.rmsLL.ca);
    this.lvur.add(v.lvur);
    this.pvur.add(v.pvur);
  }

  voltage(): VoltageResult | null {
    const q = this.quantity();
    if (q === null) return null;
    const ll = this.rmsLL.values();
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
      lvur: this.lvur.value(),
      pvur: this.pvur.value(),
    };
  }

  reset(): void {
    this.resetQuantity();
    this.rmsLL.reset();
    this.lvur.reset();
    this.pvur.reset();
  }
}

/** Accumulates SequenceResults of one interval. */
export class RmsAccumulator {
  private readonly v = new VoltageAccumulator();
  private readonly i = new QuantityAccumulator();
  private freqSum = 0;
  private freqN = 0;
  /** Values added since the last reset. */
  count = 0;
  /** Any added value was flagged (IEC 61000-4-30 §4.7). */
  flagged = false;

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
