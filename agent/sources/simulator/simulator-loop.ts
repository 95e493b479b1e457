/**
 * The timer side of the simulator: every tick it asks the pure generator for
 * the frames that fell due since the last tick and hands each to `publish`.
 * Time comes from the injected Scheduler, so tests drive it with a fake one.
 * After a stall (a paused process, a busy event loop) at most `maxCatchUpMs`
 * of frames are replayed; older ones are skipped and counted, the way a real
 * device with a small buffer behaves.
 */
import type { Scheduler, TimerHandle } from '../../core/ports.js';
import type { SimulatedFrame, SubstationSimulator } from './generator.js';

export interface SimulatorLoopOptions {
  readonly simulator: SubstationSimulator;
  readonly scheduler: Scheduler;
  /** Receives each frame, oldest first. Returning false asks the loop to skip frames until `resume()`. */
  readonly publish: (frame: SimulatedFrame) => boolean | void;
  /** Timer period, ms (frames are still stamped on each feeder's own period). */
  readonly tickMs?: number;
  readonly maxCatchUpMs?: number;
}

export type SimulatorLoopState = 'idle' | 'running' | 'paused' | 'closed';

export interface SimulatorLoopStats {
  readonly state: SimulatorLoopState;
  readonly published: number;
  /** Frames not generated because the loop fell behind by more than maxCatchUpMs or was paused. */
  readonly skipped: number;
}

export class SimulatorLoop {
  private readonly sim: SubstationSimulator;
  private readonly scheduler: Scheduler;
  private readonly publish: (frame: SimulatedFrame) => boolean | void;
  private readonly tickMs: number;
  private readonly maxCatchUpMs: number;
  private state: SimulatorLoopState = 'idle';
  private timer: TimerHandle | null = null;
  private last = 0;
  private published = 0;
  private skipped = 0;

  constructor(options: SimulatorLoopOptions) {
    this.sim = options.simulator;
    this.scheduler = options.scheduler;
    this.publish = options.publish;
    this.tickMs = options.tickMs ?? 100;
    this.maxCatchUpMs = options.maxCatchUpMs ?? 2_000;
  }

  start(): void {
    if (this.state !== 'idle') return;
    this.state = 'running';
    this.last = this.scheduler.now();
    this.timer = this.scheduler.setInterval(() => this.tick(), this.tickMs);
  }

  /** Generates and publishes what is due now; also called by the timer. */
  tick(): void {
    if (this.state !== 'running' && this.state !== 'paused') return;
    const now = this.scheduler.now();
    if (now <= this.last) return;
    if (this.state === 'paused') {
      this.skipped += this.countDue(this.last, now);
      this.last = now;
      return;
    }
    const from = Math.max(this.last, now - this.maxCatchUpMs);
    if (from > this.last) this.skipped += this.countDue(this.last, from);
    const frames = this.sim.framesBetween(from, now);
    for (let k = 0; k < frames.length; k++) {
      this.published++;
      if (this.publish(frames[k]!) === false) {
        this.state = 'paused';
        this.skipped += frames.length - k - 1;
        break;
      }
    }
    this.last = now;
  }

  /** Continue after publish returned false; frames that fell due meanwhile are skipped, not replayed. */
  resume(): void {
    if (this.state === 'paused') this.state = 'running';
  }

  stats(): SimulatorLoopStats {
    return { state: this.state, published: this.published, skipped: this.skipped };
  }

  /** Stops the timer. Idempotent. */
  close(): Promise<void> {
    this.stop();
    return Promise.resolve();
  }

  /** Same as close for a generator: nothing is in flight. Idempotent. */
  destroy(): void {
    this.stop();
  }

  private stop(): void {
    if (this.timer !== null) this.scheduler.clearInterval(this.timer);
    this.timer = null;
    this.state = 'closed';
  }

  private countDue(fromExclusive: number, toInclusive: number): number {
    let n = 0;
    for (const f of this.sim.feeders) n += Math.max(0, Math.floor(toInclusive / f.periodMs) - Math.floor(fromExclusive / f.periodMs));
    return n;
  }
}

/** The MQTT topic of a simulated frame: <inputPrefix>/<feeder>/<kind> (shared/ARCHITECTURE.md). */
export function simulatedFrameTopic(inputPrefix: string, frame: SimulatedFrame): string {
  return `${inputPrefix}/${frame.feeder}/${frame.kind}`;
}
