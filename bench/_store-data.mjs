// Shared by the store benchmarks: invented results (fictional feeders) with
// every field present, the shape the pipeline's 3-s/10-min aggregates have.
export const DAY = 86_400_000;

export function result(feeder, window, ts, k) {
  const s = (k % 97) * 0.001;
  return {
    ts,
    feeder,
    window,
    durationMs: window === '3s' ? 3000 : window === '10min' ? 600_000 : 7_200_000,
    freq: 59.98 + s,
    flagged: k % 50 === 0,
    v: {
      zero: [12.1 + s, 33.0],
      pos: [7190.4 + s, 0.1],
      neg: [94.2 + s, -71.4],
      u2: 1.31 + s,
      u0: 0.17,
      rms: { a: 7212.4 + s, b: 7190.1, c: 7168.8 },
      thd: { a: 1.5, b: 2.25, c: 3.125 },
      rmsLL: { ab: 12470.2 + s, bc: 12391, ca: 12440.7 },
      lvur: 0.37 + s,
      pvur: 0.3,
    },
    i: {
      zero: [3.1, 10.2],
      pos: [205.1 + s, -25],
      neg: [7.9, 160.3],
      u2: 3.85 + s,
      u0: 1.51,
      rms: { a: 212, b: 205.3, c: 198.6 + s },
      thd: { a: 4.5, b: 3.2, c: 2.9 },
    },
    count: 15,
  };
}

/** `count` consecutive results of one feeder and window from `from`. */
export function series(feeder, window, from, count) {
  const step = window === '3s' ? 3000 : window === '10min' ? 600_000 : 7_200_000;
  const out = new Array(count);
  for (let k = 0; k < count; k++) out[k] = result(feeder, window, from + k * step, k);
  return out;
}

export function chunks(list, size) {
  const out = [];
  for (let k = 0; k < list.length; k += size) out.push(list.slice(k, k + size));
  return out;
}

/** Median of `runs` timings of an async fn, ms. */
export async function medianMs(fn, runs) {
  const t = [];
  for (let r = 0; r < runs; r++) {
    const t0 = performance.now();
    await fn();
    t.push(performance.now() - t0);
  }
  t.sort((a, b) => a - b);
  return t[Math.floor(t.length / 2)];
}
