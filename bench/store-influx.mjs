// InfluxDB trend store: points per second written through InfluxStore
// (checks, line-protocol encoding, batching, one POST per retention policy)
// against raw line-protocol POSTs of the same points via fetch in the same
// run (ratio target >= 0.7), and the time to answer a week of 10-min data
// (1008 points) and a day of 3-s data (28,800 points). Starts its own influxd
// on loopback; without /usr/bin/influxd the figures are skipped with a note.
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { InfluxStore } from '../dist/agent/stores/influx/influx-store.js';
import { sequenceLine } from '../dist/agent/stores/influx/line-protocol.js';
import { influxdInstalled, INFLUXD_PATH, startInfluxd } from '../test/helpers/influxd-process.mjs';
import { DAY, chunks, medianMs, series } from './_store-data.mjs';

const BATCH = 5000;
const REPEATS = 3;

async function post(url, path, body) {
  const res = await fetch(`${url}${path}`, { method: 'POST', body });
  const text = await res.text();
  if (res.status !== 204 && res.status !== 200) throw new Error(`InfluxDB answered ${res.status}: ${text}`);
}

export async function run() {
  if (!influxdInstalled()) {
    return {
      name: 'InfluxDB trend store',
      figures: { note: `skipped: ${INFLUXD_PATH} is not installed (apt-get install -y influxdb influxdb-client)` },
    };
  }
  const dir = mkdtempSync(join(tmpdir(), 'seqmon-bench-influx-'));
  const server = await startInfluxd();
  try {
    // Recent times: InfluxDB drops points older than their retention policy (3-s: 35 days).
    const base = Math.floor((Date.now() - 2 * DAY) / DAY) * DAY;
    // 2 fictional feeders x one day of 3-s results = 57,600 points.
    const results = ['BF1', 'BF2'].flatMap((f) => series(f, '3s', base, 28_800));
    const batches = chunks(results, BATCH);
    // The baseline's bodies are encoded before timing: it measures the server and the HTTP round trips alone.
    const bodies = batches.map((b) => b.map((r) => sequenceLine(r)).join('\n'));
    let n = 0;

    const raw = async () => {
      const db = `bench_raw_${++n}`;
      await post(server.url, `/query?q=${encodeURIComponent(`CREATE DATABASE "${db}"`)}`, '');
      const t0 = performance.now();
      for (const body of bodies) await post(server.url, `/write?db=${db}&precision=ms`, body);
      return performance.now() - t0;
    };
    const viaStore = async () => {
      const db = `bench_store_${++n}`;
      const store = new InfluxStore({ url: server.url, database: db, spoolPath: join(dir, `${db}.spool`), batchSize: BATCH });
      await store.writeResults([]); // nothing: the database and policies are created on the first flush below
      const t0 = performance.now();
      // Two writes in flight, as a pipeline hands over results without waiting for the previous
      // batch: the store encodes the next batch while the server takes the current one.
      let previous = Promise.resolve();
      for (const b of batches) {
        const current = store.writeResults(b);
        await previous;
        previous = current;
      }
      // The last batch is smaller than batchSize: send it now rather than at the flush interval.
      await Promise.all([previous, store.flush()]);
      const ms = performance.now() - t0;
      const queued = store.health().queued;
      await store.close();
      if (queued !== 0) throw new Error(`${queued} points went to the spool: the server was not keeping up`);
      return { ms, db };
    };
    // Database and retention policies are created on the store's first write; do that outside the timing.
    const warm = new InfluxStore({ url: server.url, database: 'bench_warm', spoolPath: join(dir, 'warm.spool'), batchSize: 1 });
    await warm.writeResults(series('W', '3s', base, 1));
    await warm.close();

    let bestRaw = Infinity;
    const rawTimes = [];
    const storeTimes = [];
    let bestStore = Infinity;
    let lastDb = '';
    for (let r = 0; r < REPEATS; r++) {
      const rr = await raw();
      rawTimes.push(rr);
      bestRaw = Math.min(bestRaw, rr);
      const s = await viaStore();
      storeTimes.push(s.ms);
      bestStore = Math.min(bestStore, s.ms);
      lastDb = s.db;
    }
    const rawPerS = (results.length / bestRaw) * 1000;
    const storePerS = (results.length / bestStore) * 1000;

    const qs = new InfluxStore({ url: server.url, database: lastDb, spoolPath: join(dir, 'query.spool'), batchSize: BATCH });
    const weekFrom = base - 7 * DAY;
    await qs.writeResults(series('BF1', '10min', weekFrom, 1008));
    const week = { from: weekFrom, to: weekFrom + 7 * DAY };
    const day = { from: base, to: base + DAY };
    const weekRows = (await qs.queryTrend('BF1', '10min', week)).length;
    const dayRows = (await qs.queryTrend('BF1', '3s', day)).length;
    const weekMs = await medianMs(() => qs.queryTrend('BF1', '10min', week), 11);
    const dayMs = await medianMs(() => qs.queryTrend('BF1', '3s', day), 5);
    await qs.close();
    const q = `SELECT * FROM "${lastDb}"."trend_3s"."sequence" WHERE "feeder" = 'BF1' AND time >= ${day.from}ms AND time < ${day.to}ms`;
    const rawDayMs = await medianMs(async () => {
      const res = await fetch(`${server.url}/query?db=${lastDb}&epoch=ms&chunked=true&chunk_size=10000&q=${encodeURIComponent(q)}`);
      for (const line of (await res.text()).split('\n')) if (line.length > 0) JSON.parse(line);
    }, 5);

    return {
      name: 'InfluxDB trend store',
      figures: {
        'points written': results.length,
        'store writes (points/s)': storePerS,
        'raw line-protocol POST via fetch (points/s)': rawPerS,
        'store / raw write ratio (target >= 0.7)': storePerS / rawPerS,
        'every trial, raw / store (ms)': `${rawTimes.map(Math.round).join(', ')} / ${storeTimes.map(Math.round).join(', ')}`,
        'week of 10-min points returned': weekRows,
        'week of 10-min query (ms, median of 11)': weekMs,
        'day of 3-s points returned': dayRows,
        'day of 3-s query (ms, median of 5)': dayMs,
        'day of 3-s raw query + JSON.parse (ms)': rawDayMs,
      },
    };
  } finally {
    await server.dispose();
    rmSync(dir, { recursive: true, force: true });
  }
}
