/** A Scheduler whose clock moves only when the test says so. */
import type { Scheduler, TimerHandle } from '../../../agent/core/ports.js';

interface Timer {
  id: number;
  due: number;
  every: number | null;
  fn: () => void;
}

export class ManualScheduler implements Scheduler {
  private timers = new Map<number, Timer>();
  private nextId = 1;
  constructor(private time: number) {}

  now(): number {
    return this.time;
  }
  setTimeout(fn: () => void, ms: number): TimerHandle {
    const id = this.nextId++;
    this.timers.set(id, { id, due: this.time + ms, every: null, fn });
    return id;
  }
  clearTimeout(handle: TimerHandle): void {
    this.timers.delete(handle as number);
  }
  setInterval(fn: () => void, ms: number): TimerHandle {
    const id = this.nextId++;
    this.timers.set(id, { id, due: this.time + ms, every: ms, fn });
    return id;
  }
  clearInterval(handle: TimerHandle): void {
    this.timers.delete(handle as number);
  }
  pending(): number {
    return this.timers.size;
  }
  /** Moves the clock forward, firing due timers in time order. */
  advance(ms: number): void {
    const end = this.time + ms;
    for (;;) {
      let next: Timer | undefined;
      for (const t of this.timers.values()) if (t.due <= end && (next === undefined || t.due < next.due)) next = t;
      if (next === undefined) break;
      this.time = next.due;
      if (next.every === null) this.timers.delete(next.id);
      else next.due += next.every;
      next.fn();
    }
    this.time = end;
  }
}
