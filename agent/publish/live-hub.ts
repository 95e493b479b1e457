/**
 * Fan-out of results, alarm changes and events to live subscribers (the
 * /api/live Server-Sent Events stream). Each message is serialised once into
 * its SSE frame and shared by every subscriber. Each subscriber has a bounded
 * queue for the time its socket is full; a subscriber whose queue overflows is
 * dropped on purpose and counted, so a slow client costs at most its bound.
 */
import type { AlarmTransition, DisturbanceEvent } from '../core/detect/types.js';
import type { SequenceResult } from '../core/result.js';
import { isoTime, resultToWire } from '../core/result.js';

export interface LiveHubOptions {
  /** SSE frames a subscriber may have queued while its socket is full; one more drops it. */
  readonly bufferCapacity?: number;
  /**
   * Per-frame ('frame'/'basic') results of one feeder are passed on at most
   * once per this many ms of data time: a browser needs a few updates a
   * second, not every cycle. Aggregates, alarms and events always pass.
   */
  readonly resultIntervalMs?: number;
}

export interface LiveSubscriberOptions {
  readonly feeder: string | null;
  readonly write: (chunk: string) => boolean;
  readonly onDrop: () => void;
}

export const DEFAULT_LIVE_BUFFER = 256;
export const DEFAULT_RESULT_INTERVAL_MS = 500;

type SubscriberState = 'flowing' | 'blocked' | 'closed';

export class LiveSubscriber {
  private state: SubscriberState = 'flowing';
  private readonly queue: string[] = [];

  constructor(
    private readonly hub: LiveHub,
    readonly feeder: string | null,
    private readonly capacity: number,
    private readonly write: (chunk: string) => boolean,
    private readonly onDrop: () => void,
  ) {}

  /** Number of frames waiting for the socket. */
  get queued(): number {
    return this.queue.length;
  }

  get closed(): boolean {
    return this.state === 'closed';
  }

  offer(chunk: string): void {
    if (this.state === 'closed') return;
    if (this.state === 'blocked') {
      if (this.queue.length >= this.capacity) {
        this.drop();
        return;
      }
      this.queue.push(chunk);
      return;
    }
    if (!this.write(chunk)) this.state = 'blocked';
  }

  comment(text: string): void {
    this.offer(`: ${text.replace(/[\r\n]/g, ' ')}\n\n`);
  }

  drain(): void {
    if (this.state !== 'blocked') return;
    this.state = 'flowing';
    while (this.queue.length > 0) {
      const chunk = this.queue.shift()!;
      if (!this.write(chunk)) {
        this.state = 'blocked';
        return;
      }
    }
  }

  close(): void {
    if (this.state === 'closed') return;
    this.state = 'closed';
    this.queue.length = 0;
    this.hub.remove(this);
  }

  private drop(): void {
    this.close();
    this.hub.countDrop();
    this.onDrop();
  }
}

export class LiveHub {
  private readonly subscribers = new Set<LiveSubscriber>();
  private readonly capacity: number;
  private readonly resultIntervalMs: number;
  /** Data time of the last per-frame result passed on, per feeder. */
  private readonly lastFrameTs = new Map<string, number>();
  private dropped = 0;
  private published = 0;
  private nextId = 1;
  private closed = false;

  constructor(options: LiveHubOptions = {}) {
    this.capacity = Math.max(1, Math.floor(options.bufferCapacity ?? DEFAULT_LIVE_BUFFER));
    this.resultIntervalMs = Math.max(0, options.resultIntervalMs ?? DEFAULT_RESULT_INTERVAL_MS);
  }

  subscribe(options: LiveSubscriberOptions): LiveSubscriber {
    const sub = new LiveSubscriber(this, options.feeder, this.capacity, options.write, options.onDrop);
    if (this.closed) {
      sub.close();
      return sub;
    }
    this.subscribers.add(sub);
    return sub;
  }

  publishResult(result: SequenceResult): void {
    if (this.subscribers.size === 0) return;
    if (result.window === 'frame' || result.window === 'basic') {
      const last = this.lastFrameTs.get(result.feeder);
      if (last !== undefined && result.ts >= last && result.ts - last < this.resultIntervalMs) return;
      this.lastFrameTs.set(result.feeder, result.ts);
    }
    this.fanOut(result.feeder, 'result', resultToWire(result));
  }

  publishAlarm(transition: AlarmTransition): void {
    if (this.subscribers.size === 0) return;
    this.fanOut(transition.feeder, 'alarm', { ...transition, ts: isoTime(transition.ts) });
  }

  publishEvent(event: DisturbanceEvent): void {
    if (this.subscribers.size === 0) return;
    this.fanOut(event.feeder, 'event', { ...event, ts: isoTime(event.ts) });
  }

  stats(): { subscribers: number; dropped: number; published: number } {
    return { subscribers: this.subscribers.size, dropped: this.dropped, published: this.published };
  }

  /** Ends every subscription; later subscribe() calls get a closed subscriber. Idempotent. */
  async close(): Promise<void> {
    this.destroy();
  }

  destroy(): void {
    this.closed = true;
    for (const sub of [...this.subscribers]) sub.close();
    this.lastFrameTs.clear();
  }

  /** @internal called by a subscriber when it closes. */
  remove(sub: LiveSubscriber): void {
    this.subscribers.delete(sub);
  }

  /** @internal called by a subscriber dropped for overflow. */
  countDrop(): void {
    this.dropped++;
  }

  private fanOut(feeder: string, type: string, data: Record<string, unknown>): void {
    // One SSE frame for everyone: "id", "event" and a single-line JSON "data" field (WHATWG HTML §9.2 event stream format).
    const frame = `id: ${this.nextId++}\nevent: ${type}\ndata: ${JSON.stringify(data)}\n\n`;
    this.published++;
    for (const sub of this.subscribers) {
      if (sub.feeder === null || sub.feeder === feeder) sub.offer(frame);
    }
  }
}
