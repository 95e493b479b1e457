/**
 * Integral of x² over a fractional span of sample positions [a, b), each
 * sample standing for the cell [n - 0.5, n + 0.5). Boundary samples count with
 * the fraction of their cell inside the span, so consecutive spans add up
 * exactly and a span of L sample periods has weight L. Used for the true RMS
 * of a basic window and for Urms(1/2), which start and end between samples
 * because they follow the actual frequency (IEC 61000-4-30 §5.2, §5.4.1).
 * The source must hold samples round(a) .. round(b).
 */
export function sumSquaresBetween(x: Float64Array, a: number, b: number): number {
  const n0 = Math.floor(a + 0.5);
  const n1 = Math.floor(b + 0.5);
  const x0 = x[n0]!;
  if (n0 === n1) return x0 * x0 * (b - a);
  let sum = x0 * x0 * (n0 + 0.5 - a);
  for (let n = n0 + 1; n < n1; n++) {
    const v = x[n]!;
    sum += v * v;
  }
  const x1 = x[n1]!;
  return sum + x1 * x1 * (b - (n1 - 0.5));
}
