/**
 * JSON schemas shared by the route plugins. Fastify validates params and
 * query strings with them and compiles a serializer from each response
 * schema; the OpenAPI document is built from the same objects.
 */
import { ALARM_CONDITIONS, FAULT_TYPES } from '../core/detect/types.js';
import { AGGREGATE_WINDOWS } from '../core/result.js';
import { TREND_NUMERIC_COLUMNS } from './trend-columns.js';

const num = { type: 'number' } as const;
const numOrNull = { type: ['number', 'null'] } as const;
const strOrNull = { type: ['string', 'null'] } as const;

export const errorSchema = {
  type: 'object',
  properties: {
    error: {
      type: 'object',
      properties: { code: { type: 'string' }, message: { type: 'string' } },
      required: ['code', 'message'],
    },
  },
  required: ['error'],
} as const;

/** Error responses every route may give. */
export const errorResponses = {
  400: errorSchema,
  401: errorSchema,
  404: errorSchema,
  429: errorSchema,
  500: errorSchema,
} as const;

export const feederParams = {
  type: 'object',
  properties: { id: { type: 'string', pattern: '^[A-Za-z0-9_.-]{1,64}$' } },
  required: ['id'],
} as const;

const instant = { type: 'string', description: 'ISO-8601 time or epoch milliseconds' } as const;

export const rangeQuery = {
  type: 'object',
  properties: { from: instant, to: instant, token: { type: 'string' } },
  additionalProperties: false,
} as const;

export const trendQuery = {
  type: 'object',
  properties: {
    from: instant,
    to: instant,
    window: { type: 'string', enum: [...AGGREGATE_WINDOWS], description: 'chosen from the span when absent' },
    fields: { type: 'string', description: 'comma-separated column names to return (JSON only); all when absent' },
    token: { type: 'string' },
  },
  additionalProperties: false,
} as const;

const phasor = { type: ['array', 'null'], items: numOrNull } as const;
const phaseTriple = { type: ['object', 'null'], properties: { a: num, b: num, c: num } } as const;
const lineTriple = { type: ['object', 'null'], properties: { ab: num, bc: num, ca: num } } as const;

const quantity = {
  type: ['object', 'null'],
  properties: { zero: phasor, pos: phasor, neg: phasor, u2: numOrNull, u0: numOrNull, rms: phaseTriple, thd: phaseTriple },
} as const;
const voltage = {
  type: ['object', 'null'],
  properties: { ...quantity.properties, rmsLL: lineTriple, lvur: numOrNull, pvur: numOrNull },
} as const;

/** resultToWire() output (the `sequence` message of shared/ARCHITECTURE.md). */
export const resultSchema = {
  type: 'object',
  properties: {
    ts: { type: 'string' },
    feeder: { type: 'string' },
    window: { type: 'string' },
    durationMs: num,
    freq: numOrNull,
    flagged: { type: 'boolean' },
    count: num,
    v: voltage,
    i: quantity,
  },
} as const;

export const alarmSchema = {
  type: 'object',
  properties: {
    ts: { type: 'string' },
    feeder: { type: 'string' },
    condition: { type: 'string', enum: [...ALARM_CONDITIONS] },
    state: { type: 'string', enum: ['raised', 'cleared'] },
    level: { type: 'string', enum: ['warning', 'alarm'] },
    value: numOrNull,
    limit: numOrNull,
    phase: strOrNull,
    message: { type: 'string' },
    caution: strOrNull,
  },
} as const;

export const eventSchema = {
  type: 'object',
  properties: {
    ts: { type: 'string' },
    feeder: { type: 'string' },
    type: { type: 'string', enum: [...FAULT_TYPES] },
    durationMs: num,
    peakCurrent: num,
    peakPhase: { type: 'string' },
    i0OverI1: numOrNull,
    i2OverI1: numOrNull,
    message: { type: 'string' },
    caution: { type: 'string' },
  },
} as const;

const limitPair = { type: 'object', properties: { enabled: { type: 'boolean' }, warning: num, alarm: num } } as const;

export const feederInfoSchema = {
  type: 'object',
  properties: {
    id: { type: 'string' },
    nominalHz: num,
    nominalVoltageLN: numOrNull,
    limits: {
      type: 'object',
      properties: {
        voltageUnbalance: limitPair,
        zeroSequenceVoltage: limitPair,
        currentUnbalance: limitPair,
        staleAfterMs: num,
      },
    },
    lastTs: strOrNull,
    sources: { type: 'array', items: { type: 'string' } },
  },
} as const;

const columnProps: Record<string, unknown> = {
  ts: { type: 'array', items: { type: 'string' } },
  flagged: { type: 'array', items: { type: 'boolean' } },
};
for (const c of TREND_NUMERIC_COLUMNS) columnProps[c.key] = { type: 'array', items: numOrNull, description: `unit ${c.unit}` };

export const trendSchema = {
  type: 'object',
  properties: {
    feeder: { type: 'string' },
    window: { type: 'string' },
    from: { type: 'string' },
    to: { type: 'string' },
    count: num,
    units: { type: 'object', additionalProperties: { type: 'string' } },
    columns: { type: 'object', properties: columnProps },
  },
} as const;

const summary = { type: 'object', properties: { count: num, mean: numOrNull, max: numOrNull, p95: numOrNull } } as const;
const phaseLoad = { type: 'object', properties: { meanA: numOrNull, peakA: numOrNull } } as const;

export const balanceSchema = {
  type: 'object',
  properties: {
    feeder: { type: 'string' },
    window: { type: 'string' },
    from: { type: 'string' },
    to: { type: 'string' },
    samples: num,
    phases: { type: 'object', properties: { a: phaseLoad, b: phaseLoad, c: phaseLoad } },
    heaviest: strOrNull,
    lightest: strOrNull,
    spreadA: numOrNull,
    maxDeviationPercent: numOrNull,
    currentU2: summary,
    caution: { type: 'string' },
  },
} as const;

export const complianceSchema = {
  type: 'object',
  properties: {
    feeder: { type: 'string' },
    from: { type: 'string' },
    to: { type: 'string' },
    window: { type: 'string' },
    basis: { type: 'string' },
    limitPercent: num,
    requiredFraction: num,
    expected: num,
    valid: num,
    flagged: num,
    withoutValue: num,
    coverage: num,
    fractionWithinLimit: numOrNull,
    p95: numOrNull,
    max: numOrNull,
    mean: numOrNull,
    verdict: { type: 'string', enum: ['pass', 'fail', 'no-data'] },
    pass: { type: ['boolean', 'null'] },
    fullPeriod: { type: 'boolean' },
  },
} as const;

const sourceStatus = {
  type: 'object',
  properties: { name: { type: 'string' }, state: { type: 'string' }, since: { type: 'string' }, lastError: strOrNull },
} as const;

export const healthSchema = {
  type: 'object',
  properties: {
    status: { type: 'string', enum: ['ok', 'degraded'] },
    demo: { type: 'boolean' },
    uptimeS: num,
    sources: { type: 'array', items: sourceStatus },
    store: {
      type: 'object',
      properties: { kind: { type: 'string' }, ok: { type: 'boolean' }, detail: strOrNull, queued: num, queueCapacity: num },
    },
    rejected: { type: 'object', additionalProperties: { type: 'object', additionalProperties: num } },
    live: { type: 'object', properties: { subscribers: num, dropped: num, published: num } },
  },
  required: ['status'],
} as const;

declare module 'fastify' {
  /** Documentation keys read by the OpenAPI plugin (fastify itself ignores them). */
  interface FastifySchema {
    summary?: string;
    produces?: string[];
    hide?: boolean;
  }
}
