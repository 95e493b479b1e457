import { fileURLToPath } from 'node:url';
import { describe, expect, test } from 'vitest';
import { loadConfig, toPipelineSettings } from '../../agent/config/load-config.js';
import { clearOutput, createOutput, Pipeline } from '../../agent/core/pipeline.js';
import type { PipelineOutput } from '../../agent/core/pipeline.js';
import { SubstationSimulator } from '../../agent/sources/simulator/generator.js';

const DEMO = fileURLToPath(new URL('../../config/demo.yaml', import.meta.url));
const ORIGIN = Date.UTC(2026, 2, 2, 0, 0, 0);

/** Feeds one feeder's simulated frames from..to through a pipeline built from the demo configuration, ticking once a second. */
async function run(feeder: string, from: number, to: number): Promise<PipelineOutput> {
  const config = await loadConfig(DEMO, {});
  const sim = new SubstationSimulator({ originMs: ORIGIN, seed: config.simulator.seed, speed: config.simulator.speed, startHour: config.simulator.startHour });
  const pipeline = new Pipeline(toPipelineSettings(config));
  const all = createOutput();
  const out = createOutput();
  for (let t = from; t < to; t += 1_000) {
    for (const f of sim.framesBetween(t, t + 1_000, feeder)) pipeline.ingest({ feeder: f.feeder, kind: f.kind, payload: f.payload, origin: 'simulator' }, out);
    pipeline.tick(t + 1_000, out);
    all.alarms.push(...out.alarms);
    all.events.push(...out.events);
    all.rejections.push(...out.rejections);
    clearOutput(out);
  }
  return all;
}

describe('the demo scenario through the real pipeline', () => {
  const sim = new SubstationSimulator({ originMs: ORIGIN, seed: 20260302, speed: 240, startHour: 6 });

  test('the blown lateral fuse on WM-103 is classified as a C-G fault, then raises open-phase on phase c within 2 s', async () => {
    const w = sim.fuseWindow('WM-103', 0)!;
    const out = await run('WM-103', w.faultFrom - 20_000, w.blowsAt + 10_000);
    expect(out.rejections).toEqual([]);
    expect(out.events.map((e) => e.type)).toEqual(['CG']);
    const open = out.alarms.find((a) => a.condition === 'open-phase' && a.state === 'raised');
    expect(open).toMatchObject({ feeder: 'WM-103', phase: 'c' });
    // Target of the detection design (settings.ts): raised within 2 s of the condition appearing in the data.
    expect(open!.ts - w.blowsAt).toBeLessThanOrEqual(2_000);
  });

  test('the brief fault on WM-104 is classified as A-G and raises no open-phase alarm', async () => {
    const [from] = sim.faultWindows('WM-104', 0)[1]!;
    const out = await run('WM-104', from - 20_000, from + 10_000);
    expect(out.rejections).toEqual([]);
    expect(out.events).toHaveLength(1);
    expect(out.events[0]).toMatchObject({ feeder: 'WM-104', type: 'AG', peakPhase: 'a' });
    expect(out.alarms.filter((a) => a.condition === 'open-phase')).toEqual([]);
  });
});
