/** The Scheduler port (agent/core/ports.ts) on Node's own timers; tests inject a fake one instead. */
import type { Scheduler, TimerHandle } from '../../core/ports.js';

export const SYSTEM_SCHEDULER: Scheduler = Object.freeze({
  now: () => Date.now(),
  setTimeout: (fn: () => void, ms: number): TimerHandle => setTimeout(fn, ms),
  clearTimeout: (handle: TimerHandle): void => clearTimeout(handle as NodeJS.Timeout),
  setInterval: (fn: () => void, ms: number): TimerHandle => setInterval(fn, ms),
  clearInterval: (handle: TimerHandle): void => clearInterval(handle as NodeJS.Timeout),
});
