/** Small order statistics for summaries. */

/**
 * Quantile by linear interpolation between closest ranks (Hyndman & Fan
 * type 7, the default of NumPy `percentile` and mathjs `quantileSeq`).
 * `sorted` must be ascending and non-empty.
 */
export function quantileSorted(sorted: ArrayLike<number>, p: number): number {
  const n = sorted.length;
  if (n === 1) return sorted[0]!;
  const h = (n - 1) * p;
  const lo = Math.floor(h);
  const hi = Math.min(n - 1, lo + 1);
  return sorted[lo]! + (h - lo) * (sorted[hi]! - sorted[lo]!);
}

export interface Summary {
  count: number;
  mean: number | null;
  max: number | null;
  p95: number | null;
}

export function summarize(values: readonly number[]): Summary {
  if (values.length === 0) return { count: 0, mean: null, max: null, p95: null };
  const sorted = Float64Array.from(values).sort();
  let sum = 0;
  for (const x of values) sum += x;
  return { count: values.length, mean: sum / values.length, max: sorted[sorted.length - 1]!, p95: quantileSorted(sorted, 0.95) };
}
