/**
 * The stores take what the pipeline really produces: 3-s, 10-min and 2-h
 * aggregates of phasor and rms frames (all voltage/current shapes the core
 * emits) go through each store and come back unchanged. Frame values are
 * invented (a fictional 12.47 kV feeder with a slight unbalance).
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, test } from 'vitest';
import { DEFAULT_DETECTION } from '../../../agent/core/detect/settings.js';
import { Pipeline, createOutput } from '../../../agent/core/pipeline.js';
import type { TrendStore } from '../../../agent/core/ports.js';
import { AGGREGATE_WINDOWS, type SequenceResult } from '../../../agent/core/result.js';
import { MemoryStore } from '../../../agent/stores/memory/memory-store.js';
import { SqliteStore } from '../../../agent/stores/sqlite/sqlite-store.js';

const dir = mkdtempSync(join(tmpdir(), 'seqmon-pipeline-store-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function aggregates(): SequenceResult[] {
  const p = new Pipeline({
    discoverFeeders: true,
    defaults: { nominalHz: 60, nominalVoltageLN: 7200, detection: DEFAULT_DETECTION },
    feeders: [],
  });
  const out = createOutput();
  const t0 = Date.UTC(2026, 10, 30, 22, 0, 0);
  // 2 h 10 min of one frame per second: closes 3-s, 10-min and one 2-h interval.
  for (let k = 0; k < 7800; k++) {
    const ts = t0 + k * 1000;
    const d = 0.02 * Math.sin(k / 50);
    p.ingest(
      {
        feeder: 'PH1',
        kind: 'phasor',
        origin: 'test',
        payload: {
          ts,
          freq: 60 + d / 10,
          v: { a: [7212 * (1 + d), 0], b: [7190, -120.4], c: [7168, 119.7] },
          i: { a: [212, -24.8], b: [205.3, -146.1], c: [198.6 * (1 - d), 95] },
        },
      },
      out,
    );
    if (k % 3 === 0) p.ingest({ feeder: 'RM1', kind: 'rms', origin: 'test', payload: { ts, vll: { ab: 12470, bc: 12391 * (1 + d), ca: 12440 }, i: { a: 212, b: 205, c: 199 } } }, out);
  }
  p.flush(out);
  return out.aggregates;
}

describe('stores and the pipeline', () => {
  const produced = aggregates();

  test('the pipeline run yields aggregates of every window for both feeders', () => {
    for (const feeder of ['PH1', 'RM1']) for (const w of AGGREGATE_WINDOWS) expect(produced.some((r) => r.feeder === feeder && r.window === w)).toBe(true);
  });

  test.each([
    ['memory', (): TrendStore => new MemoryStore()],
    ['sqlite', (): TrendStore => new SqliteStore({ path: join(dir, 'p.db'), scheduler: { now: () => Date.UTC(2026, 11, 1), setTimeout, clearTimeout, setInterval: () => 0, clearInterval: () => undefined } })],
  ])('%s store returns the pipeline aggregates unchanged', async (_name, make) => {
    const store = make();
    try {
      await store.writeResults(produced);
      for (const feeder of ['PH1', 'RM1']) {
        for (const w of AGGREGATE_WINDOWS) {
          const expected = produced.filter((r) => r.feeder === feeder && r.window === w).sort((a, b) => a.ts - b.ts);
          expect(await store.queryTrend(feeder, w, { from: 0, to: 9e12 })).toStrictEqual(expected);
        }
      }
    } finally {
      await store.close();
    }
  });
});
