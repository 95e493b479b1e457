/**
 * GET /api/live: Server-Sent Events of results, alarm changes and events
 * (WHATWG HTML "Server-sent events"). The hub holds a bounded buffer per
 * client and drops a client that falls too far behind; heartbeat comments
 * keep proxies from closing an idle stream.
 */
import type { ServerResponse } from 'node:http';
import type { FastifyPluginAsync } from 'fastify';
import type { PluginOptions } from '../context.js';
import { errorResponses } from '../schemas.js';

export const DEFAULT_HEARTBEAT_MS = 15_000;
/** Browsers reconnect after this long when the stream breaks (EventSource "retry"). */
const RETRY_MS = 3_000;

interface LiveQs {
  feeder?: string;
}

export const livePlugin: FastifyPluginAsync<PluginOptions> = async (app, { ctx }) => {
  const open = new Set<ServerResponse>();
  const heartbeatMs = ctx.deps.liveHeartbeatMs ?? DEFAULT_HEARTBEAT_MS;

  // End the streams before the server waits for its connections, or close() would wait forever.
  app.addHook('preClose', async () => {
    for (const res of open) res.end();
    open.clear();
  });

  app.get<{ Querystring: LiveQs }>('/api/live', {
    schema: {
      summary: 'Server-Sent Events: "result", "alarm" and "event" messages, JSON in data; heartbeat comments',
      querystring: {
        type: 'object',
        properties: { feeder: { type: 'string', pattern: '^[A-Za-z0-9_.-]{1,64}$' }, token: { type: 'string' } },
        additionalProperties: false,
      },
      produces: ['text/event-stream'],
      response: { 200: { type: 'string', description: 'text/event-stream' }, ...errorResponses },
    },
  }, async (req, reply) => {
    const feeder = req.query.feeder ?? null;
    if (feeder !== null) await ctx.requireFeeder(feeder);
    reply.hijack();
    const res = reply.raw;
    res.writeHead(200, {
      'content-type': 'text/event-stream; charset=utf-8',
      'cache-control': 'no-cache, no-transform',
      connection: 'keep-alive',
      'x-accel-buffering': 'no',
    });
    res.write(`retry: ${RETRY_MS}\nevent: hello\ndata: ${JSON.stringify({ ts: new Date(ctx.now()).toISOString(), feeder })}\n\n`);
    open.add(res);
    let timer: NodeJS.Timeout | null = null;
    const sub = ctx.deps.live.subscribe({
      feeder,
      write: (chunk) => res.write(chunk),
      onDrop: () => {
        req.log.warn({ feeder }, 'live client dropped: it fell too far behind');
        // Drop on purpose: the socket buffer is full, so a polite end() would queue behind it.
        res.destroy();
      },
    });
    const cleanup = (): void => {
      if (timer !== null) clearInterval(timer);
      timer = null;
      sub.close();
      open.delete(res);
    };
    res.on('drain', () => sub.drain());
    res.on('close', cleanup);
    res.on('error', cleanup);
    timer = setInterval(() => sub.comment('heartbeat'), heartbeatMs);
    timer.unref();
  });
};
