/**
 * Groups monitored-item values of one feeder into frames by SOURCE timestamp.
 *
 * OPC UA delivers each node's value separately. Values whose source
 * timestamps lie within `toleranceMs` of each other (all pairwise, so a group
 * spans at most the tolerance) form one group; when every slot of the feeder
 * is filled the group becomes a frame whose ts is the earliest timestamp.
 * Groups that cannot complete are dropped and counted: when a newer group
 * completes (frames must leave in time order), when data `incompleteAfterMs`
 * newer has arrived, or when the bound on pending groups is reached. A value
 * not later than the last emitted frame is late and counted, never emitted
 * out of order. No timers here: time comes with the values.
 */
import type { OpcuaFeeder } from './options.js';

/** One monitored node of a feeder and where its value goes in the frame. */
export interface Slot {
  readonly nodeId: string;
  /** Dotted place in the payload, e.g. "v.a.mag", "vll.ab", "freq". */
  readonly path: string;
}

export interface AssemblerCounters {
  framesAssembled: number;
  /** Groups dropped because they could not complete (a value never came). */
  groupsIncomplete: number;
  /** Values older than the last emitted frame. */
  valuesLate: number;
}

interface Group {
  minTs: number;
  maxTs: number;
  filled: number;
  readonly has: Uint8Array;
  readonly values: Float64Array;
}

const PHASES = ['a', 'b', 'c'] as const;

/** The slots of a feeder in a fixed order. */
export function feederSlots(f: OpcuaFeeder): Slot[] {
  const slots: Slot[] = [];
  if (f.kind === 'phasor') {
    for (const q of ['v', 'i'] as const) {
      const set = f.nodes[q];
      if (set === undefined) continue;
      for (const ph of PHASES) {
        slots.push({ nodeId: set[ph].mag, path: `${q}.${ph}.mag` });
        slots.push({ nodeId: set[ph].ang, path: `${q}.${ph}.ang` });
      }
    }
  } else {
    if (f.nodes.vll !== undefined) for (const pair of ['ab', 'bc', 'ca'] as const) slots.push({ nodeId: f.nodes.vll[pair], path: `vll.${pair}` });
    for (const q of ['vln', 'i'] as const) {
      const set = f.nodes[q];
      if (set !== undefined) for (const ph of PHASES) slots.push({ nodeId: set[ph], path: `${q}.${ph}` });
    }
  }
  if (f.nodes.freq !== undefined) slots.push({ nodeId: f.nodes.freq, path: 'freq' });
  return slots;
}

export interface AssemblerSettings {
  readonly toleranceMs: number;
  readonly incompleteAfterMs: number;
  /** Bound on groups waiting at once (memory bound if one node stops updating). */
  readonly maxPendingGroups: number;
}

const RAD_TO_DEG = 180 / Math.PI;

export class FrameAssembler {
  readonly slots: readonly Slot[];
  readonly counters: AssemblerCounters = { framesAssembled: 0, groupsIncomplete: 0, valuesLate: 0 };
  private readonly pending: Group[] = [];
  private lastEmittedTs = -Infinity;
  private readonly angleFactor: number;
  private readonly vScale: number;
  private readonly iScale: number;

  constructor(private readonly feeder: OpcuaFeeder, private readonly settings: AssemblerSettings) {
    this.slots = feederSlots(feeder);
    this.angleFactor = feeder.kind === 'phasor' && feeder.angleUnit === 'rad' ? RAD_TO_DEG : 1;
    this.vScale = feeder.voltageScale ?? 1;
    this.iScale = feeder.currentScale ?? 1;
  }

  get pendingGroups(): number {
    return this.pending.length;
  }

  /**
   * Offers one value. Returns the assembled wire payload when this value
   * completed a frame, else null.
   */
  offer(slot: number, value: number, ts: number): Record<string, unknown> | null {
    if (ts <= this.lastEmittedTs) {
      this.counters.valuesLate++;
      return null;
    }
    this.expire(ts);
    const tol = this.settings.toleranceMs;
    let g: Group | undefined;
    for (const p of this.pending) {
      if (p.has[slot] === 0 && ts >= p.maxTs - tol && ts <= p.minTs + tol) {
        g = p;
        break;
      }
    }
    if (g === undefined) {
      g = { minTs: ts, maxTs: ts, filled: 0, has: new Uint8Array(this.slots.length), values: new Float64Array(this.slots.length) };
      this.insert(g);
    }
    g.has[slot] = 1;
    g.values[slot] = value;
    g.filled++;
    if (ts < g.minTs) {
      g.minTs = ts;
      // Keep pending ordered by minTs.
      this.pending.splice(this.pending.indexOf(g), 1);
      this.insert(g);
    }
    if (ts > g.maxTs) g.maxTs = ts;
    if (g.filled < this.slots.length) return null;
    // Complete: older pending groups can no longer leave in order.
    const idx = this.pending.indexOf(g);
    this.counters.groupsIncomplete += idx;
    this.pending.splice(0, idx + 1);
    this.lastEmittedTs = g.minTs;
    this.counters.framesAssembled++;
    return this.payload(g);
  }

  /** Drops every pending group (on close or a new session); returns how many. */
  dropAll(): number {
    const n = this.pending.length;
    this.counters.groupsIncomplete += n;
    this.pending.length = 0;
    return n;
  }

  /** Forgets the last emitted time, after a server restart whose clock may differ. */
  resetOrder(): void {
    this.lastEmittedTs = -Infinity;
  }

  private insert(g: Group): void {
    let k = this.pending.length;
    while (k > 0 && this.pending[k - 1]!.minTs > g.minTs) k--;
    this.pending.splice(k, 0, g);
    if (this.pending.length > this.settings.maxPendingGroups) {
      this.pending.shift();
      this.counters.groupsIncomplete++;
    }
  }

  private expire(newest: number): void {
    const limit = newest - this.settings.incompleteAfterMs;
    let k = 0;
    while (k < this.pending.length && this.pending[k]!.minTs < limit) k++;
    if (k > 0) {
      this.pending.splice(0, k);
      this.counters.groupsIncomplete += k;
    }
  }

  private payload(g: Group): Record<string, unknown> {
    const out: Record<string, unknown> = { feeder: this.feeder.id, kind: this.feeder.kind, ts: g.minTs };
    for (let s = 0; s < this.slots.length; s++) {
      const path = this.slots[s]!.path;
      const parts = path.split('.');
      let x = g.values[s]!;
      const q = parts[0]!;
      if (q === 'freq') {
        out.freq = x;
        continue;
      }
      const scale = q === 'i' ? this.iScale : this.vScale;
      if (this.feeder.kind === 'phasor') {
        const set = (out[q] ??= {}) as Record<string, [number, number]>;
        const pair = (set[parts[1]!] ??= [0, 0]);
        if (parts[2] === 'mag') pair[0] = x * scale;
        else pair[1] = x * this.angleFactor;
      } else {
        x *= scale;
        ((out[q] ??= {}) as Record<string, number>)[parts[1]!] = x;
      }
    }
    return out;
  }
}
