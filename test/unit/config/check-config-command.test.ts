import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { PassThrough } from 'node:stream';
import { fileURLToPath } from 'node:url';
import { describe, expect, test } from 'vitest';
import { checkConfigCommand } from '../../../agent/cli/check-config.js';

function io(env: Record<string, string> = {}) {
  const stdout = new PassThrough();
  const stderr = new PassThrough();
  let out = '';
  let err = '';
  stdout.on('data', (d: Buffer) => (out += d.toString()));
  stderr.on('data', (d: Buffer) => (err += d.toString()));
  return { io: { stdin: new PassThrough(), stdout, stderr, env }, out: () => out, err: () => err };
}

const DEMO = fileURLToPath(new URL('../../../config/demo.yaml', import.meta.url));

describe('seqmon check-config', () => {
  test('a valid file exits 0 with a short summary', async () => {
    const t = io();
    expect(await checkConfigCommand([DEMO], t.io)).toBe(0);
    expect(t.out()).toMatch(/demo\.yaml is valid\./);
    expect(t.out()).toMatch(/mqtt:\s+mqtt:\/\/127\.0\.0\.1:18830 \(embedded broker\)/);
    expect(t.out()).toMatch(/feeders:\s+6 listed/);
  });

  test('an invalid file exits 2 and explains every problem on stderr', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'seqmon-cc-'));
    const file = join(dir, 'bad.yaml');
    writeFileSync(file, 'mqtt:\n  qos: 3\nhttp:\n  prot: 80\n');
    const t = io();
    expect(await checkConfigCommand([file], t.io)).toBe(2);
    expect(t.err()).toMatch(/has 2 problems/);
    expect(t.err()).toMatch(/mqtt\.qos \(line 2\)\n\s+expected: one of 0, 1\n\s+found:\s+the integer 3/);
    expect(t.err()).toMatch(/http\.prot \(line 4\)[\s\S]*did you mean port\?/);
  });

  test('environment overrides are applied and named in the summary', async () => {
    const t = io({ SEQMON_HTTP_PORT: '9999' });
    expect(await checkConfigCommand([DEMO], t.io)).toBe(0);
    expect(t.out()).toMatch(/environment overrides applied: SEQMON_HTTP_PORT/);
    expect(t.out()).toMatch(/127\.0\.0\.1:9999/);
  });

  test('a non-loopback HTTP host without TLS or acknowledgement is valid but warned about', async () => {
    const t = io({ SEQMON_HTTP_HOST: '0.0.0.0' });
    expect(await checkConfigCommand([DEMO], t.io)).toBe(0);
    expect(t.out()).toMatch(/warning: .*API_INSECURE_BIND/);
  });

  test('without a file, or with two, it is a usage error (exit 2)', async () => {
    const t = io();
    expect(await checkConfigCommand([], t.io)).toBe(2);
    expect(t.err()).toMatch(/usage: seqmon check-config FILE/);
    expect(await checkConfigCommand(['a.yaml', 'b.yaml'], io().io)).toBe(2);
  });
});
