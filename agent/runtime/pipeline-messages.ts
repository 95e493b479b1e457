/** Messages between the threaded pipeline's host (pipeline-thread.ts) and its worker (pipeline-worker.ts). */
import type { AlarmTransition, DisturbanceEvent } from '../core/detect/types.js';
import type { Diagnostic, PipelineStats, Rejection } from '../core/pipeline.js';
import type { SequenceResult } from '../core/result.js';

export type HostMessage =
  | {
      t: 'frames';
      id: number;
      count: number;
      /** Payload bytes of every frame, back to back; frame k is bytes[offsets[k] .. offsets[k+1]). May be longer than used. */
      bytes: ArrayBuffer;
      offsets: Uint32Array;
      /** Per frame, the id of its (feeder, kind, origin) in the worker's key table. */
      keys: Uint32Array;
      /** Keys first used in this batch, to add to the table: id, feeder ('' for none), kind ('' for none), origin, repeated. */
      newKeys: (number | string)[];
      /** Clear the key table before adding newKeys (the host started its numbering over). */
      resetKeys: boolean;
      /** Payloads that arrived as objects (OPC UA), by frame; null when the batch has none (all are in `bytes`). */
      objects: (Record<string, unknown> | null)[] | null;
    }
  | { t: 'tick'; now: number }
  | { t: 'restore'; active: AlarmTransition[] }
  | { t: 'close' };

export type WorkerMessage =
  | {
      t: 'out';
      /** Batch id, or -1 for a tick or close. */
      id: number;
      /** Frames of the batch processed. */
      n: number;
      /** The batch's buffer, handed back for reuse (null for a tick or close). */
      bytes: ArrayBuffer | null;
      /** Per-frame results, thinned to one per feeder per 250 ms of data time (all held back ones on a tick). */
      latest: SequenceResult[];
      aggregates: SequenceResult[];
      alarms: AlarmTransition[];
      events: DisturbanceEvent[];
      diagnostics: Diagnostic[];
      rejections: Rejection[];
      stats: PipelineStats | null;
      /** All feeder ids, when the set changed. */
      feeders: string[] | null;
    }
  | { t: 'error'; message: string; stack: string | null; origin: string | null }
  | { t: 'closed' };
