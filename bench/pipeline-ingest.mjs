// Phasor frames per second through Pipeline.ingest (validation, sequence,
// aggregation, detection) for 200 feeders, against a bare JSON.parse of the
// same payloads measured in the same run.
import { DEFAULT_DETECTION } from '../dist/agent/core/detect/settings.js';
import { clearOutput, createOutput, Pipeline } from '../dist/agent/core/pipeline.js';

const FEEDERS = 200;
const FRAMES = 60_000;

function payloads(t0) {
  const list = [];
  for (let k = 0; k < FRAMES; k++) {
    const f = k % FEEDERS;
    const ts = t0 + Math.floor(k / FEEDERS) * 100;
    const s = 1 + 0.02 * Math.sin(k);
    list.push({
      feeder: `F${f}`,
      text: JSON.stringify({
        ts,
        freq: 60.001,
        v: { a: [7200 * s, 0], b: [7190, -120.2], c: [7170, 119.8] },
        i: { a: [210, -25], b: [205, -146], c: [198, 95] },
      }),
    });
  }
  return list;
}

export async function run() {
  const list = payloads(Date.UTC(2026, 2, 2));
  const bare = () => {
    let sink = 0;
    const t = process.hrtime.bigint();
    for (const p of list) sink += JSON.parse(p.text).ts;
    return [Number(process.hrtime.bigint() - t), sink];
  };
  const pipelineRun = (frameResults = 'new') => {
    const pipeline = new Pipeline({ discoverFeeders: true, defaults: { nominalHz: 60, nominalVoltageLN: 7200, detection: DEFAULT_DETECTION }, feeders: [] }, { frameResults });
    const out = createOutput();
    let results = 0;
    const t = process.hrtime.bigint();
    for (const p of list) {
      pipeline.ingest({ feeder: p.feeder, kind: 'phasor', payload: p.text, origin: 'bench' }, out);
      results += out.results.length;
      clearOutput(out);
    }
    return [Number(process.hrtime.bigint() - t), results];
  };
  bare();
  pipelineRun();
  pipelineRun('reused');
  let bestBare = Infinity, bestPipe = Infinity, bestReused = Infinity;
  for (let r = 0; r < 5; r++) {
    bestBare = Math.min(bestBare, bare()[0]);
    bestPipe = Math.min(bestPipe, pipelineRun()[0]);
    bestReused = Math.min(bestReused, pipelineRun('reused')[0]);
  }
  return {
    name: 'Pipeline.ingest throughput',
    figures: {
      'bare JSON.parse frames/s (baseline, same run)': (FRAMES * 1e9) / bestBare,
      'Pipeline.ingest frames/s (200 feeders)': (FRAMES * 1e9) / bestPipe,
      'ratio pipeline / bare JSON.parse': bestBare / bestPipe,
      // As the service's pipeline worker runs it: one result record per feeder, overwritten by each phasor frame.
      "Pipeline.ingest frames/s, frameResults 'reused' (as on the service's worker)": (FRAMES * 1e9) / bestReused,
      "ratio pipeline 'reused' / bare JSON.parse": bestBare / bestReused,
    },
  };
}
