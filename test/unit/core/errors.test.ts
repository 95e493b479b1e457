/** Keeps the error-code table in docs/errors.md and the codes in agent/core/errors.ts in step (both directions). */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { AgentError, ERROR_CODES } from '../../../agent/core/errors.js';

const doc = readFileSync(new URL('../../../docs/errors.md', import.meta.url), 'utf8');
const documented = new Set([...doc.matchAll(/^\| `([A-Z0-9_]+)` \|/gm)].map((m) => m[1]!));

describe('error codes', () => {
  it('documents every code the agent can raise in docs/errors.md', () => {
    const missing = Object.keys(ERROR_CODES).filter((c) => !documented.has(c));
    expect(missing).toEqual([]);
  });

  it('documents no code that no longer exists', () => {
    const stale = [...documented].filter((c) => !(c in ERROR_CODES));
    expect(stale).toEqual([]);
  });

  it('carries its code, message and details on AgentError', () => {
    const e = new AgentError('CFG_INVALID', 'mqtt.url: expected a URL', { details: { path: 'mqtt.url' } });
    expect(e).toBeInstanceOf(Error);
    expect(e.code).toBe('CFG_INVALID');
    expect(e.details).toEqual({ path: 'mqtt.url' });
  });
});
