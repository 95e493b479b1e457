/**
 * PipelineOptions.frameResults: with 'reused' the pipeline writes each
 * feeder's phasor-frame results into one record instead of a new one per
 * frame. Everything it computes must be the same as with new records: the
 * per-frame values (read when emitted), the aggregates, the alarms and the
 * events. The stream is invented: a fictional 7.2 kV feeder that goes from
 * balanced to unbalanced, loses a phase current, sees an A-G fault, then has
 * frames with voltages only or currents only; a second feeder sends rms frames.
 */
import { describe, expect, test } from 'vitest';
import { DEFAULT_DETECTION } from '../../../agent/core/detect/settings.js';
import type { PipelineOptions, PipelineOutput } from '../../../agent/core/pipeline.js';
import { clearOutput, createOutput, Pipeline } from '../../../agent/core/pipeline.js';
import type { RawFrame } from '../../../agent/core/ports.js';
import { copyResult, resultToWire } from '../../../agent/core/result.js';

const T0 = Date.UTC(2026, 5, 1, 8, 0, 0);

function phasorFrame(k: number): RawFrame {
  const ts = T0 + 20 * k;
  // 0-199 balanced, 200-499 about 2 % voltage unbalance, 500-899 phase c current gone, 900-920 an A-G fault.
  const va = k < 200 ? 7200 : 7200 * 1.03;
  const ic = k >= 500 && k < 900 ? 0 : 180;
  const ia = k >= 900 && k <= 920 ? 4200 : 180;
  const v = { a: [va, 0], b: [7200, -120], c: [7200, 120] };
  const i = { a: [ia, k >= 900 && k <= 920 ? -75 : -25], b: [180, -145], c: [ic, 95] };
  // From frame 1000 on, every 37th frame has voltages only and every 41st currents only.
  const payload = k >= 1000 && k % 37 === 0 ? { ts, freq: 60.01, v } : k >= 1000 && k % 41 === 0 ? { ts, i } : { ts, freq: 59.99, v, i };
  return { feeder: 'WM-P1', kind: 'phasor', payload: JSON.stringify(payload), origin: 'test' };
}

function rmsFrame(k: number): RawFrame {
  return { feeder: 'WM-R1', kind: 'rms', payload: { ts: T0 + 100 * k, vll: { ab: 12470, bc: 12400 + k, ca: 12440 }, i: { a: 200, b: 190, c: 185 } }, origin: 'test' };
}

interface Run {
  frames: string[];
  aggregates: string[];
  alarms: string[];
  events: string[];
}

function runStream(options: PipelineOptions): Run {
  const p = new Pipeline({ discoverFeeders: true, defaults: { nominalHz: 60, nominalVoltageLN: 7200, detection: DEFAULT_DETECTION }, feeders: [] }, options);
  const run: Run = { frames: [], aggregates: [], alarms: [], events: [] };
  const out = createOutput();
  const take = (o: PipelineOutput): void => {
    // Read at once: a reused record holds these values only until the feeder's next frame.
    for (const r of o.results) run.frames.push(JSON.stringify(resultToWire(r)));
    for (const r of o.aggregates) run.aggregates.push(JSON.stringify(resultToWire(r)));
    for (const a of o.alarms) run.alarms.push(JSON.stringify(a));
    for (const e of o.events) run.events.push(JSON.stringify(e));
    clearOutput(o);
  };
  for (let k = 0; k < 1500; k++) {
    p.ingest(phasorFrame(k), out);
    take(out);
    if (k % 5 === 0) {
      p.ingest(rmsFrame(k / 5), out);
      take(out);
    }
    if (k % 50 === 0) {
      p.tick(T0 + 20 * k, out);
      take(out);
    }
  }
  p.flush(out);
  take(out);
  return run;
}

describe('pipeline frame results written into a reused record', () => {
  const fresh = runStream({});
  const reused = runStream({ frameResults: 'reused' });

  test('the stream exercises what it is meant to: aggregates, alarms and a fault event', () => {
    expect(fresh.aggregates.length).toBeGreaterThan(20);
    expect(fresh.alarms.some((a) => a.includes('open-phase'))).toBe(true);
    expect(fresh.events.length).toBeGreaterThanOrEqual(1);
  });

  test('gives the same per-frame values as new records', () => {
    expect(reused.frames).toHaveLength(fresh.frames.length);
    expect(reused.frames).toEqual(fresh.frames);
  });

  test('gives the same aggregates, alarms and events as new records', () => {
    expect(reused.aggregates).toEqual(fresh.aggregates);
    expect(reused.alarms).toEqual(fresh.alarms);
    expect(reused.events).toEqual(fresh.events);
  });

  test("writes a feeder's phasor frames into one record", () => {
    const p = new Pipeline({ discoverFeeders: true, defaults: { nominalHz: 60, nominalVoltageLN: 7200, detection: DEFAULT_DETECTION }, feeders: [] }, { frameResults: 'reused' });
    const out = createOutput();
    p.ingest(phasorFrame(1), out);
    p.ingest(phasorFrame(2), out);
    expect(out.results).toHaveLength(2);
    expect(out.results[0]).toBe(out.results[1]);
    expect(out.results[1]!.ts).toBe(T0 + 40);
  });

  test('latest() is a copy that the next frame does not change', () => {
    const p = new Pipeline({ discoverFeeders: true, defaults: { nominalHz: 60, nominalVoltageLN: 7200, detection: DEFAULT_DETECTION }, feeders: [] }, { frameResults: 'reused' });
    const out = createOutput();
    p.ingest(phasorFrame(300), out);
    const latest = p.latest('WM-P1')!;
    const before = JSON.stringify(resultToWire(latest));
    p.ingest(phasorFrame(600), out);
    expect(JSON.stringify(resultToWire(latest))).toBe(before);
    expect(p.latest('WM-P1')!.ts).toBe(T0 + 20 * 600);
  });
});

describe('copyResult', () => {
  test('makes a deep copy: changing the copy leaves the original as it was', () => {
    const p = new Pipeline({ discoverFeeders: true, defaults: { nominalHz: 60, nominalVoltageLN: 7200, detection: DEFAULT_DETECTION }, feeders: [] });
    const out = createOutput();
    p.ingest(phasorFrame(300), out);
    const original = out.results[0]!;
    const before = JSON.stringify(resultToWire(original));
    const copy = copyResult(original);
    expect(resultToWire(copy)).toEqual(resultToWire(original));
    copy.v!.pos![0] = 1;
    copy.v!.rms!.a = 1;
    copy.v!.rmsLL!.ab = 1;
    copy.i!.neg![1] = 1;
    expect(JSON.stringify(resultToWire(original))).toBe(before);
  });
});
