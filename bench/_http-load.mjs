// Shared by the HTTP/dashboard benchmarks: a bounded keep-alive load loop
// (autocannon-style: N connections, each sending the next request as soon as
// the previous answer is read) and the deps the server needs.
import { Agent, request } from 'node:http';
import { Registry } from 'prom-client';

/** Runs `connections` keep-alive request loops against `url` for `durationMs`; returns completed requests per second. */
export async function loadLoop(url, { connections = 8, durationMs = 2_000 } = {}) {
  const agent = new Agent({ keepAlive: true, maxSockets: connections });
  const target = new URL(url);
  const deadline = performance.now() + durationMs;
  let done = 0;
  let failed = 0;
  const one = () =>
    new Promise((resolve) => {
      const req = request({ host: target.hostname, port: target.port, path: target.pathname + target.search, agent }, (res) => {
        res.resume();
        res.on('end', () => {
          if (res.statusCode === 200) done++;
          else failed++;
          resolve();
        });
      });
      req.on('error', () => {
        failed++;
        resolve();
      });
      req.end();
    });
  const t0 = performance.now();
  await Promise.all(
    Array.from({ length: connections }, async () => {
      while (performance.now() < deadline) await one();
    }),
  );
  const seconds = (performance.now() - t0) / 1000;
  agent.destroy();
  if (failed > 0) throw new Error(`${failed} requests to ${url} failed`);
  return done / seconds;
}

export const LIMITS = { enabled: true, warning: 2, alarm: 3 };

export function feederInfo(id, lastTs) {
  return {
    id,
    nominalHz: 60,
    nominalVoltageLN: 7200,
    limits: { voltageUnbalance: LIMITS, zeroSequenceVoltage: { enabled: true, warning: 2, alarm: 4 }, currentUnbalance: { enabled: true, warning: 15, alarm: 25 }, staleAfterMs: 30_000 },
    lastTs,
    sources: ['bench'],
  };
}

/** ServerDeps around a store and hub, with `latest` from a map; logger off, no token, no rate limit. */
export function benchDeps({ store, live, feeders, latest, dashboardDir = null, now = Date.now() }) {
  return {
    store,
    live,
    latest: (id) => latest.get(id) ?? null,
    feeders: () => feeders,
    status: () => ({ demo: true, sources: [], store: store.health(), startedAt: now, rejected: {} }),
    metrics: new Registry(),
    dashboardDir,
    security: { host: '127.0.0.1', token: null, rateLimitPerMin: 0, bodyLimitBytes: 65_536, tlsConfigured: false, acknowledgeInsecure: false },
    logger: false,
    now: () => now,
  };
}
