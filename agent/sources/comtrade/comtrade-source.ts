/**
 * A FrameSource that replays one COMTRADE record into the pipeline as samples
 * frames (primary V and A), honouring the sink's back-pressure: when push()
 * returns false the source waits for onDrain before the next block.
 */
import type { FrameSink, FrameSource, SourceState, SourceStatus } from '../../core/ports.js';
import { mapPhaseChannels, type ChannelOverride } from './channel-map.js';
import { readComtradeRecord } from './read-record.js';
import { recordToSamplesFrames, samplesFrameToWire } from './samples-frames.js';

export interface ComtradeSourceOptions {
  readonly path: string;
  /** Feeder id for the frames; default: the station name made into a valid id. */
  readonly feeder?: string;
  readonly channels?: ChannelOverride;
  readonly maxBlockSamples?: number;
  readonly assumeUtcOffsetMinutes?: number;
  readonly logger?: { info(msg: string): void; warn(msg: string): void };
  /** Injected clock for status times (default Date.now). */
  readonly now?: () => number;
}

/** Makes a feeder id ([A-Za-z0-9_.-]{1,64}) from free text such as a station name. */
export function feederIdFrom(text: string): string {
  const id = text.replace(/[^A-Za-z0-9_.-]+/g, '_').replace(/^_+|_+$/g, '').slice(0, 64);
  return id === '' ? 'comtrade' : id;
}

export class ComtradeSource implements FrameSource {
  readonly name: string;
  private state: SourceState = 'idle';
  private since: number;
  private lastError: string | null = null;
  private stopped = false;
  private drainWaiter: (() => void) | null = null;
  private readonly now: () => number;
  /** Blocks handed to the sink. */
  pushed = 0;

  constructor(private readonly options: ComtradeSourceOptions) {
    this.name = `comtrade:${options.path}`;
    this.now = options.now ?? Date.now;
    this.since = this.now();
  }

  status(): SourceStatus {
    return { name: this.name, state: this.state, since: this.since, lastError: this.lastError };
  }

  private setState(s: SourceState, err: string | null = null): void {
    if (s === this.state) return;
    this.state = s;
    this.since = this.now();
    if (err !== null) this.lastError = err;
    this.options.logger?.info(`${this.name}: ${s}${err === null ? '' : ` (${err})`}`);
  }

  async start(sink: FrameSink): Promise<void> {
    if (this.stopped) return;
    sink.onDrain(() => {
      const w = this.drainWaiter;
      this.drainWaiter = null;
      w?.();
    });
    this.setState('connecting');
    try {
      const record = await readComtradeRecord(this.options.path, this.options.assumeUtcOffsetMinutes === undefined ? {} : { assumeUtcOffsetMinutes: this.options.assumeUtcOffsetMinutes });
      for (const w of [...record.config.warnings, ...record.data.warnings]) this.options.logger?.warn(w);
      const channels = mapPhaseChannels(record.config, this.options.channels);
      for (const n of channels.notes) this.options.logger?.warn(`${this.options.path}: ${n}`);
      const feeder = this.options.feeder ?? feederIdFrom(record.config.stationName);
      const frames = recordToSamplesFrames(record, channels, {
        feeder,
        ...(this.options.maxBlockSamples === undefined ? {} : { maxBlockSamples: this.options.maxBlockSamples }),
      });
      this.setState('connected');
      for (let k = 0; k < frames.length && !this.stopped; k++) {
        const ok = sink.push({ feeder, kind: 'samples', payload: samplesFrameToWire(frames[k]!), origin: `${this.options.path}#block${k + 1}` });
        this.pushed++;
        if (!ok && !this.stopped) await new Promise<void>((resolve) => (this.drainWaiter = resolve));
      }
      if (!this.stopped) this.setState('closed');
    } catch (e) {
      this.setState('failed', (e as Error).message);
      throw e;
    }
  }

  async close(): Promise<void> {
    this.stop('closed');
  }

  destroy(err?: Error): void {
    this.stop(err === undefined ? 'closed' : 'failed', err?.message ?? null);
  }

  private stop(state: SourceState, err: string | null = null): void {
    if (this.stopped) return;
    this.stopped = true;
    this.setState(state, err);
    const w = this.drainWaiter;
    this.drainWaiter = null;
    w?.();
  }
}
