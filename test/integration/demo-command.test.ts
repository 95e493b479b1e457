/**
 * `seqmon demo` as a user runs it (the compiled command, as `npm start` does):
 * embedded broker, the fictional substation, SQLite and the dashboard come up
 * with nothing else installed, and SIGTERM stops it cleanly with exit code 0.
 */
import { spawn } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { freePort, waitFor } from '../helpers/free-port.js';
import { Teardown } from '../helpers/teardown.js';

const td = new Teardown();
afterEach(() => td.run());
const CLI = resolve('dist/agent/cli/seqmon.js');

describe('seqmon demo', () => {
  it('serves the fictional substation on the dashboard port and stops cleanly on SIGTERM', async () => {
    expect(existsSync(CLI), 'dist/ is missing: run `npm run build` first (npm test does it)').toBe(true);
    const dir = mkdtempSync(join(tmpdir(), 'seqmon-demo-'));
    td.add(() => rmSync(dir, { recursive: true, force: true }));
    const [httpPort, mqttPort] = [await freePort(), await freePort()];
    const child = spawn(process.execPath, [CLI, 'demo'], {
      cwd: dir,
      env: { ...process.env, SEQMON_HTTP_PORT: String(httpPort), SEQMON_MQTT_URL: `mqtt://127.0.0.1:${mqttPort}`, SEQMON_DATA_DIR: dir },
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    let stdout = '';
    child.stdout.on('data', (d: Buffer) => (stdout += d.toString()));
    const exited = new Promise<number | null>((r) => child.on('exit', (code) => r(code)));
    td.add(() => {
      if (child.exitCode === null) child.kill('SIGKILL');
    });

    const base = `http://127.0.0.1:${httpPort}`;
    await waitFor(async () => {
      const body = (await (await fetch(`${base}/api/feeders`)).json()) as { demo: boolean; feeders: { lastTs: string | null }[] };
      return body.feeders.length >= 5 && body.feeders.every((f) => f.lastTs !== null);
    }, 20_000, 200);
    const feeders = (await (await fetch(`${base}/api/feeders`)).json()) as { demo: boolean };
    expect(feeders.demo).toBe(true);
    expect(stdout).toContain('FICTIONAL');
    const page = await fetch(`${base}/`);
    expect(page.status).toBe(200);
    expect(await page.text()).toContain('<html');

    child.kill('SIGTERM');
    const code = await Promise.race([exited, new Promise<'timeout'>((r) => setTimeout(() => r('timeout'), 12_000))]);
    expect(code).toBe(0);
  }, 45_000);
});
