/** The Scheduler of ports.ts on Node's timers; stores take it injected so tests can drive time. */
import type { Scheduler, TimerHandle } from '../core/ports.js';

export const realScheduler: Scheduler = {
  now: () => Date.now(),
  setTimeout: (fn, ms) => setTimeout(fn, ms),
  clearTimeout: (h: TimerHandle) => clearTimeout(h as NodeJS.Timeout),
  // Housekeeping intervals (retention) must not keep a finished process alive.
  setInterval: (fn, ms) => setInterval(fn, ms).unref(),
  clearInterval: (h: TimerHandle) => clearInterval(h as NodeJS.Timeout),
};
