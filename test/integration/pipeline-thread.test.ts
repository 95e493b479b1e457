/**
 * The pipeline on a worker thread (compiled dist/ build, as the service runs
 * it) gives the same aggregates and alarms as the pipeline on the calling
 * thread, processes everything handed over before close() resolves, and
 * applies backpressure when the worker falls behind.
 */
import { existsSync } from 'node:fs';
import { resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { describe, expect, it } from 'vitest';
import { DEFAULT_DETECTION } from '../../agent/core/detect/settings.js';
import type { AlarmTransition } from '../../agent/core/detect/types.js';
import type { PipelineOutput, PipelineSettings } from '../../agent/core/pipeline.js';
import { resultToWire } from '../../agent/core/result.js';
import { InlinePipelineHost } from '../../agent/runtime/pipeline-host.js';
import type * as ThreadModule from '../../agent/runtime/pipeline-thread.js';

const COMPILED = resolve('dist/agent/runtime/pipeline-thread.js');

async function threadModule(): Promise<typeof ThreadModule> {
  expect(existsSync(COMPILED), 'dist/ is missing: run `npm run build` first (npm test does it)').toBe(true);
  return (await import(pathToFileURL(COMPILED).href)) as typeof ThreadModule;
}

const SETTINGS: PipelineSettings = {
  discoverFeeders: true,
  defaults: {
    nominalHz: 60,
    nominalVoltageLN: 7200,
    detection: { ...DEFAULT_DETECTION, voltageUnbalance: { ...DEFAULT_DETECTION.voltageUnbalance, pickupMs: 3000, dropoutMs: 3000 } },
  },
  feeders: [],
};
const T0 = Date.UTC(2026, 2, 2, 12, 0, 0);

/** 2.5 % negative sequence on voltages (V1 = 7200 V, V2 = 180 V), constructed by hand. */
function payload(ts: number): string {
  const ph = (k: number): [number, number] => {
    const a1 = (-120 * k * Math.PI) / 180, a2 = (120 * k * Math.PI) / 180;
    const re = 7200 * Math.cos(a1) + 180 * Math.cos(a2), im = 7200 * Math.sin(a1) + 180 * Math.sin(a2);
    return [Math.hypot(re, im), (Math.atan2(im, re) * 180) / Math.PI];
  };
  return JSON.stringify({ ts, v: { a: ph(0), b: ph(1), c: ph(2) }, i: { a: [100, -30], b: [100, -150], c: [100, 90] } });
}

interface Collected {
  aggregates: string[];
  alarms: AlarmTransition[];
  rejections: string[];
}

function collector(): [Collected, (o: PipelineOutput) => void] {
  const c: Collected = { aggregates: [], alarms: [], rejections: [] };
  return [
    c,
    (o) => {
      for (const a of o.aggregates) c.aggregates.push(JSON.stringify(resultToWire(a)));
      c.alarms.push(...o.alarms);
      for (const r of o.rejections) c.rejections.push(r.code);
    },
  ];
}

describe('pipeline on a worker thread', () => {
  it('produces exactly the aggregates, alarms and rejections of the pipeline on the calling thread', async () => {
    const { PipelineThread } = await threadModule();
    const [inline, onInline] = collector();
    const [threaded, onThreaded] = collector();
    const host = new InlinePipelineHost(SETTINGS, onInline, () => undefined);
    const thread = new PipelineThread(SETTINGS, { onOutput: onThreaded, onError: () => undefined, onFatal: () => undefined });
    for (let k = 0; k < 150; k++) {
      for (const feeder of ['F1', 'F2']) {
        const raw = { feeder, kind: 'phasor' as const, payload: k === 75 ? 'not json' : payload(T0 + 100 * k), origin: `seqmon/in/${feeder}/phasor` };
        host.ingest(raw);
        thread.ingest({ ...raw, payload: Buffer.from(raw.payload) });
      }
    }
    host.tick(T0 + 15_000);
    thread.tick(T0 + 15_000);
    await thread.close();
    expect(threaded.aggregates.length).toBeGreaterThanOrEqual(8);
    expect(threaded.aggregates).toEqual(inline.aggregates);
    expect(threaded.alarms).toEqual(inline.alarms);
    expect(threaded.alarms.map((a) => [a.feeder, a.condition, a.state])).toEqual([
      ['F1', 'voltage-unbalance', 'raised'],
      ['F2', 'voltage-unbalance', 'raised'],
    ]);
    expect(threaded.rejections).toEqual(['FRAME_NOT_JSON', 'FRAME_NOT_JSON']);
    expect(thread.feederIds().sort()).toEqual(['F1', 'F2']);
    expect(thread.stats().accepted).toEqual({ F1: 149, F2: 149 });
    expect(thread.latest('F1')?.ts).toBe(T0 + 100 * 149);
  });

  it('asks the source to pause when too many frames wait for the worker, and says when to go on', async () => {
    const { PipelineThread } = await threadModule();
    const thread = new PipelineThread(SETTINGS, { onOutput: () => undefined, onError: () => undefined, onFatal: () => undefined });
    let drained = 0;
    thread.onDrain(() => drained++);
    let refused = 0;
    // No await in between: the worker cannot answer, so the bound must be reached.
    for (let k = 0; k < 25_000; k++) if (!thread.ingest({ feeder: 'F1', kind: 'phasor', payload: payload(T0 + k), origin: 'test' })) refused++;
    expect(refused).toBeGreaterThan(0);
    await thread.close();
    expect(drained).toBeGreaterThanOrEqual(1);
    expect(thread.stats().accepted.F1).toBe(25_000);
  });
});

describe('pipeline on a worker thread: what travels with each frame', () => {
  it('keeps feeder, kind and origin right for every frame when the distinct sources outgrow the key table', async () => {
    const { PipelineThread } = await threadModule();
    const rejections: string[] = [];
    const thread = new PipelineThread(SETTINGS, {
      onOutput: (o) => rejections.push(...o.rejections.map((r) => `${r.feeder}|${r.origin}`)),
      onError: () => undefined,
      onFatal: () => undefined,
    });
    // 20,000 distinct origins: past the table's bound of 16,384, so the numbering starts over mid-stream.
    const expected: string[] = [];
    for (let k = 0; k < 20_000; k++) {
      const feeder = `F${k % 3}`;
      const bad = k % 500 === 7;
      if (bad) expected.push(`${feeder}|source-${k}`);
      thread.ingest({ feeder, kind: 'phasor', payload: Buffer.from(bad ? 'not json' : payload(T0 + 100 * k)), origin: `source-${k}` });
      if (k % 1000 === 999) await new Promise((r) => setImmediate(r));
    }
    await thread.close();
    expect(rejections).toEqual(expected);
    const accepted = thread.stats().accepted;
    expect(accepted.F0! + accepted.F1! + accepted.F2!).toBe(20_000 - expected.length);
    expect(Object.keys(accepted).sort()).toEqual(['F0', 'F1', 'F2']);
  });

  it('decodes a payload that is not ASCII as UTF-8, in a batch with ASCII ones', async () => {
    const { PipelineThread } = await threadModule();
    const rejections: string[] = [];
    const thread = new PipelineThread(SETTINGS, { onOutput: (o) => rejections.push(...o.rejections.map((r) => r.message)), onError: () => undefined, onFatal: () => undefined });
    thread.ingest({ feeder: 'F1', kind: 'phasor', payload: Buffer.from(payload(T0)), origin: 'test' });
    // Unknown fields are ignored; a name with non-ASCII letters must not disturb the parse.
    const withNote = JSON.stringify({ ...JSON.parse(payload(T0 + 100)), note: 'Umspannwerk Süd – Abgang 3' });
    thread.ingest({ feeder: 'F1', kind: 'phasor', payload: Buffer.from(withNote, 'utf8'), origin: 'test' });
    thread.ingest({ feeder: 'F1', kind: 'phasor', payload: Buffer.from('{"ts": "é"}', 'utf8'), origin: 'test' });
    thread.ingest({ feeder: 'F1', kind: 'phasor', payload: Buffer.from(payload(T0 + 200)), origin: 'test' });
    await thread.close();
    expect(thread.stats().accepted).toEqual({ F1: 3 });
    expect(rejections).toHaveLength(1);
    expect(rejections[0]).toContain('"é"');
  });

  it('takes payloads given as objects and as bytes in one batch, in order', async () => {
    const { PipelineThread } = await threadModule();
    const thread = new PipelineThread(SETTINGS, { onOutput: () => undefined, onError: () => undefined, onFatal: () => undefined });
    for (let k = 0; k < 10; k++) {
      const text = payload(T0 + 100 * k);
      thread.ingest({ feeder: 'F1', kind: 'phasor', payload: k % 2 === 0 ? Buffer.from(text) : (JSON.parse(text) as Record<string, unknown>), origin: 'test' });
    }
    await thread.close();
    // Out of order would be refused as time going backwards.
    expect(thread.stats()).toEqual({ accepted: { F1: 10 }, rejected: {} });
    expect(thread.latest('F1')?.ts).toBe(T0 + 900);
  });
});

describe('pipeline on a worker thread with a payload that cannot cross threads', () => {
  it('drops that batch with a named reason and keeps processing the frames after it', async () => {
    const { PipelineThread } = await threadModule();
    const errors: string[] = [];
    const thread = new PipelineThread(SETTINGS, { onOutput: () => undefined, onError: (m) => errors.push(m), onFatal: () => undefined });
    thread.ingest({ feeder: 'F1', kind: 'phasor', payload: { ts: T0, v: () => 1 } as unknown as Record<string, unknown>, origin: 'broken-source' });
    await new Promise((r) => setImmediate(r));
    thread.ingest({ feeder: 'F1', kind: 'phasor', payload: payload(T0 + 100), origin: 'test' });
    await thread.close();
    expect(errors).toHaveLength(1);
    expect(errors[0]).toMatch(/could not be handed to the pipeline worker/);
    expect(thread.stats().accepted).toEqual({ F1: 1 });
  });
});
