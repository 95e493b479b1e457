/**
 * FeederDetector wiring: which result windows feed which condition, the |I1|
 * supervision of current unbalance, restore after restart, settings checks and
 * message content. Thresholds are the defaults of
 * agent/core/detect/settings.ts, each cited there.
 */
import { describe, expect, it } from 'vitest';
import { AgentError } from '../../../agent/core/errors.js';
import type { DetectionOutput } from '../../../agent/core/detect/feeder-detector.js';
import { createDetectionOutput, FeederDetector } from '../../../agent/core/detect/feeder-detector.js';
import type { DetectionSettings } from '../../../agent/core/detect/settings.js';
import { DEFAULT_DETECTION } from '../../../agent/core/detect/settings.js';
import type { AlarmTransition } from '../../../agent/core/detect/types.js';
import { aggregate3s, balanced, currentsWithUnbalance, result, voltagesWithUnbalance } from './results.js';

const VLN = 7200;
const T0 = Date.UTC(2026, 2, 2, 14, 0, 0);
const CU = DEFAULT_DETECTION.currentUnbalance;
const VU = DEFAULT_DETECTION.voltageUnbalance;

function detector(settings: DetectionSettings = DEFAULT_DETECTION): FeederDetector {
  return new FeederDetector('F1', settings, { voltageLN: VLN });
}

/** Feeds one '3s' aggregate every 3 s for `seconds`, ending intervals at T0 + 3 s, T0 + 6 s, ... */
function feed3s(d: FeederDetector, out: DetectionOutput, from: number, seconds: number, v: ReturnType<typeof voltagesWithUnbalance> | null, i: ReturnType<typeof currentsWithUnbalance> | null = null): number {
  let t = from;
  for (; t < from + seconds * 1000; t += 3000) d.onAggregate(aggregate3s(t + 3000, v, i), out);
  return t;
}

describe('FeederDetector', () => {
  it('raises current unbalance after pickupMs (300 s) when |I1| ≥ minPositiveSequenceA (10 A)', () => {
    const d = detector();
    const out = createDetectionOutput();
    feed3s(d, out, T0, 303, balanced(VLN), currentsWithUnbalance(100, 30));
    expect(out.alarms.map((a) => [a.condition, a.state, a.level, a.ts - T0])).toEqual([['current-unbalance', 'raised', 'alarm', 3000 + CU.pickupMs]]);
  });

  it('does not evaluate current unbalance while |I1| < minPositiveSequenceA, however large i2 is', () => {
    const d = detector();
    const out = createDetectionOutput();
    feed3s(d, out, T0, 900, balanced(VLN), currentsWithUnbalance(8, 60));
    expect(out.alarms).toEqual([]);
  });

  it('raises zero-sequence voltage at the alarm level (u0 above 4 %) after 60 s', () => {
    const d = detector();
    const out = createDetectionOutput();
    feed3s(d, out, T0, 63, voltagesWithUnbalance(VLN, 0, 5));
    expect(out.alarms.map((a) => [a.condition, a.state, a.level, a.value])).toEqual([['zero-sequence-voltage', 'raised', 'alarm', expect.closeTo(5, 9)]]);
  });

  it('evaluates only 3-s aggregates for unbalance and ignores 10-min and 2-h ones', () => {
    const d = detector();
    const out = createDetectionOutput();
    for (let t = T0; t < T0 + 7_200_000; t += 600_000) {
      d.onAggregate({ ...result({ ts: t, window: '10min', durationMs: 600_000, v: voltagesWithUnbalance(VLN, 5) }) }, out);
    }
    expect(out.alarms).toEqual([]);
  });

  it('ignores aggregates passed to onValue: 3-s values showing an open phase for 30 s raise nothing', () => {
    const d = detector();
    const out = createDetectionOutput();
    for (let t = T0; t < T0 + 30_000; t += 3000) d.onValue(aggregate3s(t + 3000, balanced(VLN), { a: [0, 0], b: [200, -120], c: [200, 120] }), out);
    expect(out.alarms).toEqual([]);
  });

  it('does not re-publish a restored raised alarm and clears it through the normal dropout', () => {
    const d = detector();
    const restored: AlarmTransition = { ts: T0 - 1000, feeder: 'F1', condition: 'voltage-unbalance', state: 'raised', level: 'alarm', value: 3.4, limit: 3, phase: null, message: 'before restart' };
    d.restore([restored, { ...restored, feeder: 'F2' }]);
    expect(d.active()).toEqual([restored]);
    const out = createDetectionOutput();
    let t = feed3s(d, out, T0, 120, voltagesWithUnbalance(VLN, 3.5));
    expect(out.alarms).toEqual([]);
    t = feed3s(d, out, t, 63, voltagesWithUnbalance(VLN, 1));
    expect(out.alarms.map((a) => [a.condition, a.state, a.level, a.ts - T0])).toEqual([['voltage-unbalance', 'cleared', 'alarm', 123_000 + VU.dropoutMs]]);
    expect(d.active()).toEqual([]);
  });

  it('keeps a restored open phase raised while it persists, then clears it after dropoutMs of healthy currents', () => {
    const d = detector();
    d.restore([{ ts: T0 - 1000, feeder: 'F1', condition: 'open-phase', state: 'raised', level: 'alarm', value: 1, limit: 0.4, phase: 'c', message: 'before restart' }]);
    const out = createDetectionOutput();
    for (let t = T0; t < T0 + 3000; t += 100) d.onValue(result({ ts: t, v: balanced(VLN), i: { a: [200, 0], b: [200, 180], c: [0, 0] } }), out);
    expect(out.alarms).toEqual([]);
    for (let t = T0 + 3000; t <= T0 + 3000 + DEFAULT_DETECTION.openPhase.dropoutMs; t += 100) d.onValue(result({ ts: t, v: balanced(VLN), i: balanced(200, -25.8) }), out);
    expect(out.alarms.map((a) => [a.condition, a.state, a.phase, a.ts - T0])).toEqual([['open-phase', 'cleared', 'c', 3000 + DEFAULT_DETECTION.openPhase.dropoutMs]]);
  });

  it('lists one active transition per raised condition, the latest level change', () => {
    const d = detector();
    const out = createDetectionOutput();
    let t = feed3s(d, out, T0, 63, voltagesWithUnbalance(VLN, 2.5));
    t = feed3s(d, out, t, 63, voltagesWithUnbalance(VLN, 3.5));
    expect(out.alarms.map((a) => a.level)).toEqual(['warning', 'alarm']);
    expect(d.active()).toEqual([out.alarms[1]]);
  });

  it('refuses inconsistent settings with CFG_INVALID naming the field', () => {
    const bad: DetectionSettings = { ...DEFAULT_DETECTION, voltageUnbalance: { ...VU, warning: 4, alarm: 3 } };
    let caught: unknown = null;
    try {
      detector(bad);
    } catch (e) {
      caught = e;
    }
    expect(caught).toBeInstanceOf(AgentError);
    expect((caught as AgentError).code).toBe('CFG_INVALID');
    expect((caught as AgentError).message).toContain('voltageUnbalance.alarm');
  });

  it('writes messages that state the consequence and defer to switching procedures, local codes and licensed practice', () => {
    const d = detector();
    const out = createDetectionOutput();
    feed3s(d, out, T0, 63, voltagesWithUnbalance(VLN, 3.5, 5));
    for (let t = T0; t <= T0 + 2000; t += 100) d.onValue(result({ ts: t, v: balanced(VLN), i: { a: [200, -25.8], b: [200, -145.8], c: [0, 0] } }), out);
    const byCondition = new Map(out.alarms.map((a) => [a.condition, a.message]));
    expect(byCondition.get('voltage-unbalance')).toMatch(/NEMA MG-1/);
    expect(byCondition.get('zero-sequence-voltage')).toMatch(/neutral/);
    expect(byCondition.get('open-phase')).toMatch(/backfeed/);
    for (const a of out.alarms) expect(a.message).toContain("utility's switching procedures, local codes and licensed practice");
  });
});
