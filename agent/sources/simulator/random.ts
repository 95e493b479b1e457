/**
 * Deterministic "random" numbers as a pure function of a key (seed, feeder,
 * frame index, channel), so a frame depends only on its own time and never
 * on the order in which frames were generated.
 */

/** 32-bit integer hash (Chris Wellons' "lowbias32", public domain). */
function mix32(x: number): number {
  x ^= x >>> 16;
  x = Math.imul(x, 0x7feb352d);
  x ^= x >>> 15;
  x = Math.imul(x, 0x846ca68b);
  x ^= x >>> 16;
  return x >>> 0;
}

/** Uniform in [0, 1) from up to four integer keys. */
export function unit(seed: number, a: number, b = 0, c = 0): number {
  let h = mix32((seed >>> 0) ^ 0x9e3779b9);
  h = mix32(h ^ (a >>> 0));
  h = mix32(h ^ (Math.floor(b / 4294967296) >>> 0) ^ 0x85ebca6b);
  h = mix32(h ^ (b >>> 0));
  h = mix32(h ^ (c >>> 0));
  return h / 4294967296;
}

/** Uniform in [-1, 1). */
export function signed(seed: number, a: number, b = 0, c = 0): number {
  return 2 * unit(seed, a, b, c) - 1;
}
