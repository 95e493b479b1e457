/**
 * Child process for the spool crash test: writes batches of 3-s results to
 * an InfluxStore whose server is down, and prints "queued K" once batch K's
 * writeResults resolved (its points are fsynced in the spool). Arguments:
 * url, database, spool path, base ts, batch size.
 */
import { InfluxStore } from '../../agent/stores/influx/influx-store.js';
import { fullResult } from '../contracts/trend-store-fixtures.js';

const [url, database, spoolPath, baseArg, sizeArg] = process.argv.slice(2);
const base = Number(baseArg);
const size = Number(sizeArg);
const store = new InfluxStore({ url, database, spoolPath, flushIntervalMs: 1, batchSize: size, requestTimeoutMs: 2000 });
for (let k = 0; ; k++) {
  const batch = [];
  for (let j = 0; j < size; j++) batch.push(fullResult('SPOOL1', '3s', base + (k * size + j) * 3000, j));
  await store.writeResults(batch);
  process.stdout.write(`queued ${k}\n`);
}
