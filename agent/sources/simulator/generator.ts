/**
 * Pure generation of the fictional Wrenmoor substation's frames: a frame is a
 * function of the feeder, its timestamp and the options, nothing else (no
 * clock, no state), so tests can ask for any instant and get the same answer.
 *
 * Model (per feeder, at the feeder breaker):
 *   bus voltage  = positive sequence held by the transformer's tap changer,
 *                  sagging with total load, plus a small negative- and
 *                  zero-sequence part from the supply;
 *   load         = balanced three-phase load + single-phase laterals, each
 *                  following its daily shape, constant power at a fixed
 *                  power factor;
 *   measured V   = bus V - Zhead·I per phase (regulator, exit cable and the
 *                  transformer share), so unequal phase currents add
 *                  feeder-specific voltage unbalance.
 * Frame timestamps are real time; `speed` only compresses the daily shape and
 * the daily events (fuse, faults), so aggregation and alarm delays behave as
 * they would live.
 */
import type { FrameKind } from '../../core/frames.js';
import { loadShape } from './load-shape.js';
import { signed, unit } from './random.js';
import { NOMINAL_LN_V, SUBSTATION_NAME, WRENMOOR_FEEDERS } from './substation.js';
import type { SimFeeder } from './substation.js';

export interface SimulatorOptions {
  /** Real time (epoch ms) at which the simulated day is at `startHour`. */
  readonly originMs: number;
  readonly seed?: number;
  /** Simulated seconds per real second for the daily shape (1 = real time). */
  readonly speed?: number;
  /** Simulated hour of day at originMs. */
  readonly startHour?: number;
  readonly nominalHz?: 50 | 60;
  readonly feeders?: readonly SimFeeder[];
}

/** A frame in the wire JSON shape of shared/ARCHITECTURE.md, with where it goes. */
export interface SimulatedFrame {
  readonly feeder: string;
  readonly kind: FrameKind;
  /** Epoch ms. */
  readonly ts: number;
  readonly payload: Record<string, unknown>;
}

/** The true phasors behind a frame (rectangular, RMS: [aRe, aIm, bRe, bIm, cRe, cIm]) and the scenario state. */
export interface FeederTruth {
  readonly feeder: string;
  readonly ts: number;
  readonly hourOfDay: number;
  readonly freq: number;
  readonly v: Float64Array;
  readonly i: Float64Array;
  readonly fuseOpen: boolean;
  readonly faultActive: boolean;
}

const HOUR_MS = 3_600_000;
const DAY_MS = 24 * HOUR_MS;
const DEG = Math.PI / 180;
const SQRT2 = Math.SQRT2;

/** Feeder-head series impedance, ohms (0.12 + j0.35): regulator, exit cable and transformer share (invented, typical order). */
const Z_HEAD_R = 0.12;
const Z_HEAD_X = 0.35;
/** Supply unbalance at the bus: |V2| and |V0| in per unit of V1 (invented, inside the usual 0.5-2 % of IEEE 1159, from memory). */
const SOURCE_V2_BASE = 0.0042;
const SOURCE_V2_PER_LOAD = 0.003;
const SOURCE_V0 = 0.0016;
/** Frequency wander: two slow sinusoids, Hz amplitude and period s (well inside the ±0.05 Hz of a large interconnection, common practice). */
const FREQ_WANDER: readonly (readonly [number, number, number])[] = [
  [0.012, 97, 0],
  [0.006, 13.3, 1],
];
/** Load noise per frame (per-unit, uniform ±) and measurement noise on voltage magnitudes. */
const LOAD_NOISE = 0.015;
const VOLTAGE_NOISE = 0.0004;
const SAMPLE_NOISE = 0.0005;
/** Day-to-day variation of each feeder's load, per unit (±). */
const DAY_VARIATION = 0.08;
/** Jitter of daily event times (fuse, faults), hours (±). */
const EVENT_JITTER_H = 0.25;
/** Fault current lags the faulted phase's pre-fault voltage by the source X/R angle (X/R ≈ 5 → 78°, common practice). */
const FAULT_ANGLE_DEG = 78;
/**
 * Voltage left on the faulted phase for a close-in fault of FAULT_REF_A: 0.3 pu at the faulted feeder's head, 0.62 pu
 * on the bus as the other feeders see it; sound phases rise a little (invented, typical of an effectively grounded
 * system). Smaller fault currents (a fault far out on a tap) sag proportionally less.
 */
const FAULT_REF_A = 3200;
const FAULT_V_FEEDER = 0.3;
const FAULT_V_BUS = 0.62;
const FAULT_V_SOUND = 1.03;

function sagFactor(fullSag: number, currentA: number): number {
  return 1 - (1 - fullSag) * Math.min(1, currentA / FAULT_REF_A);
}

type C = [number, number];

const cmul = (a: C, b: C): C => [a[0] * b[0] - a[1] * b[1], a[0] * b[1] + a[1] * b[0]];
const polar = (m: number, deg: number): C => [m * Math.cos(deg * DEG), m * Math.sin(deg * DEG)];
const mag = (a: C): number => Math.hypot(a[0], a[1]);
const argDeg = (a: C): number => Math.atan2(a[1], a[0]) / DEG;
const roundTo = (x: number, digits: number): number => Number(x.toFixed(digits));

const PHASES = ['a', 'b', 'c'] as const;
const A1: C = polar(1, 120);
const A2: C = polar(1, -120);

export class SubstationSimulator {
  readonly name = SUBSTATION_NAME;
  readonly feeders: readonly SimFeeder[];
  readonly nominalHz: 50 | 60;
  private readonly originMs: number;
  private readonly seed: number;
  private readonly speed: number;
  private readonly startHour: number;
  private readonly byId: ReadonlyMap<string, { feeder: SimFeeder; index: number }>;
  private readonly peakTotalKw: number;

  constructor(options: SimulatorOptions) {
    this.originMs = options.originMs;
    this.seed = options.seed ?? 1;
    this.speed = options.speed ?? 1;
    this.startHour = options.startHour ?? 6;
    this.nominalHz = options.nominalHz ?? 60;
    this.feeders = options.feeders ?? WRENMOOR_FEEDERS;
    if (!(this.speed >= 1) || !Number.isFinite(this.speed)) throw new RangeError(`speed must be >= 1, got ${this.speed}`);
    this.byId = new Map(this.feeders.map((feeder, index) => [feeder.id, { feeder, index }]));
    this.peakTotalKw = this.feeders.reduce((s, f) => s + f.threePhasePeakKw + f.laterals.reduce((t, l) => t + l.peakKw, 0), 0);
  }

  /** Simulated time since the start of simulated day 0, ms. */
  scenarioMs(ts: number): number {
    return this.startHour * HOUR_MS + (ts - this.originMs) * this.speed;
  }

  /** Simulated hour of day (0-24) at real time ts. */
  hourOfDay(ts: number): number {
    const s = this.scenarioMs(ts);
    return (((s % DAY_MS) + DAY_MS) % DAY_MS) / HOUR_MS;
  }

  /** Real time (epoch ms) at which the simulation reaches `hour` of simulated day `day`. */
  realTimeAt(day: number, hour: number): number {
    return this.originMs + (day * DAY_MS + hour * HOUR_MS - this.startHour * HOUR_MS) / this.speed;
  }

  /** Real times [start, end) of the fault(s) of a feeder on a simulated day (empty for feeders without faults). */
  faultWindows(feederId: string, day: number): [number, number][] {
    const { feeder, index } = this.entry(feederId);
    const out: [number, number][] = [];
    if (feeder.faults !== null) {
      feeder.faults.atHours.forEach((h, k) => {
        const start = this.realTimeAt(day, h + EVENT_JITTER_H * signed(this.seed, 7000 + index, day, k));
        out.push([start, start + feeder.faults!.durationMs]);
      });
    }
    return out;
  }

  /** Real times of a fused lateral's fuse blowing and being replaced on a simulated day, or null. */
  fuseWindow(feederId: string, day: number): { blowsAt: number; replacedAt: number; faultFrom: number } | null {
    const { feeder, index } = this.entry(feederId);
    const lat = feeder.laterals.find((l) => l.fuse !== null);
    if (lat === undefined || lat.fuse === null) return null;
    const blowsAt = this.realTimeAt(day, lat.fuse.blowsAtHour + EVENT_JITTER_H * signed(this.seed, 8000 + index, day, 1));
    const replacedAt = this.realTimeAt(day, lat.fuse.replacedAtHour + EVENT_JITTER_H * signed(this.seed, 8000 + index, day, 2));
    return { blowsAt, replacedAt, faultFrom: blowsAt - lat.fuse.faultMs };
  }

  /** Frequency at real time ts, Hz. */
  frequency(ts: number): number {
    const t = (ts - this.originMs) / 1000;
    let f = this.nominalHz;
    for (const [amp, period, phase] of FREQ_WANDER) f += amp * Math.sin((2 * Math.PI * t) / period + phase);
    return f;
  }

  /** Phase angle gained over nominal frequency since origin, rad: 2π∫(f − fnom)dt in closed form. */
  private angleDrift(tSec: number): number {
    let th = 0;
    for (const [amp, period, phase] of FREQ_WANDER) th -= amp * period * Math.cos((2 * Math.PI * tSec) / period + phase);
    return th;
  }

  /** The true state of a feeder at real time ts. */
  truth(feederId: string, ts: number): FeederTruth {
    const { feeder, index } = this.entry(feederId);
    const s = this.scenarioMs(ts);
    const day = Math.floor(s / DAY_MS);
    const hour = this.hourOfDay(ts);
    const drift = this.angleDrift((ts - this.originMs) / 1000) / DEG;

    // Bus voltage, sequence components referred to phase a, then phases.
    const loadNow = this.totalLoadKw(hour, day, ts) / this.peakTotalKw;
    const v1 = NOMINAL_LN_V * (1.015 - 0.03 * (loadNow - 0.6));
    const v2 = polar(NOMINAL_LN_V * (SOURCE_V2_BASE + SOURCE_V2_PER_LOAD * loadNow), -35 + 25 * Math.sin((2 * Math.PI * hour) / 24));
    const v0 = polar(NOMINAL_LN_V * SOURCE_V0, 15);
    const p1: C = [v1, 0];
    const bus: C[] = [
      [v0[0] + p1[0] + v2[0], v0[1] + p1[1] + v2[1]],
      add3(v0, cmul(A2, p1), cmul(A1, v2)),
      add3(v0, cmul(A1, p1), cmul(A2, v2)),
    ];

    // Faults anywhere on the bus sag the faulted phase for every feeder.
    let ownFault: { phase: number; currentA: number } | null = null;
    for (const other of this.feeders) {
      const f = this.activeFault(other, ts, day);
      if (f === null) continue;
      if (other.id === feeder.id) ownFault = f;
      for (let p = 0; p < 3; p++) {
        const k = p === f.phase ? sagFactor(FAULT_V_BUS, f.currentA) : FAULT_V_SOUND;
        bus[p] = [bus[p]![0] * k, bus[p]![1] * k];
      }
    }

    const fuseOpen = this.fuseOpen(feeder, ts, day);
    const pf = feeder.powerFactor;
    const tanPhi = Math.tan(Math.acos(pf));
    const dayFactor = this.dayFactor(index, s);
    const v = new Float64Array(6);
    const i = new Float64Array(6);
    for (let p = 0; p < 3; p++) {
      const phase = PHASES[p]!;
      let kw = (feeder.threePhasePeakKw * loadShape(feeder.threePhaseShape, hour)) / 3;
      for (const lat of feeder.laterals) {
        if (lat.phase !== phase) continue;
        if (lat.fuse !== null && fuseOpen) continue;
        kw += lat.peakKw * loadShape(lat.shape, hour);
      }
      kw *= dayFactor * (1 + LOAD_NOISE * signed(this.seed, index * 16 + p, ts));
      const s1: C = [kw * 1000, kw * 1000 * tanPhi];
      const vb = bus[p]!;
      // Constant power: I = conj(S / V); one fixed-point step through the head impedance is ample at a few % drop.
      let cur = conjDiv(s1, vb);
      let vm: C = [vb[0] - (Z_HEAD_R * cur[0] - Z_HEAD_X * cur[1]), vb[1] - (Z_HEAD_R * cur[1] + Z_HEAD_X * cur[0])];
      cur = conjDiv(s1, vm);
      vm = [vb[0] - (Z_HEAD_R * cur[0] - Z_HEAD_X * cur[1]), vb[1] - (Z_HEAD_R * cur[1] + Z_HEAD_X * cur[0])];
      if (ownFault !== null) {
        if (p === ownFault.phase) {
          const pre = argDeg(vm);
          cur = polar(ownFault.currentA, pre - FAULT_ANGLE_DEG);
          const k = sagFactor(FAULT_V_FEEDER, ownFault.currentA) / sagFactor(FAULT_V_BUS, ownFault.currentA);
          vm = [vm[0] * k, vm[1] * k];
        }
      }
      const vn = 1 + VOLTAGE_NOISE * signed(this.seed, 100 + index * 16 + p, ts);
      const rot = polar(1, drift);
      const vr = cmul([vm[0] * vn, vm[1] * vn], rot);
      const ir = cmul(cur, rot);
      v[2 * p] = vr[0];
      v[2 * p + 1] = vr[1];
      i[2 * p] = ir[0];
      i[2 * p + 1] = ir[1];
    }
    return { feeder: feeder.id, ts, hourOfDay: hour, freq: this.frequency(ts), v, i, fuseOpen, faultActive: ownFault !== null };
  }

  /** The frame a feeder reports at real time ts (ts should be a multiple of the feeder's period). */
  frame(feederId: string, ts: number): SimulatedFrame {
    const { feeder } = this.entry(feederId);
    const t = this.truth(feederId, ts);
    const iso = new Date(ts).toISOString();
    switch (feeder.kind) {
      case 'phasor':
        return {
          feeder: feeder.id,
          kind: 'phasor',
          ts,
          payload: { ts: iso, freq: roundTo(t.freq, 4), v: phasorWire(t.v), i: phasorWire(t.i) },
        };
      case 'rms': {
        const ll = (p: number, q: number): number => roundTo(Math.hypot(t.v[2 * p]! - t.v[2 * q]!, t.v[2 * p + 1]! - t.v[2 * q + 1]!), 2);
        return {
          feeder: feeder.id,
          kind: 'rms',
          ts,
          payload: {
            ts,
            freq: roundTo(t.freq, 3),
            vll: { ab: ll(0, 1), bc: ll(1, 2), ca: ll(2, 0) },
            i: { a: roundTo(Math.hypot(t.i[0]!, t.i[1]!), 2), b: roundTo(Math.hypot(t.i[2]!, t.i[3]!), 2), c: roundTo(Math.hypot(t.i[4]!, t.i[5]!), 2) },
          },
        };
      }
      case 'samples':
        return { feeder: feeder.id, kind: 'samples', ts, payload: this.samplesPayload(feeder, t, iso) };
    }
  }

  /** Every frame due in (fromExclusive, toInclusive], oldest first; timestamps are multiples of each feeder's period. Optionally of one feeder only. */
  framesBetween(fromExclusive: number, toInclusive: number, feederId?: string): SimulatedFrame[] {
    const out: SimulatedFrame[] = [];
    for (const f of feederId === undefined ? this.feeders : [this.entry(feederId).feeder]) {
      for (let k = Math.floor(fromExclusive / f.periodMs) + 1; k * f.periodMs <= toInclusive; k++) out.push(this.frame(f.id, k * f.periodMs));
    }
    out.sort((a, b) => a.ts - b.ts);
    return out;
  }

  private samplesPayload(feeder: SimFeeder, t: FeederTruth, iso: string): Record<string, unknown> {
    const rate = feeder.sampleRate!;
    const n = Math.round((rate * feeder.periodMs) / 1000);
    const t0 = (t.ts - this.originMs) / 1000;
    const index = this.entry(feeder.id).index;
    // Within one 100 ms block the frequency is taken as constant (it changes by < 0.001 Hz per second here, so the phase
    // error is below 1e-4 rad); the phasor angles in `t` already include the drift at the block start.
    const base = 2 * Math.PI * this.nominalHz * t0;
    const step = (2 * Math.PI * t.freq) / rate;
    const harmonics = feeder.harmonics;
    const channel = (buf: Float64Array, p: number, voltage: boolean, ch: number): number[] => {
      const m = Math.hypot(buf[2 * p]!, buf[2 * p + 1]!) * SQRT2;
      const theta0 = base + Math.atan2(buf[2 * p + 1]!, buf[2 * p]!);
      const scale = voltage ? 10 : 100;
      const noise = noiseStream(this.seed, 200 + index * 16 + ch, t.ts);
      const out = new Array<number>(n);
      for (let k = 0; k < n; k++) {
        const theta = theta0 + k * step;
        let x = Math.cos(theta);
        for (let h = 0; h < harmonics.length; h++) {
          const row = harmonics[h]!;
          x += (voltage ? row[1] : row[2]) * Math.cos(row[0] * theta);
        }
        x = m * x * (1 + SAMPLE_NOISE * noise());
        out[k] = Math.round(x * scale) / scale;
      }
      return out;
    };
    return {
      ts: iso,
      rate,
      v: { a: channel(t.v, 0, true, 0), b: channel(t.v, 1, true, 1), c: channel(t.v, 2, true, 2) },
      i: { a: channel(t.i, 0, false, 3), b: channel(t.i, 1, false, 4), c: channel(t.i, 2, false, 5) },
    };
  }

  private entry(feederId: string): { feeder: SimFeeder; index: number } {
    const e = this.byId.get(feederId);
    if (e === undefined) throw new RangeError(`the simulated substation has no feeder ${feederId}`);
    return e;
  }

  /** Each feeder's load level varies from day to day, interpolated through the day so there is no step at midnight. */
  private dayFactor(index: number, scenarioMs: number): number {
    const x = scenarioMs / DAY_MS;
    const d = Math.floor(x);
    const frac = x - d;
    const a = 1 + DAY_VARIATION * signed(this.seed, 9000 + index, d);
    const b = 1 + DAY_VARIATION * signed(this.seed, 9000 + index, d + 1);
    return a + (b - a) * frac;
  }

  private totalLoadKw(hour: number, day: number, ts: number): number {
    let sum = 0;
    for (const f of this.feeders) {
      sum += f.threePhasePeakKw * loadShape(f.threePhaseShape, hour);
      const open = this.fuseOpen(f, ts, day);
      for (const l of f.laterals) if (!(l.fuse !== null && open)) sum += l.peakKw * loadShape(l.shape, hour);
    }
    return sum;
  }

  private fuseOpen(feeder: SimFeeder, ts: number, day: number): boolean {
    if (!feeder.laterals.some((l) => l.fuse !== null)) return false;
    for (const d of [day - 1, day]) {
      const w = this.fuseWindow(feeder.id, d)!;
      if (ts >= w.blowsAt && ts < w.replacedAt) return true;
    }
    return false;
  }

  /** A fault in progress on this feeder at ts: the phase (0 = a) and current. */
  private activeFault(feeder: SimFeeder, ts: number, day: number): { phase: number; currentA: number } | null {
    if (feeder.faults !== null) {
      for (const d of [day - 1, day, day + 1]) {
        for (const [from, to] of this.faultWindows(feeder.id, d)) if (ts >= from && ts < to) return { phase: 0, currentA: feeder.faults.currentA };
      }
    }
    const lat = feeder.laterals.find((l) => l.fuse !== null);
    if (lat !== undefined && lat.fuse !== null) {
      for (const d of [day - 1, day, day + 1]) {
        const w = this.fuseWindow(feeder.id, d)!;
        if (ts >= w.faultFrom && ts < w.blowsAt) return { phase: PHASES.indexOf(lat.phase), currentA: lat.fuse.faultA };
      }
    }
    return null;
  }
}

/** Uniform noise in [-1, 1) for one channel of one block: mulberry32 seeded from the block's key (cheap per sample). */
function noiseStream(seed: number, channel: number, ts: number): () => number {
  let state = Math.floor(unit(seed, channel, ts) * 4294967296);
  return () => {
    state = (state + 0x6d2b79f5) | 0;
    let z = state;
    z = Math.imul(z ^ (z >>> 15), z | 1);
    z ^= z + Math.imul(z ^ (z >>> 7), z | 61);
    return (((z ^ (z >>> 14)) >>> 0) / 4294967296) * 2 - 1;
  };
}

function add3(a: C, b: C, c: C): C {
  return [a[0] + b[0] + c[0], a[1] + b[1] + c[1]];
}

/** conj(S / V): the current drawn by complex power S at voltage V. */
function conjDiv(s: C, v: C): C {
  const d = v[0] * v[0] + v[1] * v[1];
  const re = (s[0] * v[0] + s[1] * v[1]) / d;
  const im = (s[1] * v[0] - s[0] * v[1]) / d;
  return [re, -im];
}

function phasorWire(buf: Float64Array): Record<string, [number, number]> {
  const out: Record<string, [number, number]> = {};
  for (let p = 0; p < 3; p++) {
    const c: C = [buf[2 * p]!, buf[2 * p + 1]!];
    out[PHASES[p]!] = [roundTo(mag(c), 2), roundTo(argDeg(c), 3)];
  }
  return out;
}
