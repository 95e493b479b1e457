/**
 * TrendStore held in memory: the fake other adapters' tests use, and the
 * reference behaviour the contract suite pins down. Records are keyed like
 * the durable stores key them (result: feeder+window+ts, alarm:
 * feeder+condition+ts, event: feeder+type+ts), so a rewrite replaces, and
 * every record is copied in and out so callers cannot change what is stored.
 */
import { AgentError } from '../../core/errors.js';
import type { AlarmTransition, DisturbanceEvent } from '../../core/detect/types.js';
import type { AlarmQuery, EventQuery, StoreHealth, TimeRange, TrendStore } from '../../core/ports.js';
import type { AggregateWindow, SequenceResult } from '../../core/result.js';
import { checkAlarm, checkEvent, checkResults } from '../record-check.js';
import { compareAlarms, compareEvents } from '../record-order.js';

type Lifecycle = 'open' | 'closed' | 'destroyed';

function inRange(ts: number, from: number | undefined, to: number | undefined): boolean {
  return (from === undefined || ts >= from) && (to === undefined || ts < to);
}

export class MemoryStore implements TrendStore {
  /** feeder -> window -> ts -> result */
  private readonly results = new Map<string, Map<AggregateWindow, Map<number, SequenceResult>>>();
  private readonly alarms = new Map<string, AlarmTransition>();
  private readonly events = new Map<string, DisturbanceEvent>();
  private state: Lifecycle = 'open';
  private failure: Error | null = null;

  private assertOpen(code: 'STORE_WRITE_FAILED' | 'STORE_QUERY_FAILED'): void {
    if (this.state !== 'open') throw new AgentError(code, `the memory store is ${this.state}; open a new store`, { cause: this.failure ?? undefined });
  }

  async writeResults(results: readonly SequenceResult[]): Promise<void> {
    this.assertOpen('STORE_WRITE_FAILED');
    checkResults(results);
    for (const r of results) {
      const copy = structuredClone(r);
      copy.ts = Math.round(copy.ts);
      let byWindow = this.results.get(copy.feeder);
      if (byWindow === undefined) this.results.set(copy.feeder, (byWindow = new Map()));
      const window = copy.window as AggregateWindow;
      let byTs = byWindow.get(window);
      if (byTs === undefined) byWindow.set(window, (byTs = new Map()));
      byTs.set(copy.ts, copy);
    }
  }

  async writeAlarm(transition: AlarmTransition): Promise<void> {
    this.assertOpen('STORE_WRITE_FAILED');
    checkAlarm(transition);
    const copy = { ...transition, ts: Math.round(transition.ts) };
    this.alarms.set(`${copy.feeder}\n${copy.condition}\n${copy.ts}`, copy);
  }

  async writeEvent(event: DisturbanceEvent): Promise<void> {
    this.assertOpen('STORE_WRITE_FAILED');
    checkEvent(event);
    const copy = { ...event, ts: Math.round(event.ts) };
    this.events.set(`${copy.feeder}\n${copy.type}\n${copy.ts}`, copy);
  }

  async queryTrend(feeder: string, window: AggregateWindow, range: TimeRange): Promise<SequenceResult[]> {
    this.assertOpen('STORE_QUERY_FAILED');
    const byTs = this.results.get(feeder)?.get(window);
    if (byTs === undefined) return [];
    const out: SequenceResult[] = [];
    for (const r of byTs.values()) if (r.ts >= range.from && r.ts < range.to) out.push(structuredClone(r));
    return out.sort((x, y) => x.ts - y.ts);
  }

  async queryAlarms(query: AlarmQuery): Promise<AlarmTransition[]> {
    this.assertOpen('STORE_QUERY_FAILED');
    const out: AlarmTransition[] = [];
    for (const a of this.alarms.values()) {
      if ((query.feeder === undefined || a.feeder === query.feeder) && inRange(a.ts, query.from, query.to)) out.push({ ...a });
    }
    return out.sort(compareAlarms);
  }

  async activeAlarms(): Promise<AlarmTransition[]> {
    this.assertOpen('STORE_QUERY_FAILED');
    const latest = new Map<string, AlarmTransition>();
    for (const a of this.alarms.values()) {
      const key = `${a.feeder}\n${a.condition}`;
      const seen = latest.get(key);
      if (seen === undefined || a.ts > seen.ts) latest.set(key, a);
    }
    return [...latest.values()].filter((a) => a.state === 'raised').map((a) => ({ ...a })).sort(compareAlarms);
  }

  async queryEvents(query: EventQuery): Promise<DisturbanceEvent[]> {
    this.assertOpen('STORE_QUERY_FAILED');
    const out: DisturbanceEvent[] = [];
    for (const e of this.events.values()) {
      if ((query.feeder === undefined || e.feeder === query.feeder) && inRange(e.ts, query.from, query.to)) out.push({ ...e });
    }
    return out.sort(compareEvents);
  }

  async feeders(): Promise<{ feeder: string; lastTs: number }[]> {
    this.assertOpen('STORE_QUERY_FAILED');
    const out: { feeder: string; lastTs: number }[] = [];
    for (const [feeder, byWindow] of this.results) {
      let lastTs = -Infinity;
      for (const byTs of byWindow.values()) for (const ts of byTs.keys()) if (ts > lastTs) lastTs = ts;
      if (lastTs > -Infinity) out.push({ feeder, lastTs });
    }
    return out.sort((x, y) => (x.feeder < y.feeder ? -1 : x.feeder > y.feeder ? 1 : 0));
  }

  health(): StoreHealth {
    return {
      kind: 'memory',
      ok: this.state === 'open',
      detail: this.state === 'open' ? null : `store ${this.state}`,
      queued: 0,
      queueCapacity: 0,
    };
  }

  async close(): Promise<void> {
    if (this.state === 'open') this.state = 'closed';
  }

  destroy(err?: Error): void {
    if (this.state === 'destroyed') return;
    this.state = 'destroyed';
    this.failure = err ?? null;
  }
}
