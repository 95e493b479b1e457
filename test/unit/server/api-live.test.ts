import { request, type IncomingMessage } from 'node:http';
import type { FastifyInstance } from 'fastify';
import { afterEach, describe, expect, it } from 'vitest';
import { LiveHub } from '../../../agent/publish/live-hub.js';
import { buildServer } from '../../../agent/server/build-server.js';
import { freePort, waitFor } from '../../helpers/free-port.js';
import { alarm, makeDeps, makeResult } from '../../helpers/server-fixture.js';

const NOW = Date.parse('2026-03-02T12:00:00.000Z');
const V = { pos: [7200, 0], neg: [72, -60], zero: [10, 0] } as const;
const I = { pos: [200, -25], neg: [20, 150], zero: [3, 0] } as const;

let app: FastifyInstance | null = null;
const responses: IncomingMessage[] = [];
afterEach(async () => {
  for (const r of responses.splice(0)) r.destroy();
  await app?.close();
  app = null;
});

async function start(hub: LiveHub, heartbeatMs = 15_000, token: string | null = null) {
  const deps = makeDeps({ now: NOW, hub, liveHeartbeatMs: heartbeatMs, security: { token } });
  app = await buildServer(deps);
  const port = await freePort();
  await app.listen({ port, host: '127.0.0.1' });
  return { port, deps };
}

function open(port: number, path: string): Promise<IncomingMessage> {
  return new Promise((resolve, reject) => {
    const req = request({ host: '127.0.0.1', port, path, method: 'GET' }, (res) => {
      responses.push(res);
      resolve(res);
    });
    req.on('error', reject);
    req.end();
  });
}

function collect(res: IncomingMessage): { text: () => string } {
  let text = '';
  res.setEncoding('utf8');
  res.on('data', (c: string) => (text += c));
  return { text: () => text };
}

describe('GET /api/live', () => {
  it('streams text/event-stream with a hello, then results and alarm changes as they are published', async () => {
    const hub = new LiveHub();
    const { port } = await start(hub);
    const res = await open(port, '/api/live');
    expect(res.statusCode).toBe(200);
    expect(res.headers['content-type']).toContain('text/event-stream');
    const got = collect(res);
    await waitFor(() => got.text().includes('event: hello'), 2_000);
    hub.publishResult(makeResult('EH-F1', NOW, '3s', V, I));
    hub.publishAlarm(alarm('EH-F1', NOW, 'open-phase', 'raised', 0.98, 0.4, 'c'));
    await waitFor(() => got.text().includes('event: alarm'), 2_000);
    expect(got.text()).toMatch(/event: result\ndata: \{"ts":"2026-03-02T12:00:00.000Z","feeder":"EH-F1"/);
    expect(got.text()).toContain('"condition":"open-phase"');
  });

  it('sends heartbeat comments on an idle stream', async () => {
    const { port } = await start(new LiveHub(), 40);
    const got = collect(await open(port, '/api/live'));
    await waitFor(() => got.text().includes(': heartbeat'), 2_000);
  });

  it('answers 404 before streaming when the feeder filter names an unknown feeder', async () => {
    const { port } = await start(new LiveHub());
    const res = await open(port, '/api/live?feeder=NOPE');
    expect(res.statusCode).toBe(404);
  });

  it('accepts the token as ?token= and refuses the stream without it', async () => {
    const { port } = await start(new LiveHub(), 15_000, 'live-token-123');
    expect((await open(port, '/api/live')).statusCode).toBe(401);
    expect((await open(port, '/api/live?token=live-token-123')).statusCode).toBe(200);
  });

  it('drops a client that stops reading, counts it in /metrics, and keeps memory bounded', async () => {
    const hub = new LiveHub({ bufferCapacity: 32 });
    const { port } = await start(hub);
    const res = await open(port, '/api/live');
    res.pause(); // a client that never reads: the kernel buffers fill, then the hub's bounded queue
    await waitFor(() => hub.stats().subscribers === 1, 2_000);
    const big = makeResult('EH-F1', NOW, '3s', V, I);
    // Bounded: each message is ~1 kB; loopback socket buffers hold a few MB at most.
    for (let k = 0; k < 200_000 && hub.stats().dropped === 0; k++) {
      hub.publishResult({ ...big, ts: NOW + 3000 * k });
      if (k % 200 === 0) await new Promise((r) => setImmediate(r));
    }
    expect(hub.stats().dropped).toBe(1);
    expect(hub.stats().subscribers).toBe(0);
    const metrics = await app!.inject({ method: 'GET', url: '/metrics' });
    expect(metrics.body).toMatch(/seqmon_live_clients_dropped_total 1/);
  });
});
