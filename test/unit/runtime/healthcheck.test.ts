import { createServer } from 'node:http';
import type { Server } from 'node:http';
import { afterEach, describe, expect, test } from 'vitest';
import { checkHealth, healthUrl } from '../../../agent/runtime/healthcheck.js';
import { freePort } from '../../helpers/free-port.js';
import { Teardown } from '../../helpers/teardown.js';

const teardown = new Teardown();
afterEach(() => teardown.run());

async function serve(status: number): Promise<{ url: string; auth: () => string | undefined }> {
  let auth: string | undefined;
  const server: Server = createServer((req, res) => {
    auth = req.headers.authorization;
    res.statusCode = status;
    res.end('{}');
  });
  await new Promise<void>((r) => server.listen(0, '127.0.0.1', () => r()));
  teardown.add(() => new Promise<void>((r) => server.close(() => r())));
  const { port } = server.address() as { port: number };
  return { url: `http://127.0.0.1:${port}/healthz`, auth: () => auth };
}

describe('container health check', () => {
  test('a 200 from /healthz is healthy, and the bearer token is sent when given', async () => {
    const s = await serve(200);
    expect(await checkHealth(s.url, 2_000, 'abc')).toBe(true);
    expect(s.auth()).toBe('Bearer abc');
  });

  test('a 503 is unhealthy', async () => {
    expect(await checkHealth((await serve(503)).url, 2_000)).toBe(false);
  });

  test('nothing listening is unhealthy', async () => {
    expect(await checkHealth(`http://127.0.0.1:${await freePort()}/healthz`, 2_000)).toBe(false);
  });

  test('the URL follows SEQMON_HTTP_PORT unless SEQMON_HEALTHCHECK_URL is given', () => {
    expect(healthUrl({})).toBe('http://127.0.0.1:8080/healthz');
    expect(healthUrl({ SEQMON_HTTP_PORT: '9000' })).toBe('http://127.0.0.1:9000/healthz');
    expect(healthUrl({ SEQMON_HTTP_PORT: '9000', SEQMON_HEALTHCHECK_URL: 'https://127.0.0.1:8443/healthz' })).toBe('https://127.0.0.1:8443/healthz');
  });
});
