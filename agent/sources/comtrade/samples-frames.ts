/**
 * Turns a record into SamplesFrame blocks (agent/core/frames.ts): phase
 * voltages in V and currents in A, primary values, one block per run of
 * samples at one fixed rate with no missing value, cut to a maximum length.
 * A missing sample ends a block; the next block starts after the gap with its
 * own timestamp, so no value is invented.
 */
import type { SamplesFrame } from '../../core/frames.js';
import { DEFAULT_FRAME_LIMITS } from '../../core/frames.js';
import type { PhaseChannels } from './channel-map.js';
import { requireFixedRate } from './record.js';
import { channelScale } from './units.js';
import type { ComtradeRecord } from './types.js';

export interface SamplesFrameOptions {
  readonly feeder: string;
  /** Largest block, samples per channel (default: the frame validator's limit). */
  readonly maxBlockSamples?: number;
  readonly side?: 'primary' | 'secondary';
}

/** Scaled values of one analog channel (0-based position), in V or A on the requested side; NaN where missing. */
export function scaledChannel(record: ComtradeRecord, k: number, side: 'primary' | 'secondary' = 'primary'): Float64Array {
  const ch = record.config.analog[k]!;
  const raw = record.data.analog[k]!;
  const { gain, offset } = channelScale(ch, side);
  const out = new Float64Array(raw.length);
  for (let n = 0; n < raw.length; n++) out[n] = gain * raw[n]! + offset;
  return out;
}

export function recordToSamplesFrames(record: ComtradeRecord, channels: PhaseChannels, options: SamplesFrameOptions): SamplesFrame[] {
  requireFixedRate(record);
  const side = options.side ?? 'primary';
  const maxBlock = Math.max(1, options.maxBlockSamples ?? DEFAULT_FRAME_LIMITS.maxSamplesPerChannel);
  const v = channels.v === null ? null : channels.v.map((k) => scaledChannel(record, k, side));
  const i = channels.i === null ? null : channels.i.map((k) => scaledChannel(record, k, side));
  const all = [...(v ?? []), ...(i ?? [])];
  const present = (n: number) => all.every((ch) => !Number.isNaN(ch[n]!));
  const frames: SamplesFrame[] = [];
  for (const seg of record.segments) {
    let n = seg.first;
    while (n < seg.end) {
      while (n < seg.end && !present(n)) n++;
      const start = n;
      while (n < seg.end && n - start < maxBlock && present(n)) n++;
      if (n > start) {
        const cut = (set: Float64Array[] | null) => (set === null ? null : ([set[0]!.slice(start, n), set[1]!.slice(start, n), set[2]!.slice(start, n)] as const));
        frames.push({
          kind: 'samples',
          feeder: options.feeder,
          ts: record.startEpochMs + record.timeSec[start]! * 1000,
          rate: seg.rate,
          length: n - start,
          v: cut(v),
          i: cut(i),
        });
      }
    }
  }
  return frames;
}

/** The wire (JSON object) form of a samples frame, as a source hands it to the pipeline. */
export function samplesFrameToWire(frame: SamplesFrame): Record<string, unknown> {
  const set = (s: SamplesFrame['v']) => (s === null ? undefined : { a: Array.from(s[0]), b: Array.from(s[1]), c: Array.from(s[2]) });
  const out: Record<string, unknown> = { kind: 'samples', feeder: frame.feeder, ts: frame.ts, rate: frame.rate };
  const v = set(frame.v);
  const i = set(frame.i);
  if (v !== undefined) out.v = v;
  if (i !== undefined) out.i = i;
  return out;
}
