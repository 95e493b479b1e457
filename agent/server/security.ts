/**
 * Who may talk to the server: the bind check, the access token and the
 * per-client rate limit. Tokens are compared in constant time and never
 * logged (the request serializer drops the query string's token).
 */
import { createHash, timingSafeEqual } from 'node:crypto';
import { isIP } from 'node:net';
import { AgentError } from '../core/errors.js';
import type { SecuritySettings } from './deps.js';

const LOOPBACK_NAMES = new Set(['localhost', '::1', '[::1]']);

export function isLoopbackHost(host: string): boolean {
  if (LOOPBACK_NAMES.has(host)) return true;
  // 127.0.0.0/8 is loopback (RFC 1122 §3.2.1.3).
  return isIP(host) === 4 && host.startsWith('127.');
}

/**
 * Refuses to listen beyond loopback over plain HTTP unless the operator says
 * so explicitly: readings of a distribution network are operational data.
 */
export function assertBindAllowed(security: Pick<SecuritySettings, 'host' | 'tlsConfigured' | 'acknowledgeInsecure'>): void {
  if (isLoopbackHost(security.host)) return;
  if (security.tlsConfigured || security.acknowledgeInsecure) return;
  throw new AgentError(
    'API_INSECURE_BIND',
    `Refusing to serve plain HTTP on ${security.host}: configure TLS, set an explicit insecure acknowledgement, or bind 127.0.0.1`,
    { details: { host: security.host } },
  );
}

/** SHA-256 both sides first so the comparison takes the same time whatever the lengths. */
function digest(s: string): Buffer {
  return createHash('sha256').update(s, 'utf8').digest();
}

export class TokenCheck {
  private readonly expected: Buffer;
  constructor(token: string) {
    this.expected = digest(token);
  }
  matches(presented: string | null): boolean {
    if (presented === null) return false;
    return timingSafeEqual(this.expected, digest(presented));
  }
}

/** The token a request presents: Authorization: Bearer, else ?token= (EventSource cannot set headers). */
export function presentedToken(authorization: string | undefined, queryToken: unknown): string | null {
  if (authorization !== undefined) {
    const m = /^Bearer\s+(\S+)\s*$/i.exec(authorization);
    if (m !== null) return m[1]!;
  }
  return typeof queryToken === 'string' && queryToken.length > 0 ? queryToken : null;
}

/** Removes token=... from a URL for logs. */
export function redactUrl(url: string): string {
  return url.replace(/([?&]token=)[^&#]*/gi, '$1[redacted]');
}

/** Masks credentials in text that may come from a connection error (user:password@host, password=..., token=...). */
export function redactSecrets(text: string | null): string | null {
  if (text === null) return null;
  return text
    .replace(/(\/\/)[^/@\s:]+:[^/@\s]*@/g, '$1[redacted]@')
    .replace(/((?:password|passwd|pwd|token|secret|apikey|api_key)\s*[=:]\s*)[^\s&,;]+/gi, '$1[redacted]');
}
