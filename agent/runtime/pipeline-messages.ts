/** Messages between the threaded pipeline's host (pipeline-thread.ts) and its worker (pipeline-worker.ts). */
import type { AlarmTransition, DisturbanceEvent } from '../core/detect/types.js';
import type { FrameKind } from '../core/frames.js';
import type { Diagnostic, PipelineStats, Rejection } from '../core/pipeline.js';
import type { SequenceResult } from '../core/result.js';

export type HostMessage =
  | {
      t: 'frames';
      id: number;
      count: number;
      /** Payload bytes of every frame, back to back; frame k is bytes[offsets[k] .. offsets[k+1]). */
      bytes: ArrayBuffer;
      offsets: Uint32Array;
      feeders: (string | null)[];
      kinds: (FrameKind | null)[];
      origins: string[];
      /** Payloads that arrived as objects (OPC UA); null where the payload is in `bytes`. */
      objects: (Record<string, unknown> | null)[];
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
