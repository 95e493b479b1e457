import { describe, expect, it } from 'vitest';
import { isAgentError } from '../../../agent/core/errors.js';
import { TokenCheck, presentedToken, redactSecrets, redactUrl } from '../../../agent/server/security.js';
import { DAY_MS, chooseWindow, parseInstant, parseRange } from '../../../agent/server/time-range.js';
import { TokenBuckets } from '../../../agent/server/token-bucket.js';

const NOW = Date.parse('2026-03-02T12:00:00.000Z');

function codeOf(fn: () => unknown): string | null {
  try {
    fn();
    return null;
  } catch (e) {
    return isAgentError(e) ? e.code : 'other';
  }
}

describe('parseInstant', () => {
  it('accepts ISO-8601 with Z or an offset, and epoch milliseconds (shared/ARCHITECTURE.md conventions)', () => {
    expect(parseInstant('from', '2026-03-02T14:03:07.250Z')).toBe(Date.UTC(2026, 2, 2, 14, 3, 7, 250));
    expect(parseInstant('from', '2026-03-02T16:03:07.250+02:00')).toBe(Date.UTC(2026, 2, 2, 14, 3, 7, 250));
    expect(parseInstant('from', '1772460187250')).toBe(1772460187250);
  });

  it('rejects other text with API_BAD_PARAMETER naming the parameter', () => {
    expect(codeOf(() => parseInstant('to', 'last tuesday'))).toBe('API_BAD_PARAMETER');
    try {
      parseInstant('to', 'last tuesday');
    } catch (e) {
      expect((e as Error).message).toMatch(/^to:/);
    }
  });
});

describe('parseRange and chooseWindow', () => {
  it('defaults to the given span ending now', () => {
    expect(parseRange({}, NOW, DAY_MS)).toEqual({ from: NOW - DAY_MS, to: NOW });
  });

  it('chooses 3s up to 2 days, 10min up to 60 days, else 2h', () => {
    expect(chooseWindow({ from: 0, to: 2 * DAY_MS }, undefined)).toBe('3s');
    expect(chooseWindow({ from: 0, to: 2 * DAY_MS + 1 }, undefined)).toBe('10min');
    expect(chooseWindow({ from: 0, to: 60 * DAY_MS }, undefined)).toBe('10min');
    expect(chooseWindow({ from: 0, to: 60 * DAY_MS + 1 }, undefined)).toBe('2h');
  });

  it('allows a 7-day 3-s trend but not a 30-day one', () => {
    expect(chooseWindow({ from: 0, to: 7 * DAY_MS }, '3s')).toBe('3s');
    expect(codeOf(() => chooseWindow({ from: 0, to: 30 * DAY_MS }, '3s'))).toBe('API_BAD_PARAMETER');
  });
});

describe('TokenBuckets', () => {
  it('allows a burst of perMinute requests and then one per 60/perMinute seconds', () => {
    let now = 0;
    const b = new TokenBuckets(60, () => now);
    for (let k = 0; k < 60; k++) expect(b.take('x')).toBe(0);
    expect(b.take('x')).toBe(1000);
    now += 1000;
    expect(b.take('x')).toBe(0);
  });

  it('tracks at most maxClients addresses', () => {
    const b = new TokenBuckets(10, () => 0, 100);
    for (let k = 0; k < 1000; k++) b.take(`10.0.${k >> 8}.${k & 255}`);
    expect(b.size).toBe(100);
  });
});

describe('tokens and redaction', () => {
  it('compares tokens whatever their length without throwing', () => {
    const c = new TokenCheck('abc');
    expect(c.matches('abc')).toBe(true);
    expect(c.matches('abcd')).toBe(false);
    expect(c.matches('')).toBe(false);
    expect(c.matches(null)).toBe(false);
  });

  it('prefers the Bearer header and falls back to ?token=', () => {
    expect(presentedToken('Bearer h1', 'q1')).toBe('h1');
    expect(presentedToken(undefined, 'q1')).toBe('q1');
    expect(presentedToken('Basic xyz', undefined)).toBeNull();
  });

  it('removes tokens from URLs and credentials from error text', () => {
    expect(redactUrl('/api/live?feeder=F1&token=s3cret')).toBe('/api/live?feeder=F1&token=[redacted]');
    expect(redactSecrets('connect failed mqtt://ops:pw@10.0.0.5:1883 password=abc')).toBe('connect failed mqtt://[redacted]@10.0.0.5:1883 password=[redacted]');
  });
});
