/** GET /metrics: Prometheus text exposition of deps.metrics, plus the server's own counters. */
import type { FastifyPluginAsync } from 'fastify';
import { Counter, Gauge, type Registry } from 'prom-client';
import type { PluginOptions } from '../context.js';
import { errorResponses } from '../schemas.js';

/** Registers a metric, replacing one of the same name left by an earlier server on the same registry. */
function fresh<T>(registry: Registry, name: string, make: () => T): T {
  if (registry.getSingleMetric(name) !== undefined) registry.removeSingleMetric(name);
  return make();
}

export interface ServerMetrics {
  requests: Counter<'method' | 'route' | 'status'>;
  rateLimited: Counter;
  unauthorized: Counter;
}

export function registerServerMetrics(ctx: PluginOptions['ctx']): ServerMetrics {
  const registry = ctx.deps.metrics;
  const live = ctx.deps.live;
  let droppedSeen = 0;
  fresh(registry, 'seqmon_live_clients', () => new Gauge({
    name: 'seqmon_live_clients',
    help: 'Clients connected to /api/live',
    registers: [registry],
    collect() {
      this.set(live.stats().subscribers);
    },
  }));
  fresh(registry, 'seqmon_live_clients_dropped_total', () => new Counter({
    name: 'seqmon_live_clients_dropped_total',
    help: 'Live clients dropped because their buffer overflowed (too slow to keep up)',
    registers: [registry],
    collect() {
      const now = live.stats().dropped;
      if (now > droppedSeen) this.inc(now - droppedSeen);
      droppedSeen = now;
    },
  }));
  return {
    requests: fresh(registry, 'seqmon_http_requests_total', () => new Counter({
      name: 'seqmon_http_requests_total',
      help: 'HTTP requests answered, by route and status',
      labelNames: ['method', 'route', 'status'] as const,
      registers: [registry],
    })),
    rateLimited: fresh(registry, 'seqmon_http_rate_limited_total', () => new Counter({
      name: 'seqmon_http_rate_limited_total',
      help: 'Requests refused by the per-client rate limit',
      registers: [registry],
    })),
    unauthorized: fresh(registry, 'seqmon_http_unauthorized_total', () => new Counter({
      name: 'seqmon_http_unauthorized_total',
      help: 'Requests refused for a missing or wrong access token',
      registers: [registry],
    })),
  };
}

export const metricsPlugin: FastifyPluginAsync<PluginOptions> = async (app, { ctx }) => {
  app.get('/metrics', {
    schema: {
      summary: 'Prometheus text exposition format',
      querystring: { type: 'object', properties: { token: { type: 'string' } } },
      produces: ['text/plain'],
      response: { 200: { type: 'string' }, ...errorResponses },
    },
  }, async (_req, reply) => {
    const text = await ctx.deps.metrics.metrics();
    return reply.type(ctx.deps.metrics.contentType).send(text);
  });
};
