/**
 * Worker-thread side of the threaded pipeline (pipeline-thread.ts): owns the
 * Pipeline, takes batches of raw payloads packed into one transferred buffer,
 * and answers each batch with its outputs and the buffer for reuse. Per-frame
 * results are thinned to the newest per feeder, at most one per
 * LATEST_INTERVAL_MS of data time (the rest is held back and sent with the
 * next tick): the host only shows the latest and feeds the live view, which is
 * rate-limited anyway, and copying every result between threads would cost
 * more than computing it.
 */
import { isAscii } from 'node:buffer';
import { parentPort, workerData } from 'node:worker_threads';
import type { FrameKind } from '../core/frames.js';
import type { PipelineSettings } from '../core/pipeline.js';
import { clearOutput, createOutput, Pipeline } from '../core/pipeline.js';
import type { RawFrame } from '../core/ports.js';
import type { SequenceResult } from '../core/result.js';
import type { HostMessage, WorkerMessage } from './pipeline-messages.js';

const port = parentPort;
if (port === null) throw new Error('pipeline-worker.js must run as a worker thread');

// Results are looked at a few times a second per feeder: the pipeline reuses one record per feeder for
// phasor frames, and postMessage copies the ones sent.
const pipeline = new Pipeline((workerData as { settings: PipelineSettings }).settings, { frameResults: 'reused' });
const out = createOutput();
/** One raw-frame record for every frame: the pipeline consumes each before the next. */
const raw: { -readonly [K in keyof RawFrame]: RawFrame[K] } = { feeder: undefined, kind: undefined, payload: '', origin: '' };
/** The key table (pipeline-messages.ts): feeder, kind and origin by key. */
const keyFeeder: (string | undefined)[] = [];
const keyKind: (FrameKind | undefined)[] = [];
const keyOrigin: string[] = [];
/**
 * Newest result per feeder not yet sent, and the data time of the last one sent. A phasor-frame
 * result is the feeder's reused record: whenever it is sent, it holds that feeder's newest frame.
 */
const unsent = new Map<string, SequenceResult>();
const lastSentTs = new Map<string, number>();
const LATEST_INTERVAL_MS = 250;
let feederCount = 0;

function collectResults(): void {
  for (const r of out.results) unsent.set(r.feeder, r);
  out.results.length = 0;
}

/** Unsent results to send now: all of them, or those LATEST_INTERVAL_MS of data time after the feeder's last one sent. */
function due(all: boolean): SequenceResult[] {
  const list: SequenceResult[] = [];
  for (const [feeder, r] of unsent) {
    const last = lastSentTs.get(feeder);
    if (all || last === undefined || r.ts - last >= LATEST_INTERVAL_MS) {
      list.push(r);
      lastSentTs.set(feeder, r.ts);
      unsent.delete(feeder);
    }
  }
  return list;
}

function reply(id: number, n: number, bytes: ArrayBuffer | null, all: boolean): void {
  collectResults();
  const ids = pipeline.feederIds();
  const msg: WorkerMessage = {
    t: 'out',
    id,
    n,
    bytes,
    latest: due(all),
    aggregates: out.aggregates,
    alarms: out.alarms,
    events: out.events,
    diagnostics: out.diagnostics,
    rejections: out.rejections,
    stats: all ? pipeline.stats() : null,
    feeders: ids.length !== feederCount ? ids : null,
  };
  feederCount = ids.length;
  port!.postMessage(msg, bytes === null ? [] : [bytes]);
  clearOutput(out);
}

function fail(err: unknown, origin: string | null): void {
  const e = err instanceof Error ? err : new Error(String(err));
  port!.postMessage({ t: 'error', message: e.message, stack: e.stack ?? null, origin } satisfies WorkerMessage);
}

function addKeys(m: Extract<HostMessage, { t: 'frames' }>): void {
  if (m.resetKeys) {
    keyFeeder.length = 0;
    keyKind.length = 0;
    keyOrigin.length = 0;
  }
  const nk = m.newKeys;
  for (let j = 0; j + 3 < nk.length; j += 4) {
    const id = nk[j] as number, feeder = nk[j + 1] as string, kind = nk[j + 2] as string;
    keyFeeder[id] = feeder === '' ? undefined : feeder;
    keyKind[id] = kind === '' ? undefined : (kind as FrameKind);
    keyOrigin[id] = nk[j + 3] as string;
  }
}

port.on('message', (m: HostMessage) => {
  switch (m.t) {
    case 'frames': {
      addKeys(m);
      const bytes = Buffer.from(m.bytes, 0, m.offsets[m.count]);
      // Wire JSON is nearly always ASCII: then one decode of the whole batch, and each payload a slice of it
      // (no per-frame buffer or decode). Otherwise each payload goes as its bytes and is decoded as UTF-8.
      const text = isAscii(bytes) ? bytes.toString('latin1') : null;
      const objects = m.objects;
      for (let k = 0; k < m.count; k++) {
        const start = m.offsets[k]!, end = m.offsets[k + 1]!;
        const key = m.keys[k]!;
        const object = objects === null ? null : objects[k];
        raw.feeder = keyFeeder[key];
        raw.kind = keyKind[key];
        raw.payload = object !== null && object !== undefined ? object : text !== null ? text.slice(start, end) : bytes.subarray(start, end);
        raw.origin = keyOrigin[key] ?? '';
        try {
          pipeline.ingest(raw, out);
        } catch (err) {
          fail(err, raw.origin);
        }
        if (out.results.length > 0) collectResults();
      }
      raw.payload = ''; // the batch buffer goes back to the host below
      reply(m.id, m.count, m.bytes, false);
      break;
    }
    case 'tick':
      try {
        pipeline.tick(m.now, out);
      } catch (err) {
        fail(err, null);
      }
      reply(-1, 0, null, true);
      break;
    case 'restore':
      pipeline.restoreAlarms(m.active);
      break;
    case 'close':
      reply(-1, 0, null, true);
      port!.postMessage({ t: 'closed' } satisfies WorkerMessage);
      break;
  }
});
