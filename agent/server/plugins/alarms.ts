/** Alarm routes: active alarms, or the transitions of a range, optionally of one feeder. */
import type { FastifyPluginAsync } from 'fastify';
import type { PluginOptions } from '../context.js';
import { alarmSchema, errorResponses } from '../schemas.js';
import { DAY_MS, parseRange } from '../time-range.js';
import { alarmToWire } from '../wire.js';

/** A response never carries more than this many transitions (the newest are kept). */
export const MAX_ALARMS = 5_000;

interface AlarmQs {
  active?: boolean;
  feeder?: string;
  from?: string;
  to?: string;
}

export const alarmsPlugin: FastifyPluginAsync<PluginOptions> = async (app, { ctx }) => {
  app.get<{ Querystring: AlarmQs }>('/api/alarms', {
    // `?active` on its own (as the API contract writes it) means active=true.
    preValidation: async (req) => {
      const q = req.query as Record<string, unknown>;
      if (q.active === '') q.active = true;
    },
    schema: {
      summary: 'Active alarms (active=true), or alarm transitions in a range (default last 7 days), oldest first',
      querystring: {
        type: 'object',
        properties: {
          active: { type: 'boolean' },
          feeder: { type: 'string', pattern: '^[A-Za-z0-9_.-]{1,64}$' },
          from: { type: 'string' },
          to: { type: 'string' },
          token: { type: 'string' },
        },
        additionalProperties: false,
      },
      response: {
        200: { type: 'object', properties: { active: { type: 'boolean' }, from: { type: ['string', 'null'] }, to: { type: ['string', 'null'] }, truncated: { type: 'boolean' }, alarms: { type: 'array', items: alarmSchema } } },
        ...errorResponses,
      },
    },
  }, async (req) => {
    const q = req.query;
    if (q.feeder !== undefined) await ctx.requireFeeder(q.feeder);
    if (q.active === true) {
      const all = await ctx.deps.store.activeAlarms();
      const alarms = all.filter((a) => q.feeder === undefined || a.feeder === q.feeder).sort((x, y) => x.ts - y.ts);
      return { active: true, from: null, to: null, truncated: false, alarms: alarms.map(alarmToWire) };
    }
    const range = parseRange(q, ctx.now(), 7 * DAY_MS);
    const found = await ctx.deps.store.queryAlarms({ feeder: q.feeder, from: range.from, to: range.to });
    const truncated = found.length > MAX_ALARMS;
    const kept = truncated ? found.slice(found.length - MAX_ALARMS) : found;
    return { active: false, from: new Date(range.from).toISOString(), to: new Date(range.to).toISOString(), truncated, alarms: kept.map(alarmToWire) };
  });
};
