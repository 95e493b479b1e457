// Live ingest throughput: phasor frames per second from an MQTT publisher,
// through a real local mosquitto, into pipeline results (MqttSource ->
// the pipeline on its worker thread, as the compiled service runs it), against a bare mqtt.js subscriber that only JSON.parses
// the same messages, measured in the same run. Target: agent/bare >= 0.8. (The
// service's memory with 200 feeders is measured by service-memory.mjs.)
//
// Method: each consumer first registers a persistent session (clean: false,
// QoS 1) and disconnects; the publisher then sends every frame, which the
// broker queues for that session; the clock runs from the consumer's connect
// until its last frame is processed. So the figure is the consumer's own
// capacity, not the publisher's pace. Trials alternate bare / agent and the
// best of each counts (the two cores are noisy).
import { spawn } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { connect as tcpConnect, createServer } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import mqtt from 'mqtt';
import { DEFAULT_DETECTION } from '../dist/agent/core/detect/settings.js';
import { MqttSource } from '../dist/agent/sources/mqtt/mqtt-source.js';
import { PipelineThread } from '../dist/agent/runtime/pipeline-thread.js';

const MOSQUITTO = '/usr/sbin/mosquitto';
const FEEDERS = 200;
const FRAMES_PER_FEEDER = 150; // 3 s of 50 frames/s per feeder
const TOTAL = FEEDERS * FRAMES_PER_FEEDER;
const TRIALS = 3;
const T0 = 1772460187000;
const DEADLINE_MS = 120_000;

export async function run() {
  const name = 'MQTT live ingest (mosquitto -> MqttSource -> Pipeline)';
  if (!existsSync(MOSQUITTO)) {
    return { name, figures: { skipped: `mosquitto is not installed at ${MOSQUITTO} (apt-get install -y mosquitto); nothing measured` } };
  }
  const broker = await startBroker();
  try {
    const payloads = buildPayloads();
    const bare = [];
    const agent = [];
    const sourceOnly = [];
    let rssAgent = 0;
    let rssBefore = 0;
    for (let t = 0; t < TRIALS; t++) {
      bare.push(await trial(broker.url, payloads, `bench-bare-${t}`, bareConsumer));
      if (t === 0) rssBefore = process.memoryUsage().rss;
      const a = await trial(broker.url, payloads, `bench-agent-${t}`, agentConsumer);
      agent.push(a.rate);
      rssAgent = Math.max(rssAgent, a.rss);
      sourceOnly.push((await trial(broker.url, payloads, `bench-source-${t}`, (u, id) => agentConsumer(u, id, false))).rate);
    }
    const bestBare = Math.max(...bare.map((b) => b.rate));
    const bestAgent = Math.max(...agent);
    const bestSource = Math.max(...sourceOnly);
    const ratio = bestAgent / bestBare;
    return {
      name,
      figures: {
        'messages per trial': `${TOTAL} phasor frames (${FEEDERS} feeders x ${FRAMES_PER_FEEDER}), QoS 1`,
        'bare subscriber, JSON.parse only (frames/s)': bestBare,
        'agent, MqttSource -> Pipeline results (frames/s)': bestAgent,
        'ratio agent / bare (target >= 0.8)': ratio,
        'target ratio met': ratio >= 0.8 ? 'yes' : 'no',
        'MqttSource alone, frames handed to a counting sink (frames/s)': bestSource,
        'ratio MqttSource alone / bare (the adapter\'s own share)': bestSource / bestBare,
        // The service's own memory with 200 feeders is measured in its own process by service-memory.mjs;
        // this process also holds the bare subscriber, the payloads and every earlier benchmark of the run.
        'resident memory of this whole benchmark process, MB (not the service: see service-memory)': rssAgent / 2 ** 20,
        'resident memory before the first agent trial, MB': rssBefore / 2 ** 20,
      },
    };
  } finally {
    await broker.stop();
  }
}

function buildPayloads() {
  const out = [];
  for (let n = 0; n < FRAMES_PER_FEEDER; n++) {
    for (let f = 0; f < FEEDERS; f++) {
      const u = 1 + 0.01 * Math.sin(f + n / 7);
      out.push([
        `seqmon/in/F${f}/phasor`,
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

/** Register a persistent session, let the broker queue every frame for it, then time the consumer's drain. */
async function trial(url, payloads, clientId, consumer) {
  const reg = await mqtt.connectAsync(url, { clientId, clean: false, reconnectPeriod: 0 });
  await reg.subscribeAsync('seqmon/in/+/phasor', { qos: 1 });
  await reg.endAsync();
  const pub = await mqtt.connectAsync(url, { clientId: `${clientId}-pub`, reconnectPeriod: 0 });
  // Bounded window of unacknowledged publishes, so the publisher does not buffer everything in memory at once.
  let inflight = 0;
  let acked = 0;
  await new Promise((resolve, reject) => {
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
  await pub.endAsync();
  if (typeof globalThis.gc === 'function') globalThis.gc();
  return consumer(url, clientId);
}

function bareConsumer(url, clientId) {
  return withDeadline(
    new Promise((resolve) => {
      let count = 0;
      let sink = 0;
      const t0 = performance.now();
      const client = mqtt.connect(url, { clientId, clean: false, reconnectPeriod: 0 });
      client.on('message', (_topic, payload) => {
        sink += JSON.parse(payload.toString('utf8')).ts & 1;
        if (++count === TOTAL) {
          const s = (performance.now() - t0) / 1000;
          client.end(true, {}, () => resolve({ rate: TOTAL / s, sink }));
        }
      });
    }),
  );
}

/**
 * MqttSource into the pipeline as the service runs it (compiled): on a worker
 * thread (PipelineThread). With withPipeline false the sink only counts,
 * isolating the adapter's cost.
 */
function agentConsumer(url, clientId, withPipeline = true) {
  return withDeadline(
    (async () => {
      // A running service has a warm worker; warm this one on other feeders before the clock starts.
      const thread = withPipeline ? await warmThread() : null;
      return new Promise((resolve, reject) => {
        let frames = 0;
        let t0 = 0;
        let finished = false;
        let base = thread === null ? 0 : thread.processedFrames();
        const source = new MqttSource({ url, clientId, clean: false, qos: 1, reconnect: { minMs: 100, maxMs: 1000 } });
        const finish = () => {
          if (finished) return;
          finished = true;
          const s = (performance.now() - t0) / 1000;
          const rss = process.memoryUsage().rss;
          source
            .close()
            .then(() => thread?.close())
            .then(() => {
              const accepted = thread === null ? TOTAL : Object.entries(thread.stats().accepted).filter(([f]) => f.startsWith('F')).reduce((a, [, n]) => a + n, 0);
              if (accepted !== TOTAL) reject(new Error(`expected ${TOTAL} accepted frames, got ${accepted}`));
              else resolve({ rate: TOTAL / s, rss });
            }, reject);
        };
        if (thread !== null) {
          // Results go on to stores and publishers in the service; here the run ends when the worker has them all.
          thread.onOutputHook = () => {
            if (thread.processedFrames() - base === TOTAL) finish();
          };
        }
        const sink = {
          push(frame) {
            frames++;
            if (thread !== null) return thread.ingest(frame);
            if (frames === TOTAL) finish();
            return true;
          },
          onDrain(listener) {
            thread?.onDrain(listener);
          },
        };
        t0 = performance.now();
        base = thread === null ? 0 : thread.processedFrames();
        source.start(sink).catch(reject);
      });
    })(),
  );
}

/** A PipelineThread that has processed WARM_FRAMES frames of other feeders (W0..W199), with outputs routed to a replaceable hook. */
async function warmThread() {
  let hook = () => {};
  const thread = new PipelineThread(
    { discoverFeeders: true, defaults: { nominalHz: 60, nominalVoltageLN: 7200, detection: DEFAULT_DETECTION }, feeders: [] },
    { onOutput: () => hook(), onError: (m) => console.error(m), onFatal: (e) => console.error(e) },
  );
  Object.defineProperty(thread, 'onOutputHook', { set: (f) => (hook = f) });
  const WARM_FRAMES = 20_000;
  const done = new Promise((r) => (hook = () => thread.processedFrames() >= WARM_FRAMES && r()));
  for (let k = 0; k < WARM_FRAMES; k++) {
    const f = k % FEEDERS;
    thread.ingest({ feeder: `W${f}`, kind: 'phasor', payload: Buffer.from(JSON.stringify({ ts: T0 - 600_000 + 20 * Math.floor(k / FEEDERS), v: { a: [7200, 0], b: [7190, -120.2], c: [7170, 119.8] }, i: { a: [210, -25], b: [205, -146], c: [198, 95] } })), origin: 'warm-up' });
    if (k % 1000 === 999) await new Promise((r) => setImmediate(r));
  }
  await done;
  return thread;
}

function withDeadline(p) {
  return new Promise((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`no result within ${DEADLINE_MS} ms`)), DEADLINE_MS);
    p.then(
      (v) => {
        clearTimeout(timer);
        resolve(v);
      },
      (e) => {
        clearTimeout(timer);
        reject(e);
      },
    );
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
