/**
 * One behavioural suite for every TrendStore (memory, SQLite, InfluxDB), in
 * the manner of a port contract: each implementation's test file calls
 * trendStoreContract with a factory. What it pins down is the port's promise
 * in agent/core/ports.ts plus the keying documented in docs/storage.md.
 */
import { afterEach, describe, expect, test } from 'vitest';
import type { TrendStore } from '../../agent/core/ports.js';
import type { SequenceResult } from '../../agent/core/result.js';
import { DAY, HOUR, MINUTE, WINDOW_MS, alarm, disturbance, fullResult, hollowResult, recentBase, sparseResult } from './trend-store-fixtures.js';

export interface ContractOptions {
  /** The kind reported by health(). */
  readonly kind: string;
  /** Only for a server binary that is not installed on this machine. */
  readonly skip?: boolean;
}

export function trendStoreContract(name: string, makeStore: () => Promise<TrendStore>, options: ContractOptions): void {
  describe.skipIf(options.skip === true)(`TrendStore contract: ${name}`, () => {
    const opened: TrendStore[] = [];
    async function open(): Promise<TrendStore> {
      const s = await makeStore();
      opened.push(s);
      return s;
    }
    afterEach(async () => {
      while (opened.length > 0) await opened.pop()!.close().catch(() => undefined);
    });

    test('returns a written result identical to what was written, every field included', async () => {
      const s = await open();
      const t = recentBase();
      const written = [fullResult('F1', '3s', t, 0), fullResult('F1', '3s', t + 3000, 1)];
      await s.writeResults(written);
      expect(await s.queryTrend('F1', '3s', { from: t, to: t + 6000 })).toStrictEqual(written);
    });

    test('keeps null fields null: no current, no frequency, magnitude-only phasors, no THD', async () => {
      const s = await open();
      const t = recentBase();
      const written = sparseResult('F1', '10min', t);
      await s.writeResults([written]);
      expect(await s.queryTrend('F1', '10min', { from: t, to: t + 1 })).toStrictEqual([written]);
    });

    test('tells a quantity whose every measure is null apart from an absent quantity', async () => {
      const s = await open();
      const t = recentBase();
      const written = hollowResult('F1', '2h', t);
      await s.writeResults([written]);
      const [back] = await s.queryTrend('F1', '2h', { from: t, to: t + 1 });
      expect(back).toStrictEqual(written);
      expect(back.v).not.toBeNull();
      expect(back.i).not.toBeNull();
    });

    test('answers a trend query with from <= ts < to, oldest first, for one feeder and window only', async () => {
      const s = await open();
      const t = recentBase();
      const batch: SequenceResult[] = [];
      for (let k = 9; k >= 0; k--) batch.push(fullResult('F1', '3s', t + k * 3000, k));
      batch.push(fullResult('F2', '3s', t + 6000, 0), fullResult('F1', '10min', t, 0));
      await s.writeResults(batch);
      const back = await s.queryTrend('F1', '3s', { from: t + 3000, to: t + 9000 });
      expect(back.map((r) => r.ts)).toEqual([t + 3000, t + 6000]);
      expect(back.every((r) => r.feeder === 'F1' && r.window === '3s')).toBe(true);
    });

    test('replaces a result rewritten with the same feeder, window and time, so a re-sent point is harmless', async () => {
      const s = await open();
      const t = recentBase();
      await s.writeResults([fullResult('F1', '3s', t, 0)]);
      await s.writeResults([fullResult('F1', '3s', t, 0), fullResult('F1', '3s', t, 4)]);
      expect(await s.queryTrend('F1', '3s', { from: t, to: t + 3000 })).toStrictEqual([fullResult('F1', '3s', t, 4)]);
    });

    test('keeps times to the millisecond', async () => {
      const s = await open();
      const t = recentBase() + 1;
      await s.writeResults([fullResult('F1', '3s', t, 0), fullResult('F1', '3s', t + 1, 0)]);
      const back = await s.queryTrend('F1', '3s', { from: t, to: t + 2 });
      expect(back.map((r) => r.ts)).toEqual([t, t + 1]);
    });

    test('returns a week of 10-minute data (1008 results) complete and in order', async () => {
      const s = await open();
      const t = recentBase(8);
      const week: SequenceResult[] = [];
      for (let k = 0; k < 1008; k++) week.push(fullResult('F1', '10min', t + k * WINDOW_MS['10min'], k % 7));
      await s.writeResults(week);
      expect(await s.queryTrend('F1', '10min', { from: t, to: t + 7 * DAY })).toStrictEqual(week);
    });

    test('resolves an empty batch without storing anything', async () => {
      const s = await open();
      await s.writeResults([]);
      expect(await s.feeders()).toEqual([]);
    });

    test('refuses a batch with a bad feeder id with STORE_WRITE_FAILED and stores none of it', async () => {
      const s = await open();
      const t = recentBase();
      const bad = [fullResult('F1', '3s', t, 0), fullResult('F 1;drop', '3s', t, 0)];
      await expect(s.writeResults(bad)).rejects.toMatchObject({ code: 'STORE_WRITE_FAILED' });
      expect(await s.queryTrend('F1', '3s', { from: t, to: t + 3000 })).toEqual([]);
    });

    test('refuses a result of a non-aggregate window with STORE_WRITE_FAILED', async () => {
      const s = await open();
      const r = { ...fullResult('F1', '3s', recentBase(), 0), window: 'frame' as const };
      await expect(s.writeResults([r])).rejects.toMatchObject({ code: 'STORE_WRITE_FAILED', details: { field: 'window' } });
    });

    test('refuses a non-finite value with STORE_WRITE_FAILED naming the field', async () => {
      const s = await open();
      const r = fullResult('F1', '3s', recentBase(), 0);
      r.v!.neg = [Number.NaN, 3];
      await expect(s.writeResults([r])).rejects.toMatchObject({ code: 'STORE_WRITE_FAILED', details: { field: 'v.neg[0]' } });
    });

    test('returns alarm transitions oldest first, filtered by feeder and time, null fields kept', async () => {
      const s = await open();
      const t = recentBase();
      const a1 = alarm('F1', t + 2 * MINUTE);
      const a2 = alarm('F1', t + MINUTE, { condition: 'open-phase', level: 'alarm', phase: 'c', value: 0.98, limit: 0.5 });
      const a3 = alarm('F2', t + MINUTE, { state: 'cleared', value: null, limit: null, message: 'line one\nline two' });
      for (const a of [a1, a2, a3]) await s.writeAlarm(a);
      expect(await s.queryAlarms({})).toStrictEqual([a2, a3, a1]);
      expect(await s.queryAlarms({ feeder: 'F1' })).toStrictEqual([a2, a1]);
      expect(await s.queryAlarms({ from: t + MINUTE, to: t + 2 * MINUTE })).toStrictEqual([a2, a3]);
      expect(await s.queryAlarms({ feeder: 'F2', from: t + 2 * MINUTE })).toStrictEqual([]);
    });

    test('reports as active only the latest transition per feeder and condition, and only when raised', async () => {
      const s = await open();
      const t = recentBase();
      const stillRaised = alarm('F1', t, { condition: 'open-phase', phase: 'b' });
      const reRaised = alarm('F2', t + 3 * MINUTE, { level: 'alarm' });
      const writes = [
        alarm('F1', t),
        alarm('F1', t + MINUTE, { state: 'cleared' }),
        stillRaised,
        alarm('F2', t + MINUTE),
        alarm('F2', t + 2 * MINUTE, { state: 'cleared' }),
        reRaised,
      ];
      for (const a of writes) await s.writeAlarm(a);
      expect(await s.activeAlarms()).toStrictEqual([stillRaised, reRaised]);
    });

    test('replaces an alarm transition rewritten with the same feeder, condition and time', async () => {
      const s = await open();
      const t = recentBase();
      await s.writeAlarm(alarm('F1', t));
      await s.writeAlarm(alarm('F1', t, { level: 'alarm', value: 5.5 }));
      expect(await s.queryAlarms({ feeder: 'F1' })).toStrictEqual([alarm('F1', t, { level: 'alarm', value: 5.5 })]);
    });

    test('refuses an alarm transition with an unknown condition with STORE_WRITE_FAILED', async () => {
      const s = await open();
      const bad = { ...alarm('F1', recentBase()), condition: 'overheating' } as unknown as Parameters<TrendStore['writeAlarm']>[0];
      await expect(s.writeAlarm(bad)).rejects.toMatchObject({ code: 'STORE_WRITE_FAILED', details: { field: 'condition' } });
      expect(await s.queryAlarms({})).toEqual([]);
    });

    test('returns disturbance events oldest first, filtered by feeder and time, null fields kept', async () => {
      const s = await open();
      const t = recentBase();
      const e1 = disturbance('F1', t + 500);
      const e2 = disturbance('F2', t + 250, { type: 'BCG', peakPhase: 'b', i0OverI1: null, i2OverI1: 0.42 });
      const e3 = disturbance('F1', t + 9000, { type: 'ABC', i0OverI1: null });
      for (const e of [e1, e2, e3]) await s.writeEvent(e);
      expect(await s.queryEvents({})).toStrictEqual([e2, e1, e3]);
      expect(await s.queryEvents({ feeder: 'F1', from: t, to: t + 9000 })).toStrictEqual([e1]);
    });

    test('lists each feeder with stored results and its newest result time over all windows', async () => {
      const s = await open();
      const t = recentBase();
      await s.writeResults([fullResult('F2', '3s', t + 3000), fullResult('F2', '3s', t), fullResult('F1', '3s', t), fullResult('F1', '2h', t + HOUR)]);
      expect(await s.feeders()).toEqual([
        { feeder: 'F1', lastTs: t + HOUR },
        { feeder: 'F2', lastTs: t + 3000 },
      ]);
    });

    test('returns copies: changing a returned result does not change what is stored', async () => {
      const s = await open();
      const t = recentBase();
      await s.writeResults([fullResult('F1', '3s', t)]);
      const [first] = await s.queryTrend('F1', '3s', { from: t, to: t + 1 });
      first.v!.u2 = 99;
      expect(await s.queryTrend('F1', '3s', { from: t, to: t + 1 })).toStrictEqual([fullResult('F1', '3s', t)]);
    });

    test('reports itself healthy, with its kind, while open', async () => {
      const s = await open();
      expect(s.health()).toMatchObject({ kind: options.kind, ok: true });
    });

    test('closes idempotently and refuses writes afterwards with STORE_WRITE_FAILED', async () => {
      const s = await open();
      await s.close();
      await s.close();
      await expect(s.writeResults([fullResult('F1', '3s', recentBase())])).rejects.toMatchObject({ code: 'STORE_WRITE_FAILED' });
    });

    test('is destroyed idempotently and refuses queries afterwards with STORE_QUERY_FAILED', async () => {
      const s = await open();
      s.destroy(new Error('test abort'));
      s.destroy();
      await expect(s.feeders()).rejects.toMatchObject({ code: 'STORE_QUERY_FAILED' });
    });
  });
}
