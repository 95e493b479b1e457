// One consumer of the MQTT throughput benchmark (mqtt-throughput.mjs), in a
// process of its own as a deployed service runs. It first drains the warm-up
// session CLIENT_ID-warm (untimed, the same way), then times the drain of the
// session CLIENT_ID, and prints one JSON line:
// { "rate": frames per second, "rss": resident bytes at the end }.
//
//   node bench/_mqtt-consumer.mjs bare|agent|source URL CLIENT_ID
//
// bare:   mqtt.js subscriber that only JSON.parses each message (the baseline);
// agent:  MqttSource -> the pipeline on its worker thread, as the service runs it;
// source: MqttSource into a sink that only counts (the adapter's own share).
import mqtt from 'mqtt';
import { DEFAULT_DETECTION } from '../dist/agent/core/detect/settings.js';
import { PipelineThread } from '../dist/agent/runtime/pipeline-thread.js';
import { MqttSource } from '../dist/agent/sources/mqtt/mqtt-source.js';
import { DEADLINE_MS, FEEDERS, PREFIX, TOTAL, WARM_FRAMES_PER_FEEDER, WARM_PREFIX } from './mqtt-throughput.mjs';

const WARM_TOTAL = FEEDERS * WARM_FRAMES_PER_FEEDER;
const [kind, url, clientId] = process.argv.slice(2);
if (!['bare', 'agent', 'source'].includes(kind ?? '') || !url || !clientId) {
  console.error('usage: node bench/_mqtt-consumer.mjs bare|agent|source URL CLIENT_ID');
  process.exit(2);
}

const timer = setTimeout(() => {
  console.error(`no result within ${DEADLINE_MS} ms`);
  process.exit(1);
}, DEADLINE_MS);
let result;
if (kind === 'bare') {
  await bareDrain(`${clientId}-warm`, WARM_TOTAL);
  result = await bareDrain(clientId, TOTAL);
} else {
  const thread = kind === 'agent' ? newThread() : null;
  await sourceDrain(thread, `${clientId}-warm`, WARM_PREFIX, WARM_TOTAL);
  result = await sourceDrain(thread, clientId, PREFIX, TOTAL);
  await thread?.close();
  // Every frame of both parts accepted by the pipeline.
  const accepted = thread === null ? TOTAL + WARM_TOTAL : Object.values(thread.stats().accepted).reduce((a, n) => a + n, 0);
  if (accepted !== TOTAL + WARM_TOTAL) throw new Error(`expected ${TOTAL + WARM_TOTAL} accepted frames, got ${accepted}`);
}
clearTimeout(timer);
console.log(JSON.stringify(result));
process.exit(0);

/** The bare subscriber: count and JSON.parse `total` messages of session `id`. */
function bareDrain(id, total) {
  return new Promise((resolve) => {
    let count = 0;
    let sink = 0;
    const t0 = performance.now();
    const client = mqtt.connect(url, { clientId: id, clean: false, reconnectPeriod: 0 });
    client.on('message', (_topic, payload) => {
      sink += JSON.parse(payload.toString('utf8')).ts & 1;
      if (++count === total) {
        const s = (performance.now() - t0) / 1000;
        const rss = process.memoryUsage().rss;
        client.end(true, {}, () => resolve({ rate: total / s, rss, sink }));
      }
    });
  });
}

/** A PipelineThread as the service builds it, its outputs routed to a replaceable hook. */
function newThread() {
  let hook = () => {};
  const thread = new PipelineThread(
    { discoverFeeders: true, defaults: { nominalHz: 60, nominalVoltageLN: 7200, detection: DEFAULT_DETECTION }, feeders: [] },
    { onOutput: () => hook(), onError: (m) => console.error(m), onFatal: (e) => console.error(e) },
  );
  Object.defineProperty(thread, 'onOutputHook', { set: (f) => (hook = f) });
  return thread;
}

/**
 * MqttSource on session `id` into the pipeline thread as the service runs it,
 * or into a sink that only counts (thread null: the adapter's own cost). Ends
 * when `total` frames are processed (by the worker, when there is one).
 */
function sourceDrain(thread, id, inputPrefix, total) {
  return new Promise((resolve, reject) => {
    let frames = 0;
    let finished = false;
    const base = thread === null ? 0 : thread.processedFrames();
    const source = new MqttSource({ url, clientId: id, clean: false, qos: 1, inputPrefix, reconnect: { minMs: 100, maxMs: 1000 } });
    const finish = () => {
      if (finished) return;
      finished = true;
      const s = (performance.now() - t0) / 1000;
      const rss = process.memoryUsage().rss;
      source.close().then(() => resolve({ rate: total / s, rss }), reject);
    };
    if (thread !== null) {
      // Results go on to stores and publishers in the service; here the drain ends when the worker has them all.
      thread.onOutputHook = () => {
        if (thread.processedFrames() - base === total) finish();
      };
    }
    const sink = {
      push(frame) {
        frames++;
        if (thread !== null) return thread.ingest(frame);
        if (frames === total) finish();
        return true;
      },
      onDrain(listener) {
        thread?.onDrain(listener);
      },
    };
    const t0 = performance.now();
    source.start(sink).catch(reject);
  });
}
