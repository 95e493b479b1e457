/**
 * Invented data of a fictional demo substation ("Elm Hollow", not a real
 * place) for server and browser tests, and ServerDeps built around a memory
 * store and a LiveHub. Results are computed by the core from phase phasors
 * composed from chosen sequence components, so u2/u0 are known exactly.
 */
import { Registry } from 'prom-client';
import { polarToRectInto } from '../../agent/core/complex/complex.js';
import type { AlarmTransition, DisturbanceEvent } from '../../agent/core/detect/types.js';
import { DEFAULT_DETECTION } from '../../agent/core/detect/settings.js';
import { inverseFortescueInto } from '../../agent/core/sequence/fortescue.js';
import type { SourceStatus } from '../../agent/core/ports.js';
import type { AggregateWindow, SequenceResult, WindowName } from '../../agent/core/result.js';
import { SequenceScratch, quantityFromPhasors, voltageFromPhasors } from '../../agent/core/sequence/quantities.js';
import { LiveHub } from '../../agent/publish/live-hub.js';
import type { FeederInfo, SecuritySettings, ServerDeps, ServiceStatus } from '../../agent/server/deps.js';
import { MemoryStore } from '../../agent/stores/memory/memory-store.js';

export type Polar = readonly [number, number];

export interface SequenceSpec {
  /** Positive, negative, zero sequence as [magnitude, angleDeg]. */
  pos: Polar;
  neg: Polar;
  zero: Polar;
}

const scratch = new SequenceScratch();

/** Phase phasors a, b, c (polar) from sequence components via the inverse Fortescue transform. */
export function phasesFromSequence(s: SequenceSpec): Float64Array {
  const seq = new Float64Array(6);
  polarToRectInto(s.zero[0], s.zero[1], seq, 0);
  polarToRectInto(s.pos[0], s.pos[1], seq, 2);
  polarToRectInto(s.neg[0], s.neg[1], seq, 4);
  const abc = new Float64Array(6);
  inverseFortescueInto(seq, abc);
  return abc;
}

export function makeResult(feeder: string, ts: number, window: WindowName, v: SequenceSpec, i: SequenceSpec, flagged = false, freq = 60): SequenceResult {
  const durationMs = window === '3s' ? 3_000 : window === '10min' ? 600_000 : window === '2h' ? 7_200_000 : 0;
  return {
    ts,
    feeder,
    window,
    durationMs,
    freq,
    flagged,
    v: voltageFromPhasors(phasesFromSequence(v), scratch),
    i: quantityFromPhasors(phasesFromSequence(i), scratch),
    count: 1,
  };
}

export const VLN = 7_200;

/** Feeder profile: u2 of voltage and current as a function of time, load as a function of time. */
export interface FeederProfile {
  id: string;
  vU2: (t: number) => number;
  iU2: (t: number) => number;
  loadA: (t: number) => number;
}

const DAY = 86_400_000;
const dayPhase = (t: number) => (2 * Math.PI * (t % DAY)) / DAY;

export const DEMO_PROFILES: FeederProfile[] = [
  { id: 'EH-F1', vU2: (t) => 0.8 + 0.4 * Math.sin(dayPhase(t)), iU2: (t) => 6 + 3 * Math.sin(dayPhase(t)), loadA: (t) => 210 + 60 * Math.sin(dayPhase(t)) },
  { id: 'EH-F2', vU2: (t) => 1.6 + 0.7 * Math.sin(dayPhase(t) + 1), iU2: (t) => 18 + 6 * Math.sin(dayPhase(t) + 1), loadA: (t) => 140 + 40 * Math.sin(dayPhase(t) + 1) },
  { id: 'EH-F3', vU2: (t) => 2.4 + 0.6 * Math.sin(dayPhase(t) + 2), iU2: (t) => 27 + 4 * Math.sin(dayPhase(t) + 2), loadA: (t) => 95 + 20 * Math.sin(dayPhase(t) + 2) },
];

export function profileResult(p: FeederProfile, ts: number, window: WindowName): SequenceResult {
  const load = p.loadA(ts);
  return makeResult(
    p.id,
    ts,
    window,
    { pos: [VLN, 0], neg: [(VLN * p.vU2(ts)) / 100, -70], zero: [VLN * 0.002, 30] },
    { pos: [load, -25], neg: [(load * p.iU2(ts)) / 100, 150], zero: [load * 0.03, 10] },
  );
}

export interface SeedPlan {
  /** Span of 3-s values before `now`, ms. */
  threeSecondMs: number;
  /** Span of 10-min values before `now`, ms. */
  tenMinuteMs: number;
  /** Span of 2-h values before `now`, ms. */
  twoHourMs: number;
}

export const DEFAULT_SEED: SeedPlan = { threeSecondMs: 2 * 3_600_000, tenMinuteMs: 8 * DAY, twoHourMs: 90 * DAY };

export async function seedStore(store: MemoryStore, profiles: readonly FeederProfile[], now: number, plan: SeedPlan = DEFAULT_SEED): Promise<void> {
  const steps: [AggregateWindow, number, number][] = [
    ['3s', 3_000, plan.threeSecondMs],
    ['10min', 600_000, plan.tenMinuteMs],
    ['2h', 7_200_000, plan.twoHourMs],
  ];
  for (const p of profiles) {
    for (const [window, step, span] of steps) {
      const end = Math.floor(now / step) * step;
      const batch: SequenceResult[] = [];
      for (let ts = end - span; ts < end; ts += step) batch.push(profileResult(p, ts, window));
      await store.writeResults(batch);
    }
  }
}

export function feederInfo(id: string, lastTs: number | null): FeederInfo {
  const d = DEFAULT_DETECTION;
  return {
    id,
    nominalHz: 60,
    nominalVoltageLN: VLN,
    limits: {
      voltageUnbalance: { enabled: d.voltageUnbalance.enabled, warning: d.voltageUnbalance.warning, alarm: d.voltageUnbalance.alarm },
      zeroSequenceVoltage: { enabled: d.zeroSequenceVoltage.enabled, warning: d.zeroSequenceVoltage.warning, alarm: d.zeroSequenceVoltage.alarm },
      currentUnbalance: { enabled: d.currentUnbalance.enabled, warning: d.currentUnbalance.warning, alarm: d.currentUnbalance.alarm },
      staleAfterMs: d.staleData.afterMs,
    },
    lastTs,
    sources: ['demo-simulator'],
  };
}

export function alarm(feeder: string, ts: number, condition: AlarmTransition['condition'], state: AlarmTransition['state'], value: number, limit: number, phase: AlarmTransition['phase'] = null): AlarmTransition {
  return { ts, feeder, condition, state, level: 'alarm', value, limit, phase, message: `${condition} ${state} at ${value} (limit ${limit})` };
}

export function faultEvent(feeder: string, ts: number): DisturbanceEvent {
  return { ts, feeder, type: 'BG', durationMs: 120, peakCurrent: 3_400, peakPhase: 'b', i0OverI1: 0.42, i2OverI1: 0.38, message: 'B-to-ground disturbance cleared after 120 ms' };
}

export const OPEN_SECURITY: SecuritySettings = {
  host: '127.0.0.1',
  token: null,
  rateLimitPerMin: 0,
  bodyLimitBytes: 65_536,
  tlsConfigured: false,
  acknowledgeInsecure: false,
};

export interface TestDeps extends ServerDeps {
  readonly store: MemoryStore;
  readonly live: LiveHub;
  latestResults: Map<string, SequenceResult>;
  sources: SourceStatus[];
}

export interface TestDepsOptions {
  now: number;
  profiles?: readonly FeederProfile[];
  security?: Partial<SecuritySettings>;
  dashboardDir?: string | null;
  demo?: boolean;
  liveHeartbeatMs?: number;
  hub?: LiveHub;
}

export function makeDeps(o: TestDepsOptions): TestDeps {
  const store = new MemoryStore();
  const live = o.hub ?? new LiveHub({ bufferCapacity: 64 });
  const profiles = o.profiles ?? DEMO_PROFILES;
  const latestResults = new Map<string, SequenceResult>();
  for (const p of profiles) latestResults.set(p.id, profileResult(p, o.now - 1_000, 'frame'));
  const sources: SourceStatus[] = [{ name: 'demo-simulator', state: 'connected', since: o.now - 60_000, lastError: null }];
  const deps: TestDeps = {
    store,
    live,
    latestResults,
    sources,
    latest: (feeder) => latestResults.get(feeder) ?? null,
    feeders: () => profiles.map((p) => feederInfo(p.id, latestResults.get(p.id)?.ts ?? null)),
    status: (): ServiceStatus => ({
      demo: o.demo ?? true,
      sources: deps.sources,
      store: store.health(),
      startedAt: o.now - 120_000,
      rejected: { 'EH-F1': { FRAME_BAD_VALUE: 2 } },
    }),
    metrics: new Registry(),
    dashboardDir: o.dashboardDir ?? null,
    security: { ...OPEN_SECURITY, ...o.security },
    logger: false,
    now: () => o.now,
    liveHeartbeatMs: o.liveHeartbeatMs,
  };
  return deps;
}
