/**
 * Unbalance measures. Each function is labelled with the definition it
 * implements, because the trade uses several that give different numbers for
 * the same voltages (see docs/unbalance.md).
 */

/**
 * IEC negative-sequence unbalance factor u2 = 100·|X2|/|X1| in percent
 * (IEC TR 61000-3-13 definitions, published; IEC 61000-4-30 §5.7, clause from memory). `seq` is the
 * interleaved output of fortescueInto. NaN when |X1| is zero.
 */
export function u2Percent(seq: Float64Array): number {
  // sqrt(x²+y²) rather than Math.hypot: hypot is several times slower in V8,
  // and phasor magnitudes are nowhere near the overflow range it guards.
  const p2 = seq[2]! * seq[2]! + seq[3]! * seq[3]!;
  if (!(p2 > 0)) return Number.NaN;
  return 100 * Math.sqrt((seq[4]! * seq[4]! + seq[5]! * seq[5]!) / p2);
}

/** Zero-sequence unbalance factor u0 = 100·|X0|/|X1| in percent (IEC 61000-4-30 §5.7, from memory). NaN when |X1| is zero. */
export function u0Percent(seq: Float64Array): number {
  const p2 = seq[2]! * seq[2]! + seq[3]! * seq[3]!;
  if (!(p2 > 0)) return Number.NaN;
  return 100 * Math.sqrt((seq[0]! * seq[0]! + seq[1]! * seq[1]!) / p2);
}

/**
 * β = (Uab⁴ + Ubc⁴ + Uca⁴) / (Uab² + Ubc² + Uca²)², 1/3 ≤ β ≤ 1/2 for any
 * closed triangle (IEC 61000-4-30 §5.7.1, clause from memory; the range is
 * computed, and the formula is verified against Fortescue in the tests).
 */
export function betaFromLineMagnitudes(uab: number, ubc: number, uca: number): number {
  const a2 = uab * uab, b2 = ubc * ubc, c2 = uca * uca;
  const s = a2 + b2 + c2;
  return (a2 * a2 + b2 * b2 + c2 * c2) / (s * s);
}

/**
 * u2 in percent from the three line-to-line RMS magnitudes alone, the exact
 * formula of IEC 61000-4-30 §5.7.1 (from memory; verified exact against the
 * full Fortescue computation in test/unit/sequence): u2 = √((1 − √(3 − 6β)) / (1 + √(3 − 6β))).
 * It equals the Fortescue |V2|/|V1| for any set of three phasors that sum to
 * zero (line-to-line voltages always do; so do the currents of a three-wire
 * feeder). Returns NaN if the magnitudes cannot form a triangle (one side
 * longer than the other two together), since no real voltages give that.
 */
export function u2FromLineMagnitudesPercent(uab: number, ubc: number, uca: number): number {
  if (!(uab >= 0 && ubc >= 0 && uca >= 0)) return Number.NaN;
  const s = uab + ubc + uca;
  if (!(s > 0)) return Number.NaN;
  // Triangle inequality with a relative tolerance for measurement rounding.
  const slack = 1e-9 * s;
  if (uab > ubc + uca + slack || ubc > uab + uca + slack || uca > uab + ubc + slack) return Number.NaN;
  const beta = betaFromLineMagnitudes(uab, ubc, uca);
  // Rounding can push 3 − 6β a hair below zero for a degenerate triangle.
  const r = Math.sqrt(Math.max(0, 3 - 6 * beta));
  return 100 * Math.sqrt((1 - r) / (1 + r));
}

/**
 * Positive- and negative-sequence magnitudes of a zero-sum triple from its
 * three magnitudes: Σ|X|² = 3(|X1|² + |X2|²) when X0 = 0, and |X2| = r·|X1|.
 * Writes [|X1|, |X2|] into out. For line-to-line voltages divide by √3 to get
 * the line-to-neutral equivalents.
 */
export function sequenceMagnitudesFromZeroSumInto(m1: number, m2: number, m3: number, out: Float64Array): void {
  const r = u2FromLineMagnitudesPercent(m1, m2, m3) / 100;
  if (!Number.isFinite(r)) {
    out[0] = Number.NaN;
    out[1] = Number.NaN;
    return;
  }
  const p = Math.sqrt((m1 * m1 + m2 * m2 + m3 * m3) / (3 * (1 + r * r)));
  out[0] = p;
  out[1] = r * p;
}

/**
 * NEMA MG-1 (§14.36, clause from memory; definition published in Pillay & Manyage 2001, eq. 1) "line voltage unbalance rate", LVUR: largest deviation of
 * a line-to-line RMS magnitude from their average, in percent of the average.
 * Not the same quantity as u2 (it ignores angles).
 */
export function nemaLvurPercent(uab: number, ubc: number, uca: number): number {
  return maxDeviationFromAveragePercent(uab, ubc, uca);
}

/**
 * IEEE "phase voltage unbalance rate", PVUR: the same max-deviation rule applied
 * to the three line-to-neutral magnitudes (Pillay & Manyage, IEEE Power
 * Engineering Review, 2001, eq. 2).
 */
export function ieeePvurPercent(ua: number, ub: number, uc: number): number {
  return maxDeviationFromAveragePercent(ua, ub, uc);
}

function maxDeviationFromAveragePercent(x: number, y: number, z: number): number {
  const avg = (x + y + z) / 3;
  if (!(avg > 0)) return Number.NaN;
  const dev = Math.max(Math.abs(x - avg), Math.abs(y - avg), Math.abs(z - avg));
  return (100 * dev) / avg;
}
