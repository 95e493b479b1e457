// Shared timing helpers for the benchmarks: best-of-N runs (the two cores are
// noisy; the best run is the least disturbed) and heap growth per operation.

/** Runs fn(iterations) `repeats` times and returns the best ns per iteration. */
export function bestNsPerOp(fn, iterations, repeats = 7) {
  fn(Math.min(iterations, 10_000)); // warm-up for the JIT
  let best = Infinity;
  for (let r = 0; r < repeats; r++) {
    const t0 = process.hrtime.bigint();
    fn(iterations);
    const ns = Number(process.hrtime.bigint() - t0) / iterations;
    if (ns < best) best = ns;
  }
  return best;
}

/** Bytes of heap retained or churned per operation, measured around a long run with forced GCs. */
export function heapBytesPerOp(fn, iterations) {
  if (typeof globalThis.gc !== 'function') return Number.NaN;
  fn(10_000);
  globalThis.gc();
  const before = process.memoryUsage().heapUsed;
  fn(iterations);
  const after = process.memoryUsage().heapUsed; // no gc: counts garbage too, i.e. allocation
  return Math.max(0, after - before) / iterations;
}
