/**
 * Input topics: `<prefix>/<feeder>/<kind>` (shared/ARCHITECTURE.md, "Input
 * frames"). The feeder level is taken as it is; the frame validator decides
 * whether it is a valid feeder id, so a bad id is counted like any other
 * rejected frame instead of disappearing here.
 */
import { FRAME_KINDS, type FrameKind } from '../../core/frames.js';

export const DEFAULT_INPUT_PREFIX = 'seqmon/in';

/** One subscription filter per frame kind: `<prefix>/+/phasor`, `<prefix>/+/rms`, `<prefix>/+/samples`. */
export function inputFilters(prefix: string): string[] {
  return FRAME_KINDS.map((kind) => `${prefix}/+/${kind}`);
}

export interface InputTopic {
  readonly feeder: string;
  readonly kind: FrameKind;
}

/**
 * Reads feeder and kind from a topic under `prefix`, or null when the topic is
 * not an input topic (a client shared with other subscribers may see others).
 */
export function parseInputTopic(prefix: string, topic: string): InputTopic | null {
  if (topic.length <= prefix.length + 1 || !topic.startsWith(prefix) || topic.charCodeAt(prefix.length) !== 0x2f /* '/' */) return null;
  const feederStart = prefix.length + 1;
  const slash = topic.indexOf('/', feederStart);
  if (slash < 0 || topic.indexOf('/', slash + 1) >= 0) return null;
  const kind = topic.slice(slash + 1);
  if (kind !== 'phasor' && kind !== 'rms' && kind !== 'samples') return null;
  return { feeder: topic.slice(feederStart, slash), kind };
}

/** A topic prefix must be a plain topic name: non-empty, no wildcards, no leading/trailing '/', no NUL (MQTT 3.1.1 §4.7). */
export function prefixProblem(prefix: string): string | null {
  if (prefix.length === 0) return 'is empty';
  if (/[+#\u0000]/.test(prefix)) return 'must not contain the wildcards + or # (or NUL)';
  if (prefix.startsWith('/') || prefix.endsWith('/')) return 'must not start or end with "/"';
  if (prefix.includes('//')) return 'must not contain an empty level ("//")';
  return null;
}
