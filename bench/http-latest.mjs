// GET /api/feeders/:id/latest requests per second against a bare fastify
// route returning a constant, in the same process and run, interleaved
// rounds (the cores are noisy): the ratio is what the feeder lookup, the
// wire conversion and the response schema serializer cost.
import Fastify from 'fastify';
import { buildServer } from '../dist/agent/server/build-server.js';
import { LiveHub } from '../dist/agent/publish/live-hub.js';
import { MemoryStore } from '../dist/agent/stores/memory/memory-store.js';
import { result } from './_store-data.mjs';
import { benchDeps, feederInfo, loadLoop } from './_http-load.mjs';

const ROUNDS = 3;
const ROUND_MS = 1_500;

export async function run() {
  const now = Date.now();
  const feeders = Array.from({ length: 50 }, (_, k) => feederInfo(`BENCH-F${k}`, now));
  const latest = new Map(feeders.map((f, k) => [f.id, { ...result(f.id, '3s', now, k), window: 'frame' }]));
  const app = await buildServer(benchDeps({ store: new MemoryStore(), live: new LiveHub(), feeders, latest, now }));
  const bare = Fastify({ logger: false });
  bare.get('/constant', async () => ({ ok: true }));
  await app.listen({ port: 0, host: '127.0.0.1' });
  await bare.listen({ port: 0, host: '127.0.0.1' });
  const portOf = (s) => s.server.address().port;
  const latestUrl = `http://127.0.0.1:${portOf(app)}/api/feeders/BENCH-F7/latest`;
  const bareUrl = `http://127.0.0.1:${portOf(bare)}/constant`;
  try {
    await loadLoop(latestUrl, { durationMs: 300 }); // warm-up (JIT, serializer compile)
    await loadLoop(bareUrl, { durationMs: 300 });
    let bestLatest = 0, bestBare = 0;
    for (let r = 0; r < ROUNDS; r++) {
      bestBare = Math.max(bestBare, await loadLoop(bareUrl, { durationMs: ROUND_MS }));
      bestLatest = Math.max(bestLatest, await loadLoop(latestUrl, { durationMs: ROUND_MS }));
    }
    const body = await (await fetch(latestUrl)).text();
    return {
      name: 'HTTP /latest vs bare fastify route',
      figures: {
        'latest req/s (best round, 8 keep-alive connections)': Math.round(bestLatest),
        'bare constant route req/s': Math.round(bestBare),
        'latest / bare ratio': Number((bestLatest / bestBare).toFixed(3)),
        'latest response bytes': body.length,
      },
    };
  } finally {
    await app.close();
    await bare.close();
  }
}
