/**
 * Worker-thread side of the threaded pipeline (pipeline-thread.ts): owns the
 * Pipeline, takes batches of raw payloads packed into one transferred buffer,
 * and answers each batch with its outputs. Per-frame results are thinned to
 * one per feeder per LATEST_INTERVAL_MS of data time (the rest is held back
 * and sent with the next tick): the host only shows the latest and feeds the
 * live view, which is rate-limited anyway, and copying every result between
 * threads would cost more than computing it.
 */
import { parentPort, workerData } from 'node:worker_threads';
import type { PipelineSettings } from '../core/pipeline.js';
import { clearOutput, createOutput, Pipeline } from '../core/pipeline.js';
import type { SequenceResult } from '../core/result.js';
import type { HostMessage, WorkerMessage } from './pipeline-messages.js';

const port = parentPort;
if (port === null) throw new Error('pipeline-worker.js must run as a worker thread');

const pipeline = new Pipeline((workerData as { settings: PipelineSettings }).settings);
const out = createOutput();
const newest = new Map<string, SequenceResult>();
/** Newest result per feeder not yet sent, and the data time of the last one sent. */
const heldBack = new Map<string, SequenceResult>();
const lastSentTs = new Map<string, number>();
const LATEST_INTERVAL_MS = 250;
let feederCount = 0;

function offer(r: SequenceResult): void {
  const last = lastSentTs.get(r.feeder);
  if (last === undefined || r.ts - last >= LATEST_INTERVAL_MS) {
    newest.set(r.feeder, r);
    lastSentTs.set(r.feeder, r.ts);
    heldBack.delete(r.feeder);
  } else heldBack.set(r.feeder, r);
}

/** Sends what was held back (on ticks and at close), so latest() is never older than one tick. */
function releaseHeldBack(): void {
  for (const [feeder, r] of heldBack) {
    newest.set(feeder, r);
    lastSentTs.set(feeder, r.ts);
  }
  heldBack.clear();
}

function reply(id: number, n: number, withStats: boolean): void {
  for (const r of out.results) offer(r);
  const ids = pipeline.feederIds();
  const msg: WorkerMessage = {
    t: 'out',
    id,
    n,
    latest: [...newest.values()],
    aggregates: out.aggregates,
    alarms: out.alarms,
    events: out.events,
    diagnostics: out.diagnostics,
    rejections: out.rejections,
    stats: withStats ? pipeline.stats() : null,
    feeders: ids.length !== feederCount ? ids : null,
  };
  feederCount = ids.length;
  port!.postMessage(msg);
  newest.clear();
  clearOutput(out);
}

function fail(err: unknown, origin: string | null): void {
  const e = err instanceof Error ? err : new Error(String(err));
  port!.postMessage({ t: 'error', message: e.message, stack: e.stack ?? null, origin } satisfies WorkerMessage);
}

port.on('message', (m: HostMessage) => {
  switch (m.t) {
    case 'frames': {
      for (let k = 0; k < m.count; k++) {
        const start = m.offsets[k]!, end = m.offsets[k + 1]!;
        const object = m.objects[k];
        try {
          pipeline.ingest(
            {
              feeder: m.feeders[k] ?? undefined,
              kind: m.kinds[k] ?? undefined,
              payload: object !== null && object !== undefined ? object : Buffer.from(m.bytes, start, end - start),
              origin: m.origins[k]!,
            },
            out,
          );
        } catch (err) {
          fail(err, m.origins[k] ?? null);
        }
        if (out.results.length > 0) {
          for (const r of out.results) offer(r);
          out.results.length = 0;
        }
      }
      reply(m.id, m.count, false);
      break;
    }
    case 'tick':
      try {
        pipeline.tick(m.now, out);
      } catch (err) {
        fail(err, null);
      }
      releaseHeldBack();
      reply(-1, 0, true);
      break;
    case 'restore':
      pipeline.restoreAlarms(m.active);
      break;
    case 'close':
      releaseHeldBack();
      reply(-1, 0, true);
      port!.postMessage({ t: 'closed' } satisfies WorkerMessage);
      break;
  }
});
