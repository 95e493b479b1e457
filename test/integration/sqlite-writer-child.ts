/**
 * Child process for the SQLite crash and concurrency tests: writes batches of
 * 3-s results forever and prints "committed K" after batch K's writeResults
 * resolved. Arguments: path, base ts, batch size, number of batches, pause
 * between batches in ms.
 */
import { SqliteStore } from '../../agent/stores/sqlite/sqlite-store.js';
import { fullResult } from '../contracts/trend-store-fixtures.js';

const [path, baseArg, sizeArg, countArg, pauseArg] = process.argv.slice(2);
const base = Number(baseArg);
const size = Number(sizeArg);
const count = Number(countArg);
const pauseMs = Number(pauseArg);
const store = new SqliteStore({ path });
for (let k = 0; k < count; k++) {
  const batch = [];
  for (let j = 0; j < size; j++) batch.push(fullResult('CRASH1', '3s', base + (k * size + j) * 3000, j));
  await store.writeResults(batch);
  process.stdout.write(`committed ${k}\n`);
  if (pauseMs > 0) await new Promise((r) => setTimeout(r, pauseMs));
}
await store.close();
