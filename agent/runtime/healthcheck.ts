/**
 * Container health check (the Dockerfile's HEALTHCHECK runs this file): exits
 * 0 when GET /healthz answers 2xx within the timeout, 1 otherwise. Slim
 * images have no curl, so this uses Node's own fetch; for an https listener
 * (http.tls) it uses node:https without certificate verification, since it
 * only ever talks to the process on its own loopback.
 *
 * SEQMON_HEALTHCHECK_URL overrides the URL; by default it is
 * http://127.0.0.1:${SEQMON_HTTP_PORT:-8080}/healthz.
 */
import { request } from 'node:https';
import { pathToFileURL } from 'node:url';

export function healthUrl(env: Readonly<Record<string, string | undefined>>): string {
  const explicit = env.SEQMON_HEALTHCHECK_URL;
  if (explicit !== undefined && explicit.trim() !== '') return explicit.trim();
  const port = env.SEQMON_HTTP_PORT !== undefined && /^[0-9]{1,5}$/.test(env.SEQMON_HTTP_PORT.trim()) ? env.SEQMON_HTTP_PORT.trim() : '8080';
  return `http://127.0.0.1:${port}/healthz`;
}

/** True when the URL answers with a 2xx status within timeoutMs. */
export async function checkHealth(url: string, timeoutMs: number, token?: string): Promise<boolean> {
  const headers: Record<string, string> = token === undefined || token === '' ? {} : { authorization: `Bearer ${token}` };
  if (url.startsWith('https:')) {
    return new Promise<boolean>((resolve) => {
      const req = request(url, { method: 'GET', headers, rejectUnauthorized: false, timeout: timeoutMs }, (res) => {
        res.resume();
        resolve((res.statusCode ?? 0) >= 200 && (res.statusCode ?? 0) < 300);
      });
      req.on('timeout', () => req.destroy(new Error('timeout')));
      req.on('error', () => resolve(false));
      req.end();
    });
  }
  try {
    const res = await fetch(url, { headers, signal: AbortSignal.timeout(timeoutMs) });
    await res.arrayBuffer();
    return res.ok;
  } catch {
    return false;
  }
}

if (process.argv[1] !== undefined && import.meta.url === pathToFileURL(process.argv[1]).href) {
  checkHealth(healthUrl(process.env), 4_000, process.env.SEQMON_HTTP_TOKEN).then(
    (ok) => {
      process.exitCode = ok ? 0 : 1;
    },
    () => {
      process.exitCode = 1;
    },
  );
}
