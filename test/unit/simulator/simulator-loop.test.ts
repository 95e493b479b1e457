import { describe, expect, test } from 'vitest';
import type { Scheduler, TimerHandle } from '../../../agent/core/ports.js';
import { SubstationSimulator } from '../../../agent/sources/simulator/generator.js';
import type { SimulatedFrame } from '../../../agent/sources/simulator/generator.js';
import { SimulatorLoop, simulatedFrameTopic } from '../../../agent/sources/simulator/simulator-loop.js';
import { SimulatorFrameSource } from '../../../agent/sources/simulator/simulator-source.js';
import type { RawFrame } from '../../../agent/core/ports.js';

/** A scheduler whose clock moves only when the test says so. */
class ManualScheduler implements Scheduler {
  time: number;
  private readonly intervals = new Map<number, { fn: () => void; ms: number; next: number }>();
  private id = 0;
  constructor(start: number) {
    this.time = start;
  }
  now(): number {
    return this.time;
  }
  setTimeout(): TimerHandle {
    throw new Error('the loop uses intervals only');
  }
  clearTimeout(): void {}
  setInterval(fn: () => void, ms: number): TimerHandle {
    this.intervals.set(++this.id, { fn, ms, next: this.time + ms });
    return this.id;
  }
  clearInterval(h: TimerHandle): void {
    this.intervals.delete(h as number);
  }
  get active(): number {
    return this.intervals.size;
  }
  /** Moves the clock in interval steps, firing timers as they fall due. */
  advance(ms: number): void {
    const end = this.time + ms;
    for (;;) {
      let due: { fn: () => void; ms: number; next: number } | null = null;
      for (const t of this.intervals.values()) if (t.next <= end && (due === null || t.next < due.next)) due = t;
      if (due === null) break;
      this.time = due.next;
      due.next += due.ms;
      due.fn();
    }
    this.time = end;
  }
  /** Moves the clock without firing anything (a stalled event loop). */
  jump(ms: number): void {
    this.time += ms;
    for (const t of this.intervals.values()) t.next = this.time;
  }
}

const START = Date.UTC(2026, 2, 2, 8, 0, 0);

function setup(publish?: (f: SimulatedFrame) => boolean | void) {
  const scheduler = new ManualScheduler(START);
  const simulator = new SubstationSimulator({ originMs: START, seed: 3, speed: 60 });
  const got: SimulatedFrame[] = [];
  const loop = new SimulatorLoop({ simulator, scheduler, publish: publish ?? ((f) => void got.push(f)), maxCatchUpMs: 2_000 });
  return { scheduler, simulator, loop, got };
}

describe('simulator loop', () => {
  test('publishes every frame that falls due exactly once, oldest first, as the clock advances', () => {
    const { scheduler, loop, got } = setup();
    loop.start();
    scheduler.advance(1_000);
    scheduler.advance(1_000);
    // 5 feeders at 100 ms and one at 1 s, over 2 s.
    expect(got).toHaveLength(5 * 20 + 2);
    const keys = got.map((f) => `${f.feeder}@${f.ts}`);
    expect(new Set(keys).size).toBe(keys.length);
    for (let k = 1; k < got.length; k++) expect(got[k]!.ts).toBeGreaterThanOrEqual(got[k - 1]!.ts);
    expect(got.every((f) => f.ts > START && f.ts <= START + 2_000)).toBe(true);
  });

  test('after a stall longer than maxCatchUpMs only the last maxCatchUpMs are replayed and the rest are counted as skipped', () => {
    const { scheduler, loop, got } = setup();
    loop.start();
    scheduler.jump(10_000);
    loop.tick();
    expect(got.every((f) => f.ts > START + 8_000)).toBe(true);
    expect(got).toHaveLength(5 * 20 + 2);
    expect(loop.stats().skipped).toBe(5 * 80 + 8);
  });

  test('a publish that returns false pauses generation until resume, and frames due meanwhile are skipped, not replayed', () => {
    let accept = true;
    const got: SimulatedFrame[] = [];
    const { scheduler, loop } = setup((f) => {
      got.push(f);
      return accept;
    });
    loop.start();
    scheduler.advance(100);
    const first = got.length;
    accept = false;
    scheduler.advance(100);
    expect(loop.stats().state).toBe('paused');
    const whenPaused = got.length;
    scheduler.advance(1_000);
    expect(got.length).toBe(whenPaused);
    accept = true;
    loop.resume();
    scheduler.advance(100);
    expect(got.length).toBeGreaterThan(whenPaused);
    expect(got[got.length - 1]!.ts).toBe(START + 1_300);
    expect(first).toBe(5);
    expect(loop.stats().skipped).toBeGreaterThan(0);
  });

  test('close stops the timer and is idempotent', async () => {
    const { scheduler, loop, got } = setup();
    loop.start();
    scheduler.advance(300);
    await loop.close();
    await loop.close();
    loop.destroy();
    const n = got.length;
    scheduler.advance(1_000);
    expect(got.length).toBe(n);
    expect(scheduler.active).toBe(0);
    expect(loop.stats().state).toBe('closed');
  });

  test('topics follow <inputPrefix>/<feeder>/<kind>', () => {
    const f: SimulatedFrame = { feeder: 'WM-105', kind: 'samples', ts: START, payload: {} };
    expect(simulatedFrameTopic('plant/in', f)).toBe('plant/in/WM-105/samples');
  });
});

describe('simulator as a frame source', () => {
  test('pushes raw frames with feeder, kind and origin into the sink, and stops on close', async () => {
    const scheduler = new ManualScheduler(START);
    const simulator = new SubstationSimulator({ originMs: START, seed: 3 });
    const source = new SimulatorFrameSource(simulator, scheduler);
    const pushed: RawFrame[] = [];
    await source.start({ push: (f) => (pushed.push(f), true), onDrain: () => undefined });
    expect(source.status().state).toBe('connected');
    scheduler.advance(1_000);
    expect(pushed).toHaveLength(5 * 10 + 1);
    expect(pushed[0]).toMatchObject({ feeder: expect.stringMatching(/^WM-10[1-6]$/), kind: expect.stringMatching(/^(phasor|rms|samples)$/), origin: expect.stringMatching(/^simulator:/) });
    await source.close();
    scheduler.advance(1_000);
    expect(pushed).toHaveLength(51);
    expect(source.status().state).toBe('closed');
  });
});
