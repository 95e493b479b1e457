// Live ingest throughput: phasor frames per second from an MQTT publisher,
// through a real local mosquitto, into pipeline results (MqttSource -> the
// pipeline on its worker thread, as the compiled service runs it), against a
// bare mqtt.js subscriber that only JSON.parses the same messages, measured in
// the same run. Target: agent/bare >= 0.8. (The service's memory with 200
// feeders is measured by service-memory.mjs.)
//
// Method: each consumer has two persistent sessions (clean: false, QoS 1),
// registered before the publisher sends; the broker queues a warm-up stream
// (the 2 s before the timed part, under WARM_PREFIX) for one and the timed
// stream for the other. The consumer runs in a process of its own
// (_mqtt-consumer.mjs), as a deployed service does, drains the warm-up the
// same way without the clock (so both consumers run warm, as in a service
// that is running: the agent's pipeline knows these feeders, the JIT has
// compiled the code of either), then is timed from its connect until the
// last timed frame is processed. So the figure is the consumer's own
// capacity, not the publisher's pace. (Consumers sharing one process made
// mqtt.js's parser see several handlers, and its compiled code was thrown
// away and rebuilt in every trial.) Trials alternate bare / agent / adapter
// alone; the best of each counts (the two cores are noisy) and every trial is
// reported. The comparison is run twice: with Node's default heap settings
// (as `seqmon run` starts) and with a 16 MB young generation for both
// processes (--max-semi-space-size=16), because mqtt.js allocates about 6 kB
// per message and the bare subscriber's rate depends on that setting more
// than the agent's does; the target is judged on both.
import { spawn } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { connect as tcpConnect, createServer } from 'node:net';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import mqtt from 'mqtt';

const MOSQUITTO = '/usr/sbin/mosquitto';
const CONSUMER = join(dirname(fileURLToPath(import.meta.url)), '_mqtt-consumer.mjs');
export const FEEDERS = 200;
const FRAMES_PER_FEEDER = 150; // 3 s of 50 frames/s per feeder
export const TOTAL = FEEDERS * FRAMES_PER_FEEDER;
/** Frames per feeder of the warm-up stream (2 s of the same stream, just before the timed part). */
export const WARM_FRAMES_PER_FEEDER = 100;
const TRIALS = 3;
const T0 = 1772460187000;
export const DEADLINE_MS = 120_000;
export const PREFIX = 'seqmon/in';
export const WARM_PREFIX = 'seqmon/warm';

export async function run() {
  const name = 'MQTT live ingest (mosquitto -> MqttSource -> Pipeline)';
  if (!existsSync(MOSQUITTO)) {
    return { name, figures: { skipped: `mosquitto is not installed at ${MOSQUITTO} (apt-get install -y mosquitto); nothing measured` } };
  }
  const broker = await startBroker();
  try {
    const payloads = buildPayloads();
    const warm = buildPayloads(-WARM_FRAMES_PER_FEEDER, 0, WARM_PREFIX);
    const byDefault = await compare(broker.url, warm, payloads, []);
    const young16 = await compare(broker.url, warm, payloads, ['--max-semi-space-size=16']);
    const met = byDefault.ratio >= 0.8 && young16.ratio >= 0.8;
    return {
      name,
      figures: {
        'messages per trial': `${TOTAL} phasor frames (${FEEDERS} feeders x ${FRAMES_PER_FEEDER}), QoS 1, after a warm-up of ${FEEDERS * WARM_FRAMES_PER_FEEDER}`,
        'bare subscriber, JSON.parse only (frames/s)': byDefault.bare,
        'agent, MqttSource -> Pipeline results (frames/s)': byDefault.agent,
        'ratio agent / bare (target >= 0.8)': byDefault.ratio,
        'every trial, bare / agent / adapter alone (frames/s)': byDefault.trials,
        'MqttSource alone, frames handed to a counting sink (frames/s)': byDefault.source,
        "ratio MqttSource alone / bare (the adapter's own share)": byDefault.source / byDefault.bare,
        'with a 16 MB young generation for both: bare / agent (frames/s)': `${Math.round(young16.bare)} / ${Math.round(young16.agent)}`,
        'with a 16 MB young generation for both: ratio agent / bare': young16.ratio,
        'with a 16 MB young generation for both: every trial, bare / agent / adapter alone': young16.trials,
        'target ratio met (both heap settings)': met ? 'yes' : 'no',
        // The whole service with 200 feeders is measured by service-memory.mjs; this is the consumer process alone.
        'resident memory of the agent consumer process at the end of its trial, MB (peak of trials)': Math.max(byDefault.rssAgent, young16.rssAgent) / 2 ** 20,
      },
    };
  } finally {
    await broker.stop();
  }
}

/** TRIALS rounds of bare / agent / adapter alone, each consumer process started with `nodeFlags`. */
async function compare(url, warm, payloads, nodeFlags) {
  const bare = [];
  const agent = [];
  const sourceOnly = [];
  let rssAgent = 0;
  const tag = nodeFlags.length === 0 ? 'd' : 'y';
  for (let t = 0; t < TRIALS; t++) {
    bare.push((await trial(url, warm, payloads, `bench-bare-${tag}${t}`, 'bare', nodeFlags)).rate);
    const a = await trial(url, warm, payloads, `bench-agent-${tag}${t}`, 'agent', nodeFlags);
    agent.push(a.rate);
    rssAgent = Math.max(rssAgent, a.rss);
    sourceOnly.push((await trial(url, warm, payloads, `bench-source-${tag}${t}`, 'source', nodeFlags)).rate);
  }
  const best = (xs) => Math.max(...xs);
  return {
    bare: best(bare),
    agent: best(agent),
    source: best(sourceOnly),
    ratio: best(agent) / best(bare),
    rssAgent,
    trials: `${bare.map(Math.round).join(', ')} / ${agent.map(Math.round).join(', ')} / ${sourceOnly.map(Math.round).join(', ')}`,
  };
}

/** The stream: frame n of every feeder, n from `first` (negative for the warm-up part, before T0) up to `end`. */
export function buildPayloads(first = 0, end = FRAMES_PER_FEEDER, prefix = PREFIX) {
  const out = [];
  for (let n = first; n < end; n++) {
    for (let f = 0; f < FEEDERS; f++) {
      const u = 1 + 0.01 * Math.sin(f + n / 7);
      out.push([
        `${prefix}/F${f}/phasor`,
        JSON.stringify({
          ts: T0 + 20 * n,
          freq: 59.98,
          v: { a: [7212.4 * u, 0.0], b: [7190.1, -120.4], c: [7168.8 / u, 119.7] },
          i: { a: [212.0 * u, -24.8], b: [205.3, -146.1], c: [198.6, 95.0] },
        }),
      ]);
    }
  }
  return out;
}

/**
 * Registers the consumer's two persistent sessions (warm-up and timed), lets the broker queue each stream for
 * its session, then runs the consumer, which drains the warm-up untimed and times the drain of the other.
 */
async function trial(url, warm, payloads, clientId, kind, nodeFlags) {
  await register(url, `${clientId}-warm`, `${WARM_PREFIX}/+/phasor`);
  await register(url, clientId, `${PREFIX}/+/phasor`);
  const pub = await mqtt.connectAsync(url, { clientId: `${clientId}-pub`, reconnectPeriod: 0 });
  await publishAll(pub, warm);
  await publishAll(pub, payloads);
  await pub.endAsync();
  return runConsumer(kind, url, clientId, nodeFlags);
}

async function register(url, clientId, filter) {
  const reg = await mqtt.connectAsync(url, { clientId, clean: false, reconnectPeriod: 0 });
  await reg.subscribeAsync(filter, { qos: 1 });
  await reg.endAsync();
}

/** QoS 1 publishes with a bounded window of unacknowledged ones, so the publisher does not buffer everything at once. */
function publishAll(pub, payloads) {
  let inflight = 0;
  let acked = 0;
  return new Promise((resolve, reject) => {
    let next = 0;
    const pump = () => {
      while (inflight < 500 && next < payloads.length) {
        const [topic, body] = payloads[next++];
        inflight++;
        pub.publish(topic, body, { qos: 1 }, (err) => {
          if (err) return reject(err);
          inflight--;
          acked++;
          if (acked === payloads.length) resolve();
          else pump();
        });
      }
    };
    pump();
  });
}

/** Runs _mqtt-consumer.mjs in its own process; resolves with the { rate, rss } it prints. */
function runConsumer(kind, url, clientId, nodeFlags) {
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, [...nodeFlags, CONSUMER, kind, url, clientId], { stdio: ['ignore', 'pipe', 'pipe'] });
    let stdout = '';
    let stderr = '';
    child.stdout.on('data', (d) => (stdout += d));
    child.stderr.on('data', (d) => (stderr += d));
    const timer = setTimeout(() => child.kill('SIGKILL'), DEADLINE_MS + 10_000);
    child.on('exit', (code, signal) => {
      clearTimeout(timer);
      const last = stdout.trim().split('\n').pop() ?? '';
      if (code !== 0) return reject(new Error(`${kind} consumer exited with ${code ?? signal}: ${stderr.trim() || last}`));
      try {
        resolve(JSON.parse(last));
      } catch {
        reject(new Error(`${kind} consumer printed no result: ${stdout.trim()}`));
      }
    });
  });
}

// ---- a private mosquitto on a free loopback port (same settings as test/helpers/mosquitto.ts) ----

export async function startBroker() {
  const port = await freePort();
  const dir = mkdtempSync(join(tmpdir(), 'seqmon-bench-mosquitto-'));
  const conf = join(dir, 'mosquitto.conf');
  writeFileSync(
    conf,
    [
      `listener ${port} 127.0.0.1`,
      'allow_anonymous true',
      'persistence false',
      // Nagle off: small frames are not held back (shared/SERVICES.md: ~20k -> ~39k msg/s for a QoS 1 publisher).
      'set_tcp_nodelay true',
      // No per-client queue bound: the default 1000 would silently drop the queued frames this method relies on.
      'max_queued_messages 0',
      '',
    ].join('\n'),
  );
  const child = spawn(MOSQUITTO, ['-c', conf], { stdio: 'ignore' });
  const deadline = Date.now() + 5000;
  while (!(await canConnect(port))) {
    if (child.exitCode !== null || Date.now() > deadline) {
      child.kill('SIGKILL');
      throw new Error('mosquitto did not start');
    }
    await new Promise((r) => setTimeout(r, 20));
  }
  return {
    url: `mqtt://127.0.0.1:${port}`,
    stop: async () => {
      if (child.exitCode === null && child.pid !== undefined) {
        const exited = new Promise((r) => child.once('exit', r));
        process.kill(child.pid, 'SIGTERM');
        await exited;
      }
      rmSync(dir, { recursive: true, force: true });
    },
  };
}

/** A TCP port that was free on 127.0.0.1 a moment ago (also used by service-memory.mjs). */
export function freePort() {
  return new Promise((resolve, reject) => {
    const srv = createServer();
    srv.on('error', reject);
    srv.listen(0, '127.0.0.1', () => {
      const { port } = srv.address();
      srv.close(() => resolve(port));
    });
  });
}

function canConnect(port) {
  return new Promise((resolve) => {
    const s = tcpConnect({ host: '127.0.0.1', port });
    s.once('connect', () => {
      s.destroy();
      resolve(true);
    });
    s.once('error', () => resolve(false));
  });
}
