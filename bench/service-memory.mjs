// Resident memory of the real service (`seqmon run`, in its own process) with
// 200 feeders streaming phasor frames at 10 frames/s each through a local
// mosquitto (target: < 200 MB). Measured from /proc/<pid>/status (VmRSS now,
// VmHWM peak), so nothing of the benchmark's own process is counted. The
// baseline in the same run is the same process idle with no feeders.
import { spawn } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import mqtt from 'mqtt';
import { freePort, startBroker } from './mqtt-throughput.mjs';

const FEEDERS = 200;
const RATE_HZ = 10;
const DURATION_S = 30;
const CLI = resolve('dist/agent/cli/seqmon.js');

export async function run() {
  const name = 'service memory with 200 feeders';
  if (!existsSync('/usr/sbin/mosquitto')) return { name, figures: { skipped: 'mosquitto is not installed; nothing measured' } };
  const broker = await startBroker();
  const dir = mkdtempSync(join(tmpdir(), 'seqmon-bench-mem-'));
  const httpPort = await freePort();
  const child = spawn(process.execPath, [CLI, 'run'], {
    cwd: dir,
    env: { ...process.env, SEQMON_MQTT_URL: broker.url, SEQMON_DATA_DIR: dir, SEQMON_HTTP_PORT: String(httpPort) },
    stdio: 'ignore',
  });
  try {
    await waitHttp(httpPort);
    await sleep(2000);
    const idle = memory(child.pid);
    const pub = await mqtt.connectAsync(broker.url);
    const t0 = Date.now();
    let sent = 0;
    for (let s = 0; s < DURATION_S * RATE_HZ; s++) {
      const ts = t0 + s * (1000 / RATE_HZ);
      for (let f = 0; f < FEEDERS; f++) {
        const k = 1 + 0.01 * Math.sin(f + s / 10);
        pub.publish(`seqmon/in/B${f}/phasor`, JSON.stringify({ ts, freq: 60, v: { a: [7200 * k, 0], b: [7190, -120.3], c: [7175, 119.8] }, i: { a: [200 + f, -25], b: [195, -146], c: [190, 95] } }), { qos: 0 });
        sent++;
      }
      // Real-time pace: the service sees 200 feeders at 10 frames/s each.
      const due = t0 + (s + 1) * (1000 / RATE_HZ);
      if (due > Date.now()) await sleep(due - Date.now());
    }
    await pub.endAsync();
    await sleep(2000);
    const loaded = memory(child.pid);
    const feeders = (await (await fetch(`http://127.0.0.1:${httpPort}/api/feeders`)).json()).feeders.length;
    return {
      name,
      figures: {
        'frames published': sent,
        'feeders seen by the service': feeders,
        'RSS idle, no feeders (baseline), MB': idle.rss,
        'RSS after 30 s of 200 feeders, MB (target < 200)': loaded.rss,
        'peak RSS (VmHWM), MB': loaded.hwm,
        'target met': loaded.hwm < 200 ? 'yes' : 'no',
      },
    };
  } finally {
    child.kill('SIGTERM');
    await new Promise((r) => (child.exitCode !== null ? r() : child.once('exit', r)));
    await broker.stop();
    rmSync(dir, { recursive: true, force: true });
  }
}

function memory(pid) {
  const status = readFileSync(`/proc/${pid}/status`, 'utf8');
  const kb = (key) => Number(new RegExp(`${key}:\\s+(\\d+)`).exec(status)[1]);
  return { rss: kb('VmRSS') / 1024, hwm: kb('VmHWM') / 1024 };
}

async function waitHttp(port) {
  const deadline = Date.now() + 20_000;
  for (;;) {
    try {
      if ((await fetch(`http://127.0.0.1:${port}/healthz`)).status > 0) return;
    } catch {
      // not up yet
    }
    if (Date.now() > deadline) throw new Error('seqmon run did not start');
    await sleep(100);
  }
}

const sleep = (ms) => new Promise((r) => setTimeout(r, ms));
