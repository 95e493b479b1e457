import { describe, expect, it } from 'vitest';
import { LiveHub } from '../../../agent/publish/live-hub.js';
import { alarm, faultEvent, makeResult } from '../../helpers/server-fixture.js';

const T0 = Date.parse('2026-03-02T12:00:00.000Z');
const V = { pos: [7200, 0], neg: [72, -60], zero: [10, 0] } as const;
const I = { pos: [200, -25], neg: [20, 150], zero: [3, 0] } as const;
const agg = (feeder: string, ts: number) => makeResult(feeder, ts, '3s', V, I);

/** A socket stand-in: accepts `room` writes, then reports a full buffer until drained. */
function fakeSocket(room: number) {
  const written: string[] = [];
  let left = room;
  return {
    written,
    write: (chunk: string) => {
      written.push(chunk);
      left--;
      return left > 0;
    },
    open(n: number) {
      left = n;
    },
  };
}

function parseData(frame: string): Record<string, unknown> {
  return JSON.parse(/\ndata: (.*)\n/.exec(frame)![1]!);
}

describe('LiveHub', () => {
  it('sends each result to every subscriber as one SSE frame with event type and JSON data', () => {
    const hub = new LiveHub();
    const a = fakeSocket(100), b = fakeSocket(100);
    hub.subscribe({ feeder: null, write: a.write, onDrop: () => {} });
    hub.subscribe({ feeder: null, write: b.write, onDrop: () => {} });
    hub.publishResult(agg('EH-F1', T0));
    expect(a.written).toHaveLength(1);
    expect(a.written[0]).toBe(b.written[0]);
    expect(a.written[0]).toMatch(/^id: \d+\nevent: result\ndata: \{.*\}\n\n$/);
    expect(parseData(a.written[0]!)).toMatchObject({ feeder: 'EH-F1', window: '3s', ts: new Date(T0).toISOString() });
  });

  it('delivers only the chosen feeder to a filtered subscriber, alarms and events included', () => {
    const hub = new LiveHub();
    const s = fakeSocket(100);
    hub.subscribe({ feeder: 'EH-F2', write: s.write, onDrop: () => {} });
    hub.publishResult(agg('EH-F1', T0));
    hub.publishAlarm(alarm('EH-F1', T0, 'open-phase', 'raised', 1, 0.4, 'a'));
    hub.publishEvent(faultEvent('EH-F2', T0));
    hub.publishAlarm(alarm('EH-F2', T0, 'voltage-unbalance', 'raised', 3.2, 3));
    expect(s.written.map((w) => /event: (\w+)/.exec(w)![1])).toEqual(['event', 'alarm']);
  });

  it('passes per-frame results of a feeder at most once per resultIntervalMs of data time', () => {
    const hub = new LiveHub({ resultIntervalMs: 500 });
    const s = fakeSocket(1000);
    hub.subscribe({ feeder: null, write: s.write, onDrop: () => {} });
    // 60 frames per second for one second: 0, 500 ms pass (2 of 60).
    for (let k = 0; k < 60; k++) hub.publishResult(makeResult('EH-F1', T0 + (k * 1000) / 60, 'frame', V, I));
    expect(s.written).toHaveLength(2);
  });

  it('queues while the socket is full and delivers in order once it drains', () => {
    const hub = new LiveHub({ bufferCapacity: 10 });
    const s = fakeSocket(1);
    const sub = hub.subscribe({ feeder: null, write: s.write, onDrop: () => {} });
    for (let k = 0; k < 5; k++) hub.publishResult(agg('EH-F1', T0 + 3000 * k));
    expect(s.written).toHaveLength(1);
    expect(sub.queued).toBe(4);
    s.open(100);
    sub.drain();
    expect(s.written.map((w) => parseData(w).ts)).toEqual([0, 1, 2, 3, 4].map((k) => new Date(T0 + 3000 * k).toISOString()));
    expect(sub.queued).toBe(0);
  });

  it('drops a subscriber whose queue overflows, counts it, and never queues more than its bound', () => {
    const hub = new LiveHub({ bufferCapacity: 8 });
    const s = fakeSocket(1);
    let dropped = 0;
    const sub = hub.subscribe({ feeder: null, write: s.write, onDrop: () => dropped++ });
    let maxQueued = 0;
    for (let k = 0; k < 1000; k++) {
      hub.publishResult(agg('EH-F1', T0 + 3000 * k));
      maxQueued = Math.max(maxQueued, sub.queued);
    }
    expect(maxQueued).toBeLessThanOrEqual(8);
    expect(dropped).toBe(1);
    expect(sub.closed).toBe(true);
    expect(hub.stats()).toMatchObject({ subscribers: 0, dropped: 1 });
  });

  it('keeps serving the fast subscribers when a slow one is dropped', () => {
    const hub = new LiveHub({ bufferCapacity: 2 });
    const slow = fakeSocket(1), fast = fakeSocket(10_000);
    hub.subscribe({ feeder: null, write: slow.write, onDrop: () => {} });
    hub.subscribe({ feeder: null, write: fast.write, onDrop: () => {} });
    for (let k = 0; k < 50; k++) hub.publishResult(agg('EH-F1', T0 + 3000 * k));
    expect(fast.written).toHaveLength(50);
    expect(hub.stats().subscribers).toBe(1);
  });

  it('passes heartbeat comments through the same bounded queue', () => {
    const hub = new LiveHub();
    const s = fakeSocket(10);
    const sub = hub.subscribe({ feeder: null, write: s.write, onDrop: () => {} });
    sub.comment('heartbeat\nspoof: x');
    expect(s.written).toEqual([': heartbeat spoof: x\n\n']);
  });

  it('ends every subscription on close, and close is idempotent', async () => {
    const hub = new LiveHub();
    const sub = hub.subscribe({ feeder: null, write: fakeSocket(10).write, onDrop: () => {} });
    await hub.close();
    await hub.close();
    expect(sub.closed).toBe(true);
    expect(hub.stats().subscribers).toBe(0);
  });
});
