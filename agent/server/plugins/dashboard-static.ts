/**
 * Serves the built dashboard (dist/dashboard) at /. The folder is read once
 * at start-up into memory (a few hundred kB), so only files that exist then
 * can be served and no request path ever reaches the file system.
 */
import { readFileSync, readdirSync, statSync } from 'node:fs';
import { extname, join, relative, sep } from 'node:path';
import type { FastifyPluginAsync } from 'fastify';
import { AgentError } from '../../core/errors.js';
import '../schemas.js';

const TYPES: Record<string, string> = {
  '.html': 'text/html; charset=utf-8',
  '.js': 'text/javascript; charset=utf-8',
  '.css': 'text/css; charset=utf-8',
  '.svg': 'image/svg+xml',
  '.json': 'application/json',
  '.map': 'application/json',
  '.png': 'image/png',
  '.ico': 'image/x-icon',
  '.txt': 'text/plain; charset=utf-8',
};

interface Asset {
  body: Buffer;
  type: string;
}

function readTree(dir: string): Map<string, Asset> {
  const out = new Map<string, Asset>();
  const walk = (d: string): void => {
    for (const name of readdirSync(d)) {
      const full = join(d, name);
      if (statSync(full).isDirectory()) walk(full);
      else {
        const url = '/' + relative(dir, full).split(sep).join('/');
        out.set(url, { body: readFileSync(full), type: TYPES[extname(name)] ?? 'application/octet-stream' });
      }
    }
  };
  walk(dir);
  return out;
}

/** Content-Security-Policy: the dashboard loads only its own files and talks only to this server. */
const CSP = "default-src 'self'; script-src 'self'; style-src 'self' 'unsafe-inline'; img-src 'self' data:; connect-src 'self'; frame-ancestors 'none'; base-uri 'none'; form-action 'none'";

export const dashboardStaticPlugin: FastifyPluginAsync<{ dir: string }> = async (app, { dir }) => {
  const assets = readTree(dir);
  if (!assets.has('/index.html')) {
    throw new AgentError('INTERNAL', `The dashboard folder ${dir} has no index.html: run npm run build`);
  }
  const send = (path: string) => {
    const asset = assets.get(path);
    if (asset === undefined) return null;
    return asset;
  };
  app.get('/', { schema: { hide: true } }, async (_req, reply) => {
    const a = send('/index.html')!;
    return reply.type(a.type).header('cache-control', 'no-cache').header('content-security-policy', CSP).send(a.body);
  });
  app.get<{ Params: { '*': string } }>('/*', { schema: { hide: true } }, async (req, reply) => {
    const path = '/' + req.params['*'];
    const a = send(path);
    if (a === null) throw new AgentError('API_NOT_FOUND', `No such page: ${path.slice(0, 100)}`);
    const r = reply.type(a.type).header('cache-control', 'no-cache').header('x-content-type-options', 'nosniff');
    if (path.endsWith('.html')) r.header('content-security-policy', CSP);
    return r.send(a.body);
  });
};
