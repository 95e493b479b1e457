import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, afterEach, beforeAll, describe, expect, test } from 'vitest';
import { InfluxStore, type InfluxStoreOptions } from '../../agent/stores/influx/influx-store.js';
import { trendStoreContract } from '../contracts/trend-store-contract.js';
import { DAY, fullResult, recentBase, sparseResult } from '../contracts/trend-store-fixtures.js';
import { waitFor } from '../helpers/free-port.js';
import { hasInfluxd, influxQuery, startInfluxd, type InfluxdHandle } from '../helpers/influxd.js';
import { Teardown } from '../helpers/teardown.js';

const dir = mkdtempSync(join(tmpdir(), 'seqmon-influx-'));
let server: InfluxdHandle | null = null;
let n = 0;
beforeAll(async () => {
  if (hasInfluxd) server = await startInfluxd();
});
afterAll(async () => {
  await server?.dispose();
  rmSync(dir, { recursive: true, force: true });
});

function options(over: Partial<InfluxStoreOptions> = {}): InfluxStoreOptions {
  n += 1;
  return { url: server!.url, database: `seqmon_test_${n}`, spoolPath: join(dir, `spool-${n}.db`), flushIntervalMs: 5, ...over };
}

trendStoreContract('influx', async () => new InfluxStore(options()), { kind: 'influx', skip: !hasInfluxd });

type Series = { name?: string; columns: string[]; values: unknown[][] };
async function rows(db: string, q: string): Promise<Series[]> {
  const body = (await influxQuery(server!.url, db, q)) as { results: { series?: Series[] }[] };
  return body.results.flatMap((r) => r.series ?? []);
}

describe.skipIf(!hasInfluxd)('InfluxDB store against a real influxd', () => {
  const teardown = new Teardown();
  afterEach(() => teardown.run());
  function open(over: Partial<InfluxStoreOptions> = {}): InfluxStore {
    const s = new InfluxStore(options(over));
    teardown.add(() => s.close());
    return s;
  }

  test('has the next full batch on its way to the server by the time a writer is told its previous batch is stored', async () => {
    // A writer that prepares its next batch when woken then works while the server takes this one.
    const s = open({ batchSize: 50, flushIntervalMs: 60_000 });
    const t = recentBase();
    const batch = (k: number) => Array.from({ length: 50 }, (_, j) => fullResult('F1', '3s', t + 3000 * (50 * k + j), j));
    await s.writeResults(batch(0)); // database and retention policies exist from here on
    const writes: number[] = [];
    const realFetch = globalThis.fetch;
    globalThis.fetch = (input, init) => {
      if (String(input).includes('/write?')) writes.push(performance.now());
      return realFetch(input, init);
    };
    teardown.add(() => {
      globalThis.fetch = realFetch;
    });
    const first = s.writeResults(batch(1));
    await new Promise((r) => setImmediate(r)); // the first request is under way
    const second = s.writeResults(batch(2));
    await first;
    expect(writes).toHaveLength(2);
    await second;
    const [series] = await rows(s['ep'].database, 'SELECT count("v_u2") FROM "trend_3s"."sequence"');
    expect(series!.values[0]![1]).toBe(150);
  });

  test('creates one retention policy per window with the default retention (35 d, 1825 d, 3650 d; records 3650 d)', async () => {
    const s = open();
    await s.writeResults([fullResult('F1', '3s', recentBase())]);
    const [policies] = await rows(s['ep'].database, `SHOW RETENTION POLICIES ON "${s['ep'].database}"`);
    const duration = Object.fromEntries(policies.values.map((v) => [v[0], v[1]]));
    // Go duration text as InfluxDB prints it: days x 24 h.
    expect(duration).toMatchObject({ trend_3s: '840h0m0s', trend_10min: '43800h0m0s', trend_2h: '87600h0m0s', records: '87600h0m0s' });
  });

  test('corrects the duration of an existing retention policy to the configured retention when opened again', async () => {
    const first = open();
    const db = first['ep'].database;
    await first.writeResults([fullResult('F1', '3s', recentBase())]);
    await first.close();
    const again = new InfluxStore({ ...options(), database: db, retention: { '3s': 2 } });
    teardown.add(() => again.close());
    await again.writeResults([fullResult('F1', '3s', recentBase())]);
    const [policies] = await rows(db, `SHOW RETENTION POLICIES ON "${db}"`);
    expect(policies.values.find((v) => v[0] === 'trend_3s')?.[1]).toBe('48h0m0s');
  });

  test('writes each window into its own retention policy, in the documented measurement, tags and field types', async () => {
    const s = open();
    const db = s['ep'].database;
    const t = recentBase();
    await s.writeResults([fullResult('F1', '10min', t)]);
    const [fieldKeys] = await rows(db, 'SHOW FIELD KEYS ON "' + db + '" FROM "trend_10min"."sequence"');
    const types = Object.fromEntries(fieldKeys.values.map((v) => [v[0], v[1]]));
    expect(types).toMatchObject({ v_pos_mag: 'float', v_pos_ang: 'float', v_u2: 'float', i_rms_c: 'float', freq: 'float', flagged: 'boolean', count: 'integer', duration_ms: 'float', has_v: 'boolean' });
    const [tagKeys] = await rows(db, 'SHOW TAG KEYS ON "' + db + '" FROM "trend_10min"."sequence"');
    expect(tagKeys.values.map((v) => v[0])).toEqual(['feeder', 'window']);
    expect(await rows(db, 'SELECT * FROM "trend_3s"."sequence"')).toEqual([]);
  });

  test('stores a point at its millisecond timestamp (precision ms), not in 1970', async () => {
    const s = open();
    const t = recentBase() + 123;
    await s.writeResults([sparseResult('F1', '3s', t)]);
    const [series] = await rows(s['ep'].database, 'SELECT "v_u2" FROM "trend_3s"."sequence"');
    expect(series.values).toEqual([[t, 1.31]]);
  });

  test('leaves a result older than its window retention to the server to drop, and resolves the write', async () => {
    const s = open();
    const t = recentBase();
    await s.writeResults([fullResult('F1', '3s', t - 36 * DAY), fullResult('F1', '3s', t)]);
    expect((await s.queryTrend('F1', '3s', { from: 0, to: t + DAY })).map((r) => r.ts)).toEqual([t]);
    expect(s.stats()).toMatchObject({ expired: 1, queued: 0 });
    // The 10-min policy keeps 5 years: the same age is kept there.
    await s.writeResults([fullResult('F1', '10min', t - 36 * DAY)]);
    expect(await s.queryTrend('F1', '10min', { from: 0, to: t + DAY })).toHaveLength(1);
  });

  test('does not store a re-sent point twice (same measurement, tags and time overwrite)', async () => {
    const s = open();
    const t = recentBase();
    const batch = [0, 1, 2].map((k) => fullResult('F1', '3s', t + k * 3000, k));
    await s.writeResults(batch);
    await s.writeResults(batch);
    const [count] = await rows(s['ep'].database, 'SELECT COUNT("count") FROM "trend_3s"."sequence"');
    expect(count.values[0][1]).toBe(3);
  });

  test('quotes feeder strings in InfluxQL, so a hostile feeder name matches nothing and breaks nothing', async () => {
    const s = open();
    const t = recentBase();
    await s.writeResults([fullResult('F1', '3s', t)]);
    expect(await s.queryTrend("F1' OR feeder =~ /.*/ OR feeder = '", '3s', { from: 0, to: t + DAY })).toEqual([]);
    expect(await s.queryAlarms({ feeder: 'a\\\'b"c' })).toEqual([]);
    expect(await s.queryTrend('F1', '3s', { from: 0, to: t + DAY })).toHaveLength(1);
  });

  test('recreates its database and retention policies when they are dropped under it, losing no write', async () => {
    const s = open({ retryMinMs: 10, retryMaxMs: 50 });
    const db = s['ep'].database;
    const t = recentBase();
    await s.writeResults([fullResult('F1', '3s', t)]);
    const res = await fetch(`${server!.url}/query?q=${encodeURIComponent(`DROP DATABASE "${db}"`)}`, { method: 'POST' });
    expect(res.status).toBe(200);
    // The drop finishes inside influxd after it answers: wait until the database is really gone before writing,
    // or the write can land in a shard that is deleted a moment later.
    await waitFor(async () => {
      const list = (await (await fetch(`${server!.url}/query?q=${encodeURIComponent('SHOW DATABASES')}`)).json()) as { results: { series?: { values?: string[][] }[] }[] };
      return !(list.results[0]?.series?.[0]?.values ?? []).some((v) => v[0] === db);
    }, 5_000, 10);
    await s.writeResults([fullResult('F1', '3s', t + 3000)]);
    await waitFor(() => s.health().queued === 0, 5_000, 10);
    expect((await s.queryTrend('F1', '3s', { from: t, to: t + DAY })).map((r) => r.ts)).toEqual([t + 3000]);
  });

  test('answers queries against a database it has not written yet with empty lists', async () => {
    const s = open();
    expect(await s.queryTrend('F1', '2h', { from: 0, to: Date.now() })).toEqual([]);
    expect(await s.activeAlarms()).toEqual([]);
    expect(await s.queryEvents({})).toEqual([]);
  });
});
