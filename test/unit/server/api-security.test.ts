import { Writable } from 'node:stream';
import type { FastifyInstance } from 'fastify';
import { pino } from 'pino';
import { afterEach, describe, expect, it } from 'vitest';
import { isAgentError } from '../../../agent/core/errors.js';
import { assertBindAllowed, buildServer } from '../../../agent/server/build-server.js';
import { OPEN_SECURITY, makeDeps } from '../../helpers/server-fixture.js';

const NOW = Date.parse('2026-03-02T12:00:00.000Z');
const TOKEN = 'correct-horse-battery-staple-7f3a';

let app: FastifyInstance | null = null;
afterEach(async () => {
  await app?.close();
  app = null;
});

describe('access token', () => {
  it('refuses an API call without the token with 401 API_UNAUTHORIZED', async () => {
    app = await buildServer(makeDeps({ now: NOW, security: { token: TOKEN } }));
    const res = await app.inject({ method: 'GET', url: '/api/feeders' });
    expect(res.statusCode).toBe(401);
    expect(res.json().error.code).toBe('API_UNAUTHORIZED');
    expect(res.headers['www-authenticate']).toContain('Bearer');
  });

  it('refuses a wrong token of the same length', async () => {
    app = await buildServer(makeDeps({ now: NOW, security: { token: TOKEN } }));
    const wrong = TOKEN.slice(0, -1) + 'b';
    const res = await app.inject({ method: 'GET', url: '/api/feeders', headers: { authorization: `Bearer ${wrong}` } });
    expect(res.statusCode).toBe(401);
  });

  it('accepts Authorization: Bearer with the right token', async () => {
    app = await buildServer(makeDeps({ now: NOW, security: { token: TOKEN } }));
    const res = await app.inject({ method: 'GET', url: '/api/feeders', headers: { authorization: `Bearer ${TOKEN}` } });
    expect(res.statusCode).toBe(200);
  });

  it('accepts ?token= (for EventSource, which cannot send headers)', async () => {
    app = await buildServer(makeDeps({ now: NOW, security: { token: TOKEN } }));
    const res = await app.inject({ method: 'GET', url: `/api/feeders/EH-F1/latest?token=${TOKEN}` });
    expect(res.statusCode).toBe(200);
  });

  it('protects /metrics too', async () => {
    app = await buildServer(makeDeps({ now: NOW, security: { token: TOKEN } }));
    expect((await app.inject({ method: 'GET', url: '/metrics' })).statusCode).toBe(401);
  });

  it('gives /healthz without the token its status word only', async () => {
    app = await buildServer(makeDeps({ now: NOW, security: { token: TOKEN } }));
    const res = await app.inject({ method: 'GET', url: '/healthz' });
    expect(res.statusCode).toBe(200);
    expect(res.json()).toEqual({ status: 'ok' });
  });

  it('never echoes the token in an error body', async () => {
    app = await buildServer(makeDeps({ now: NOW, security: { token: TOKEN } }));
    const res = await app.inject({ method: 'GET', url: `/api/nowhere?token=${TOKEN}`, headers: { authorization: `Bearer ${TOKEN}` } });
    expect(res.statusCode).toBe(404);
    expect(res.body).not.toContain(TOKEN);
  });
});

describe('logging', () => {
  it('never writes the token to the log, even at debug level and for failed requests', async () => {
    const lines: string[] = [];
    const sink = new Writable({
      write(chunk, _enc, done) {
        lines.push(String(chunk));
        done();
      },
    });
    const logger = pino({ level: 'debug' }, sink);
    app = await buildServer({ ...makeDeps({ now: NOW, security: { token: TOKEN } }), logger });
    await app.inject({ method: 'GET', url: `/api/feeders?token=${TOKEN}` });
    await app.inject({ method: 'GET', url: '/api/feeders', headers: { authorization: `Bearer ${TOKEN}` } });
    await app.inject({ method: 'GET', url: `/api/feeders/NOPE/trend?token=${TOKEN}` });
    await app.inject({ method: 'GET', url: '/api/feeders?token=wrong-guess' });
    expect(lines.length).toBeGreaterThan(0);
    expect(lines.join('')).not.toContain(TOKEN);
    expect(lines.join('')).toContain('token=[redacted]');
  });
});

describe('rate limit', () => {
  it('answers 429 API_RATE_LIMITED with Retry-After once a client exceeds its per-minute budget', async () => {
    app = await buildServer(makeDeps({ now: NOW, security: { rateLimitPerMin: 5 } }));
    const codes: number[] = [];
    for (let k = 0; k < 6; k++) codes.push((await app.inject({ method: 'GET', url: '/api/feeders' })).statusCode);
    expect(codes).toEqual([200, 200, 200, 200, 200, 429]);
    const res = await app.inject({ method: 'GET', url: '/api/feeders' });
    expect(res.json().error.code).toBe('API_RATE_LIMITED');
    // 5 per minute refill one token per 12 s.
    expect(Number(res.headers['retry-after'])).toBe(12);
  });

  it('counts each client address separately', async () => {
    app = await buildServer(makeDeps({ now: NOW, security: { rateLimitPerMin: 2 } }));
    for (let k = 0; k < 2; k++) await app.inject({ method: 'GET', url: '/api/feeders', remoteAddress: '127.0.0.2' });
    expect((await app.inject({ method: 'GET', url: '/api/feeders', remoteAddress: '127.0.0.2' })).statusCode).toBe(429);
    expect((await app.inject({ method: 'GET', url: '/api/feeders', remoteAddress: '127.0.0.3' })).statusCode).toBe(200);
  });
});

describe('request size limit', () => {
  it('refuses a body larger than bodyLimitBytes with 413', async () => {
    app = await buildServer(makeDeps({ now: NOW, security: { bodyLimitBytes: 100 } }));
    app.post('/api/echo-test', async () => ({ ok: true }));
    const res = await app.inject({ method: 'POST', url: '/api/echo-test', payload: { pad: 'x'.repeat(500) } });
    expect(res.statusCode).toBe(413);
    expect(res.json().error.code).toBe('API_BAD_PARAMETER');
  });
});

describe('assertBindAllowed', () => {
  it('allows loopback addresses over plain HTTP', () => {
    for (const host of ['127.0.0.1', '127.0.0.53', 'localhost', '::1']) expect(() => assertBindAllowed({ ...OPEN_SECURITY, host })).not.toThrow();
  });

  it('refuses a non-loopback address without TLS or acknowledgement with API_INSECURE_BIND', () => {
    let caught: unknown = null;
    try {
      assertBindAllowed({ ...OPEN_SECURITY, host: '0.0.0.0' });
    } catch (e) {
      caught = e;
    }
    expect(isAgentError(caught) && caught.code).toBe('API_INSECURE_BIND');
  });

  it('allows a non-loopback address with TLS, or with the explicit acknowledgement', () => {
    expect(() => assertBindAllowed({ ...OPEN_SECURITY, host: '10.1.2.3', tlsConfigured: true })).not.toThrow();
    expect(() => assertBindAllowed({ ...OPEN_SECURITY, host: '10.1.2.3', acknowledgeInsecure: true })).not.toThrow();
  });
});
