/**
 * GET /healthz: "ok" (200) when the store is healthy and every source is
 * connected, else "degraded" (503). With a token configured, a caller
 * without it gets the status word only.
 */
import type { FastifyPluginAsync } from 'fastify';
import { isoTime } from '../../core/result.js';
import type { PluginOptions } from '../context.js';
import type { ServiceStatus } from '../deps.js';
import { healthSchema } from '../schemas.js';
import { redactSecrets } from '../security.js';

export function isHealthy(s: ServiceStatus): boolean {
  return s.store.ok && s.sources.every((src) => src.state === 'connected');
}

export const healthPlugin: FastifyPluginAsync<PluginOptions & { authorized: (req: import('fastify').FastifyRequest) => boolean }> = async (app, { ctx, authorized }) => {
  app.get('/healthz', {
    schema: {
      summary: 'Health: ok (200) or degraded (503), with sources and store status',
      querystring: { type: 'object', properties: { token: { type: 'string' } } },
      response: { 200: healthSchema, 503: healthSchema },
    },
  }, async (req, reply) => {
    const s = ctx.deps.status();
    const status = isHealthy(s) ? 'ok' : 'degraded';
    reply.code(status === 'ok' ? 200 : 503);
    if (!authorized(req)) return { status };
    return {
      status,
      demo: s.demo,
      uptimeS: Math.max(0, Math.round((ctx.now() - s.startedAt) / 1000)),
      sources: s.sources.map((src) => ({ name: src.name, state: src.state, since: isoTime(src.since), lastError: redactSecrets(src.lastError) })),
      store: { ...s.store, detail: redactSecrets(s.store.detail) },
      rejected: s.rejected,
      live: ctx.deps.live.stats(),
    };
  });
};
