import type { FastifyInstance } from 'fastify';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildServer } from '../../../agent/server/build-server.js';
import { alarm, faultEvent, makeDeps, type TestDeps } from '../../helpers/server-fixture.js';

const NOW = Date.parse('2026-03-02T12:00:00.000Z');
const HOUR = 3_600_000;
const DAY = 24 * HOUR;

let app: FastifyInstance;
let deps: TestDeps;

beforeAll(async () => {
  deps = makeDeps({ now: NOW });
  await deps.store.writeResults([]);
  await deps.store.writeAlarm(alarm('EH-F1', NOW - 10 * DAY, 'current-unbalance', 'raised', 26, 25));
  await deps.store.writeAlarm(alarm('EH-F1', NOW - 2 * HOUR, 'open-phase', 'raised', 0.98, 0.4, 'c'));
  await deps.store.writeAlarm(alarm('EH-F2', NOW - 3 * HOUR, 'voltage-unbalance', 'raised', 3.2, 3));
  await deps.store.writeAlarm(alarm('EH-F2', NOW - 1 * HOUR, 'voltage-unbalance', 'cleared', 2.7, 3));
  await deps.store.writeEvent(faultEvent('EH-F1', NOW - 5 * HOUR));
  await deps.store.writeEvent(faultEvent('EH-F3', NOW - 9 * DAY));
  app = await buildServer(deps);
});
afterAll(async () => {
  await app.close();
});

async function getJson(url: string) {
  const res = await app.inject({ method: 'GET', url });
  return { status: res.statusCode, body: res.json() as Record<string, any> };
}

describe('GET /api/alarms', () => {
  it('with active=true lists only alarms whose latest transition is raised, old ones included', async () => {
    const { status, body } = await getJson('/api/alarms?active=true');
    expect(status).toBe(200);
    const keys = body.alarms.map((a: { feeder: string; condition: string }) => `${a.feeder}/${a.condition}`);
    expect(keys).toEqual(['EH-F1/current-unbalance', 'EH-F1/open-phase']);
  });

  it('without active lists the transitions of the last 7 days, oldest first, with ISO times', async () => {
    const { body } = await getJson('/api/alarms');
    expect(body.active).toBe(false);
    expect(body.alarms.map((a: { ts: string }) => a.ts)).toEqual([
      new Date(NOW - 3 * HOUR).toISOString(),
      new Date(NOW - 2 * HOUR).toISOString(),
      new Date(NOW - 1 * HOUR).toISOString(),
    ]);
  });

  it('filters by feeder and range', async () => {
    const { body } = await getJson(`/api/alarms?feeder=EH-F2&from=${new Date(NOW - 2 * HOUR).toISOString()}`);
    expect(body.alarms).toHaveLength(1);
    expect(body.alarms[0].state).toBe('cleared');
  });

  it('attaches the switching caution to open-phase alarms', async () => {
    const { body } = await getJson('/api/alarms?active=true&feeder=EH-F1');
    const open = body.alarms.find((a: { condition: string }) => a.condition === 'open-phase');
    expect(open.caution).toMatch(/switching procedures, local codes and licensed practice/);
    expect(open.phase).toBe('c');
  });

  it('answers 400 naming "active" when it is not a boolean', async () => {
    const { status, body } = await getJson('/api/alarms?active=maybe');
    expect(status).toBe(400);
    expect(body.error.code).toBe('API_BAD_PARAMETER');
    expect(body.error.message).toContain('active');
  });

  it('answers 404 for an unknown feeder filter', async () => {
    const { status, body } = await getJson('/api/alarms?feeder=ZZ-1');
    expect(status).toBe(404);
    expect(body.error.code).toBe('API_NOT_FOUND');
  });
});

describe('GET /api/events', () => {
  it('lists classified disturbances of the last 7 days by default', async () => {
    const { status, body } = await getJson('/api/events');
    expect(status).toBe(200);
    expect(body.events).toHaveLength(1);
    expect(body.events[0]).toMatchObject({ feeder: 'EH-F1', type: 'BG', peakPhase: 'b', ts: new Date(NOW - 5 * HOUR).toISOString() });
  });

  it('includes older events when the range asks for them', async () => {
    const { body } = await getJson(`/api/events?from=${NOW - 30 * DAY}&feeder=EH-F3`);
    expect(body.events).toHaveLength(1);
    expect(body.events[0].feeder).toBe('EH-F3');
  });

  it('answers 400 naming "to" for a malformed time', async () => {
    const { status, body } = await getJson('/api/events?to=2026-13-45');
    expect(status).toBe(400);
    expect(body.error.message).toMatch(/^to:/);
  });
});

describe('GET /api/alarms?active written as a bare flag', () => {
  it('treats ?active with no value as active=true, as the API contract writes it', async () => {
    const res = await app.inject({ method: 'GET', url: '/api/alarms?active' });
    expect(res.statusCode).toBe(200);
    expect(res.json().active).toBe(true);
  });
});
