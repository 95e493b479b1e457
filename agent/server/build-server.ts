/**
 * The HTTP side of the agent: builds the fastify app from its deps without
 * listening (agent/main.ts listens on deps.security.host after
 * assertBindAllowed; tests call inject()). One encapsulated plugin per area.
 */
import Fastify, { LogController, type FastifyInstance, type FastifyRequest } from 'fastify';
import { AgentError } from '../core/errors.js';
import { createContext } from './context.js';
import type { ServerDeps } from './deps.js';
import { errorBody, handleError } from './http-errors.js';
import { alarmsPlugin } from './plugins/alarms.js';
import { dashboardStaticPlugin } from './plugins/dashboard-static.js';
import { eventsPlugin } from './plugins/events.js';
import { feedersPlugin } from './plugins/feeders.js';
import { healthPlugin } from './plugins/health.js';
import { livePlugin } from './plugins/live.js';
import { metricsPlugin, registerServerMetrics } from './plugins/metrics.js';
import { collectRoutes, openApiPlugin } from './plugins/openapi.js';
import { TokenCheck, presentedToken, redactUrl } from './security.js';
import { TokenBuckets } from './token-bucket.js';

/** Version of the HTTP API described by /api/openapi.json. */
export const API_VERSION = '1.0.0';

/** Paths that need the access token when one is configured (the dashboard's static files do not: they hold no data). */
function needsToken(path: string): boolean {
  return path.startsWith('/api/') || path === '/metrics';
}

function pathOf(url: string): string {
  const q = url.indexOf('?');
  return q === -1 ? url : url.slice(0, q);
}

export async function buildServer(deps: ServerDeps): Promise<FastifyInstance> {
  const base = {
    bodyLimit: deps.security.bodyLimitBytes,
    // Request lines carry ?token= for SSE: fastify's own request log would print it, so requests are logged here, redacted.
    logController: new LogController({ disableRequestLogging: true }),
    trustProxy: false,
    return503OnClosing: true,
    ...(deps.https != null ? { https: { cert: deps.https.cert, key: deps.https.key } } : {}),
  };
  const app: FastifyInstance = deps.logger === false ? Fastify({ ...base, logger: false }) : (Fastify({ ...base, loggerInstance: deps.logger }) as unknown as FastifyInstance);

  const ctx = createContext(deps);
  const metrics = registerServerMetrics(ctx);
  const tokenCheck = deps.security.token === null ? null : new TokenCheck(deps.security.token);
  const authorized = (req: FastifyRequest): boolean =>
    tokenCheck === null || tokenCheck.matches(presentedToken(req.headers.authorization, (req.query as Record<string, unknown> | undefined)?.token));

  app.setErrorHandler(handleError);
  app.setNotFoundHandler((req, reply) => {
    void reply.code(404).send(errorBody('API_NOT_FOUND', `No route ${req.method} ${pathOf(redactUrl(req.url)).slice(0, 100)}; GET /api/openapi.json lists the routes`));
  });

  if (deps.security.rateLimitPerMin > 0) {
    const buckets = new TokenBuckets(deps.security.rateLimitPerMin, ctx.now);
    app.addHook('onRequest', async (req, reply) => {
      const waitMs = buckets.take(req.ip);
      if (waitMs > 0) {
        metrics.rateLimited.inc();
        void reply.header('retry-after', String(Math.ceil(waitMs / 1000)));
        throw new AgentError('API_RATE_LIMITED', `Too many requests from this address (limit ${deps.security.rateLimitPerMin} per minute); retry in ${Math.ceil(waitMs / 1000)} s`);
      }
    });
  }
  if (tokenCheck !== null) {
    app.addHook('onRequest', async (req, reply) => {
      if (!needsToken(pathOf(req.url))) return;
      if (!authorized(req)) {
        metrics.unauthorized.inc();
        void reply.header('www-authenticate', 'Bearer realm="seqmon"');
        throw new AgentError('API_UNAUTHORIZED', 'Missing or wrong access token: send Authorization: Bearer <token> (or ?token= for /api/live)');
      }
    });
  }
  app.addHook('onResponse', async (req, reply) => {
    metrics.requests.inc({ method: req.method, route: req.routeOptions.url ?? 'unmatched', status: String(reply.statusCode) });
    req.log.debug({ method: req.method, url: redactUrl(req.url), status: reply.statusCode, ms: Math.round(reply.elapsedTime) }, 'request');
  });

  const routes = collectRoutes(app);
  await app.register(feedersPlugin, { ctx });
  await app.register(alarmsPlugin, { ctx });
  await app.register(eventsPlugin, { ctx });
  await app.register(livePlugin, { ctx });
  await app.register(metricsPlugin, { ctx });
  await app.register(healthPlugin, { ctx, authorized });
  await app.register(openApiPlugin, { routes, version: API_VERSION });
  if (deps.dashboardDir !== null) await app.register(dashboardStaticPlugin, { dir: deps.dashboardDir });
  return app;
}

export { assertBindAllowed } from './security.js';
