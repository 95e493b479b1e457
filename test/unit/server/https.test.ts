/** HTTPS: with a certificate configured the server speaks TLS, so binding beyond loopback is never plain text by accident. */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { request } from 'node:https';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { FastifyInstance } from 'fastify';
import { afterEach, describe, expect, it } from 'vitest';
import { buildServer } from '../../../agent/server/build-server.js';
import { makeDeps } from '../../helpers/server-fixture.js';

const NOW = Date.parse('2026-03-02T12:00:00.000Z');
let app: FastifyInstance | null = null;
let dir: string | null = null;
afterEach(async () => {
  await app?.close();
  app = null;
  if (dir !== null) rmSync(dir, { recursive: true, force: true });
  dir = null;
});

function selfSigned(): { cert: Buffer; key: Buffer } {
  dir = mkdtempSync(join(tmpdir(), 'seqmon-tls-'));
  execFileSync('openssl', ['req', '-x509', '-newkey', 'rsa:2048', '-nodes', '-keyout', join(dir, 'key.pem'), '-out', join(dir, 'cert.pem'), '-days', '1', '-subj', '/CN=127.0.0.1'], { stdio: 'ignore' });
  return { cert: readFileSync(join(dir, 'cert.pem')), key: readFileSync(join(dir, 'key.pem')) };
}

function get(port: number, path: string, ca: Buffer): Promise<{ status: number; body: string; protocol: string }> {
  return new Promise((resolve, reject) => {
    const req = request({ host: '127.0.0.1', port, path, ca, servername: '127.0.0.1', checkServerIdentity: () => undefined }, (res) => {
      let body = '';
      const protocol = (res.socket as { getProtocol?: () => string | null } | null)?.getProtocol?.() ?? '';
      res.on('data', (d: Buffer) => (body += d.toString()));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, body, protocol }));
    });
    req.on('error', reject);
    req.end();
  });
}

describe('HTTPS', () => {
  it('serves the API over TLS when a certificate and key are given', async () => {
    const tls = selfSigned();
    app = await buildServer({ ...makeDeps({ now: NOW }), https: tls });
    await app.listen({ host: '127.0.0.1', port: 0 });
    const port = (app.server.address() as { port: number }).port;
    const res = await get(port, '/api/feeders', tls.cert);
    expect(res.status).toBe(200);
    expect(res.protocol).toMatch(/^TLSv1\.[23]$/);
    expect(JSON.parse(res.body).feeders.length).toBeGreaterThan(0);
  });
});
