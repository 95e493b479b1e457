import { Writable } from 'node:stream';
import { describe, expect, test } from 'vitest';
import { parseConfigText } from '../../../agent/config/load-config.js';
import { createLogger, redactedConfig, RejectionLog, REDACTED } from '../../../agent/logging.js';

function capture() {
  const lines: Record<string, unknown>[] = [];
  const stream = new Writable({
    write(chunk: Buffer, _enc, cb) {
      for (const l of chunk.toString().split('\n')) if (l.trim() !== '') lines.push(JSON.parse(l) as Record<string, unknown>);
      cb();
    },
  });
  return { lines, stream };
}

describe('logger', () => {
  test('secrets are censored wherever a caller puts them', async () => {
    const { lines, stream } = capture();
    const log = createLogger({ level: 'info', destination: stream });
    log.info({ password: 'p1', mqtt: { password: 'p2' }, config: { http: { token: 't1' } }, req: { headers: { authorization: 'Bearer t2' } } }, 'x');
    await new Promise((r) => setImmediate(r));
    const text = JSON.stringify(lines);
    for (const s of ['p1', 'p2', 't1', 'Bearer t2']) expect(text).not.toContain(`"${s}"`);
    expect(lines[0]).toMatchObject({ password: REDACTED, mqtt: { password: REDACTED }, config: { http: { token: REDACTED } } });
  });

  test('the level comes from the configuration and lower levels are not written', async () => {
    const { lines, stream } = capture();
    const log = createLogger({ level: 'warn', destination: stream });
    log.info('hidden');
    log.warn('shown');
    await new Promise((r) => setImmediate(r));
    expect(lines.map((l) => l.msg)).toEqual(['shown']);
  });

  test('redactedConfig hides every secret of a loaded configuration and keeps nulls', () => {
    const c = parseConfigText('mqtt:\n  passwordEnv: A\nhttp:\n  tokenEnv: B\n', null, { A: 'mqtt-secret', B: 'token-secret-0123456789' }, '/');
    const safe = redactedConfig(c);
    const text = JSON.stringify(safe);
    expect(text).not.toContain('mqtt-secret');
    expect(text).not.toContain('token-secret');
    expect((safe.store as { password: unknown }).password).toBeNull();
  });
});

describe('rate-limited log of rejected frames', () => {
  const rej = (feeder: string | null, code = 'FRAME_BAD_VALUE') => ({ feeder, code, field: 'v.a', message: 'v.a must be a pair', origin: 't' });

  test('at most N lines per feeder per minute, then one summary with the suppressed count by reason', () => {
    const warned: [Record<string, unknown>, string][] = [];
    let now = 0;
    const log = new RejectionLog({ warn: ((o: Record<string, unknown>, m: string) => void warned.push([o, m])) as never }, { perWindow: 3, now: () => now });
    for (let k = 0; k < 10; k++) log.rejected(rej('F1', k % 2 === 0 ? 'FRAME_BAD_VALUE' : 'FRAME_NOT_JSON'));
    log.rejected(rej('F2'));
    expect(warned).toHaveLength(4);
    now = 59_999;
    log.tick();
    expect(warned).toHaveLength(4);
    now = 60_000;
    log.tick();
    expect(warned).toHaveLength(5);
    expect(warned[4]![0]).toMatchObject({ feeder: 'F1', suppressed: 7, byCode: { FRAME_BAD_VALUE: 3, FRAME_NOT_JSON: 4 } });
    expect(warned[4]![1]).toMatch(/7 more rejected frames of feeder F1 not logged/);
  });

  test('a new window logs again, and flush writes what is pending', () => {
    const warned: unknown[] = [];
    let now = 0;
    const log = new RejectionLog({ warn: ((o: unknown) => void warned.push(o)) as never }, { perWindow: 1, now: () => now });
    log.rejected(rej(null));
    log.rejected(rej(null));
    now = 61_000;
    log.rejected(rej(null));
    // line 1, summary of window 1 (1 suppressed), line of window 2
    expect(warned).toHaveLength(3);
    expect(warned[1]).toMatchObject({ feeder: '(unknown)', suppressed: 1 });
    log.rejected(rej(null));
    log.flush();
    expect(warned).toHaveLength(4);
  });
});
