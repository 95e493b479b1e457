/**
 * The source's retry timing runs on the injected Scheduler (STYLE habit 5), so
 * the back-off can be followed step by step. The "broker" is a loopback port
 * with nothing listening: every attempt is refused at once.
 */
import { afterEach, describe, expect, test } from 'vitest';
import type { SourceState } from '../../../agent/core/ports.js';
import { MqttSource } from '../../../agent/sources/mqtt/mqtt-source.js';
import { freePort, waitFor } from '../../helpers/free-port.js';
import { FrameCollector } from '../../helpers/mqtt-test-sink.js';
import { Teardown } from '../../helpers/teardown.js';
import { StepScheduler } from '../../helpers/mqtt-step-scheduler.js';

describe('MqttSource retry timing on an injected scheduler', () => {
  const td = new Teardown();
  afterEach(() => td.run());

  async function refusedSource(): Promise<{ src: MqttSource; sched: StepScheduler; states: SourceState[] }> {
    const port = await freePort();
    const sched = new StepScheduler();
    const states: SourceState[] = [];
    // random() = 0.999999: each delay equals its cap, so the sequence is exact.
    const src = new MqttSource({
      url: `mqtt://127.0.0.1:${port}`,
      reconnect: { minMs: 100, maxMs: 1_000 },
      scheduler: sched,
      random: () => 0.999999,
      onState: (s) => states.push(s.state),
    });
    td.add(() => src.destroy());
    await src.start(new FrameCollector());
    return { src, sched, states };
  }

  test('each refused attempt schedules the next one with a doubled delay, capped at maxMs', async () => {
    const { sched } = await refusedSource();
    for (let k = 0; k < 6; k++) {
      await waitFor(() => sched.pending.length === 1, 2_000);
      sched.fire();
    }
    await waitFor(() => sched.pending.length === 1, 2_000);
    expect(sched.requested).toEqual([100, 200, 400, 800, 1_000, 1_000, 1_000]);
  });

  test('the state goes connecting -> reconnecting once, not once per attempt', async () => {
    const { src, sched, states } = await refusedSource();
    for (let k = 0; k < 3; k++) {
      await waitFor(() => sched.pending.length === 1, 2_000);
      sched.fire();
    }
    await waitFor(() => sched.pending.length === 1, 2_000);
    expect(states).toEqual(['connecting', 'reconnecting']);
    expect(src.status().lastError).toMatch(/ECONNREFUSED/);
    expect(src.counters().reconnectAttempts).toBe(3);
  });

  test('the log has one line per state change (info, warn for reconnecting); retries go to debug only', async () => {
    const port = await freePort();
    const sched = new StepScheduler();
    const lines: { level: string; msg: string }[] = [];
    const rec = (level: string) => (_obj: object, msg?: string) => void lines.push({ level, msg: msg ?? '' });
    const src = new MqttSource({
      url: `mqtt://127.0.0.1:${port}`,
      name: 'feeder-bus-1',
      reconnect: { minMs: 100, maxMs: 1_000 },
      scheduler: sched,
      logger: { info: rec('info'), warn: rec('warn'), error: rec('error'), debug: rec('debug') },
    });
    td.add(() => src.destroy());
    await src.start(new FrameCollector());
    for (let k = 0; k < 3; k++) {
      await waitFor(() => sched.pending.length === 1, 2_000);
      sched.fire();
    }
    await waitFor(() => sched.pending.length === 1, 2_000);
    expect(lines.filter((l) => l.level !== 'debug').map((l) => `${l.level} ${l.msg.replace(/ \(.*$/, '')}`)).toEqual([
      'info mqtt source feeder-bus-1: idle -> connecting',
      'warn mqtt source feeder-bus-1: connecting -> reconnecting',
    ]);
    expect(lines.filter((l) => l.level === 'debug' && l.msg.includes('next connection attempt'))).toHaveLength(4);
  });

  test('destroy() cancels the pending retry', async () => {
    const { src, sched } = await refusedSource();
    await waitFor(() => sched.pending.length === 1, 2_000);
    src.destroy();
    expect(sched.pending).toHaveLength(0);
    expect(src.status().state).toBe('closed');
  });

  test('start() twice is refused with SRC_CONFIG', async () => {
    const { src } = await refusedSource();
    await expect(src.start(new FrameCollector())).rejects.toMatchObject({ code: 'SRC_CONFIG' });
  });
});
