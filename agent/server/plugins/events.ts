/** Disturbance events (classified faults) of a range, optionally of one feeder. */
import type { FastifyPluginAsync } from 'fastify';
import type { PluginOptions } from '../context.js';
import { errorResponses, eventSchema } from '../schemas.js';
import { DAY_MS, parseRange } from '../time-range.js';
import { eventToWire } from '../wire.js';

export const MAX_EVENTS = 5_000;

interface EventQs {
  feeder?: string;
  from?: string;
  to?: string;
}

export const eventsPlugin: FastifyPluginAsync<PluginOptions> = async (app, { ctx }) => {
  app.get<{ Querystring: EventQs }>('/api/events', {
    schema: {
      summary: 'Classified disturbances in a range (default last 7 days), oldest first',
      querystring: {
        type: 'object',
        properties: { feeder: { type: 'string', pattern: '^[A-Za-z0-9_.-]{1,64}$' }, from: { type: 'string' }, to: { type: 'string' }, token: { type: 'string' } },
        additionalProperties: false,
      },
      response: {
        200: { type: 'object', properties: { from: { type: 'string' }, to: { type: 'string' }, truncated: { type: 'boolean' }, events: { type: 'array', items: eventSchema } } },
        ...errorResponses,
      },
    },
  }, async (req) => {
    const q = req.query;
    if (q.feeder !== undefined) await ctx.requireFeeder(q.feeder);
    const range = parseRange(q, ctx.now(), 7 * DAY_MS);
    const found = await ctx.deps.store.queryEvents({ feeder: q.feeder, from: range.from, to: range.to });
    const truncated = found.length > MAX_EVENTS;
    const kept = truncated ? found.slice(found.length - MAX_EVENTS) : found;
    return { from: new Date(range.from).toISOString(), to: new Date(range.to).toISOString(), truncated, events: kept.map(eventToWire) };
  });
};
