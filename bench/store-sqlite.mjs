// SQLite trend store: results written per second through SqliteStore against
// a bare prepared-statement insert loop into the same table in the same run
// (ratio target >= 0.7), and the time to answer a week of 10-min data (1008
// rows) and a day of 3-s data (28,800 rows), beside a bare SELECT of the same
// rows without turning them into results.
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import Database from 'better-sqlite3';
import { SqliteStore } from '../dist/agent/stores/sqlite/sqlite-store.js';
import { SEQUENCE_COLUMNS, newRow, sequenceToRow } from '../dist/agent/stores/sequence-columns.js';
import { DAY, chunks, medianMs, series } from './_store-data.mjs';

const BATCH = 5000;
const REPEATS = 3;

export async function run() {
  const dir = mkdtempSync(join(tmpdir(), 'seqmon-bench-sqlite-'));
  try {
    const base = Date.UTC(2026, 0, 5);
    // 4 fictional feeders x one day of 3-s results = 115,200 points.
    const results = ['BF1', 'BF2', 'BF3', 'BF4'].flatMap((f) => series(f, '3s', base, 28_800));
    const batches = chunks(results, BATCH);
    // The baseline's bind arrays are built before timing: it measures SQLite alone.
    const params = results.map((r) => {
      const row = newRow();
      sequenceToRow(r, row);
      return [r.feeder, r.window, r.ts, ...row];
    });
    const paramBatches = chunks(params, BATCH);
    let file = 0;
    const fresh = () => join(dir, `b-${++file}.db`);
    const now = { now: () => base + DAY, setTimeout, clearTimeout, setInterval: () => 0, clearInterval: () => undefined };

    const bare = () => {
      const path = fresh();
      new SqliteStore({ path, scheduler: now }).close(); // same schema, same file settings
      const db = new Database(path);
      db.pragma('journal_mode = WAL');
      db.pragma('synchronous = NORMAL');
      const insert = db.prepare(
        `INSERT OR REPLACE INTO sequence (feeder, "window", ts, ${SEQUENCE_COLUMNS.join(', ')}) VALUES (${new Array(3 + SEQUENCE_COLUMNS.length).fill('?').join(', ')})`,
      );
      const tx = db.transaction((rows) => {
        for (const p of rows) insert.run(p);
      });
      const t0 = performance.now();
      for (const b of paramBatches) tx(b);
      const ms = performance.now() - t0;
      db.close();
      return ms;
    };
    const store = async () => {
      const s = new SqliteStore({ path: fresh(), scheduler: now });
      const t0 = performance.now();
      for (const b of batches) await s.writeResults(b);
      const ms = performance.now() - t0;
      await s.close();
      return ms;
    };
    let bestBare = Infinity;
    let bestStore = Infinity;
    for (let r = 0; r < REPEATS; r++) {
      bestBare = Math.min(bestBare, bare());
      bestStore = Math.min(bestStore, await store());
    }
    const barePerS = (results.length / bestBare) * 1000;
    const storePerS = (results.length / bestStore) * 1000;

    // Queries, on a file holding the day of 3-s data above plus 5 weeks of 10-min data.
    const qs = new SqliteStore({ path: fresh(), scheduler: now });
    for (const b of batches) await qs.writeResults(b);
    await qs.writeResults(series('BF1', '10min', base - 28 * DAY, 5 * 1008));
    const week = { from: base, to: base + 7 * DAY };
    const day = { from: base, to: base + DAY };
    const weekRows = (await qs.queryTrend('BF1', '10min', week)).length;
    const dayRows = (await qs.queryTrend('BF1', '3s', day)).length;
    const weekMs = await medianMs(() => qs.queryTrend('BF1', '10min', week), 21);
    const dayMs = await medianMs(() => qs.queryTrend('BF1', '3s', day), 7);
    await qs.close();
    const raw = new Database(join(dir, `b-${file}.db`), { readonly: true });
    const sel = raw.prepare(`SELECT ts, ${SEQUENCE_COLUMNS.join(', ')} FROM sequence WHERE feeder = ? AND "window" = ? AND ts >= ? AND ts < ? ORDER BY ts`).raw(true);
    const bareDayMs = await medianMs(() => sel.all('BF1', '3s', day.from, day.to), 7);
    raw.close();

    return {
      name: 'SQLite trend store',
      figures: {
        'points written': results.length,
        'store writes (points/s)': storePerS,
        'bare prepared insert loop (points/s)': barePerS,
        'store / bare write ratio (target >= 0.7)': storePerS / barePerS,
        'week of 10-min rows returned': weekRows,
        'week of 10-min query (ms, median of 21; target well under 100)': weekMs,
        'day of 3-s rows returned': dayRows,
        'day of 3-s query (ms, median of 7)': dayMs,
        'day of 3-s bare SELECT without decoding (ms)': bareDayMs,
      },
    };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}
