/** A Scheduler that records timers instead of running them; fire() runs the oldest pending one and moves the clock by its delay. */
import type { Scheduler, TimerHandle } from '../../agent/core/ports.js';

export class StepScheduler implements Scheduler {
  clock = 0;
  readonly pending: { fn: () => void; ms: number; id: number }[] = [];
  /** Every delay ever asked for, in order. */
  readonly requested: number[] = [];
  private nextId = 1;

  now(): number {
    return this.clock;
  }

  setTimeout(fn: () => void, ms: number): TimerHandle {
    const id = this.nextId++;
    this.pending.push({ fn, ms, id });
    this.requested.push(ms);
    return id;
  }

  clearTimeout(handle: TimerHandle): void {
    const k = this.pending.findIndex((p) => p.id === handle);
    if (k >= 0) this.pending.splice(k, 1);
  }

  setInterval(): TimerHandle {
    throw new Error('StepScheduler: intervals are not used by the MQTT adapters');
  }

  clearInterval(): void {}

  fire(): void {
    const t = this.pending.shift();
    if (t === undefined) throw new Error('StepScheduler: no timer pending');
    this.clock += t.ms;
    t.fn();
  }
}
