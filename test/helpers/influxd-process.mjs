// Starts and stops a private influxd (InfluxDB 1.x) on loopback for tests and
// benchmarks: free ports, its own config and data under a temporary folder,
// stopped by PID. Plain ESM so bench/*.mjs can import it as well as the
// TypeScript tests (types in influxd-process.d.mts). Config keys per
// shared/SERVICES.md.
import { spawn } from 'node:child_process';
import { existsSync, mkdtempSync, openSync, closeSync, rmSync, writeFileSync } from 'node:fs';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

export const INFLUXD_PATH = process.env.SEQMON_INFLUXD ?? '/usr/bin/influxd';

/** Servers still running, so a test process that ends abruptly does not leave influxd behind. */
const running = new Set();
process.once('exit', () => {
  for (const child of running) child.kill('SIGKILL');
});

export function influxdInstalled() {
  return existsSync(INFLUXD_PATH);
}

function freePort() {
  return new Promise((resolve, reject) => {
    const srv = createServer();
    srv.unref();
    srv.on('error', reject);
    srv.listen(0, '127.0.0.1', () => {
      const addr = srv.address();
      const port = typeof addr === 'object' && addr !== null ? addr.port : 0;
      srv.close(() => (port > 0 ? resolve(port) : reject(new Error('no free port'))));
    });
  });
}

function sleep(ms) {
  return new Promise((r) => setTimeout(r, ms));
}

function configText(dir, httpPort, rpcPort, retentionCheck) {
  return [
    'reporting-enabled = false',
    `bind-address = "127.0.0.1:${rpcPort}"`,
    '[meta]',
    `  dir = "${join(dir, 'meta')}"`,
    '[data]',
    `  dir = "${join(dir, 'data')}"`,
    `  wal-dir = "${join(dir, 'wal')}"`,
    '  query-log-enabled = false',
    '[http]',
    `  bind-address = "127.0.0.1:${httpPort}"`,
    '  log-enabled = false',
    '[monitor]',
    '  store-enabled = false',
    '[retention]',
    `  check-interval = "${retentionCheck}"`,
    '[continuous_queries]',
    '  enabled = false',
    '[logging]',
    '  level = "warn"',
    '',
  ].join('\n');
}

/**
 * @param {{ retentionCheckInterval?: string, startTimeoutMs?: number }} [options]
 */
export async function startInfluxd(options = {}) {
  const dir = mkdtempSync(join(tmpdir(), 'seqmon-influxd-'));
  const httpPort = await freePort();
  const rpcPort = await freePort();
  const confPath = join(dir, 'influxd.conf');
  writeFileSync(confPath, configText(dir, httpPort, rpcPort, options.retentionCheckInterval ?? '30m'));
  const url = `http://127.0.0.1:${httpPort}`;
  const startTimeoutMs = options.startTimeoutMs ?? 15_000;
  let proc = null;
  let exited = Promise.resolve();

  async function ping() {
    try {
      const res = await fetch(`${url}/ping`, { signal: AbortSignal.timeout(500) });
      await res.arrayBuffer();
      return res.status === 204;
    } catch {
      return false;
    }
  }

  const handle = {
    url,
    httpPort,
    dir,
    get pid() {
      return proc?.pid ?? null;
    },
    get running() {
      return proc !== null;
    },
    /** Starts influxd (again) on the same port and data folder; resolves when /ping answers 204. */
    async start() {
      if (proc !== null) return;
      const log = openSync(join(dir, 'influxd.log'), 'a');
      const child = spawn(INFLUXD_PATH, ['-config', confPath], { stdio: ['ignore', log, log] });
      closeSync(log);
      proc = child;
      running.add(child);
      exited = new Promise((r) => child.once('exit', () => r()));
      child.once('exit', () => {
        running.delete(child);
        if (proc === child) proc = null;
      });
      const deadline = Date.now() + startTimeoutMs;
      while (!(await ping())) {
        if (proc !== child) throw new Error(`influxd exited during start; see ${join(dir, 'influxd.log')}`);
        if (Date.now() > deadline) {
          child.kill('SIGKILL');
          throw new Error(`influxd did not answer /ping within ${startTimeoutMs} ms`);
        }
        await sleep(10);
      }
    },
    /** Stops influxd by PID (SIGTERM, then SIGKILL after 5 s) and waits for it to exit. */
    async stop(signal = 'SIGTERM') {
      const child = proc;
      if (child === null) return;
      child.kill(signal);
      const done = exited;
      const timer = setTimeout(() => child.kill('SIGKILL'), 5_000);
      await done;
      clearTimeout(timer);
    },
    /** Stops influxd and deletes its folder. */
    async dispose() {
      await handle.stop();
      rmSync(dir, { recursive: true, force: true });
    },
  };
  await handle.start();
  return handle;
}
