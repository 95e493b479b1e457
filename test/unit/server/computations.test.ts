import { max, mean, quantileSeq } from 'mathjs';
import { describe, expect, it } from 'vitest';
import { balanceSummary } from '../../../agent/server/balance.js';
import { EN50160_U2_LIMIT_PERCENT, voltageUnbalanceCompliance } from '../../../agent/server/compliance.js';
import { quantileSorted } from '../../../agent/server/stats.js';
import { makeResult } from '../../helpers/server-fixture.js';

const T0 = Date.parse('2026-03-02T00:00:00.000Z');
const TEN_MIN = 600_000;

/** A deterministic spread of values (no Math.random, so a failure reproduces). */
function spread(n: number, lo: number, hi: number): number[] {
  return Array.from({ length: n }, (_, k) => lo + ((hi - lo) * ((k * 7919) % n)) / (n - 1));
}

function tenMinuteU2(values: number[], flaggedAt: Set<number> = new Set()) {
  return values.map((u2, k) =>
    makeResult('EH-F1', T0 + k * TEN_MIN, '10min', { pos: [7200, 0], neg: [(7200 * u2) / 100, -40], zero: [0, 0] }, { pos: [100, 0], neg: [0, 0], zero: [0, 0] }, flaggedAt.has(k)),
  );
}

describe('quantileSorted', () => {
  it('matches mathjs quantileSeq (linear interpolation) at the 95th percentile', () => {
    const v = spread(1008, 0.2, 3.1);
    const sorted = Float64Array.from(v).sort();
    // Reference library: mathjs quantileSeq, default (interpolating) method.
    expect(quantileSorted(sorted, 0.95)).toBeCloseTo(quantileSeq(v, 0.95) as number, 12);
  });
});

describe('voltageUnbalanceCompliance', () => {
  it('uses the 2 % EN 50160 limit (from memory: EN 50160)', () => {
    expect(EN50160_U2_LIMIT_PERCENT).toBe(2);
  });

  it('passes when at least 95 % of valid 10-min values are within 2 % (EN 50160, from memory)', () => {
    // 1008 values, 50 above 2 %: 95.04 % within.
    const values = [...spread(958, 0.5, 1.9), ...spread(50, 2.1, 2.9)];
    const c = voltageUnbalanceCompliance(tenMinuteU2(values), T0, T0 + 1008 * TEN_MIN);
    expect(c.fractionWithinLimit).toBeCloseTo(958 / 1008, 12);
    expect(c.verdict).toBe('pass');
  });

  it('fails when more than 5 % of valid values exceed 2 %', () => {
    const values = [...spread(950, 0.5, 1.9), ...spread(58, 2.1, 2.9)];
    expect(voltageUnbalanceCompliance(tenMinuteU2(values), T0, T0 + 1008 * TEN_MIN).verdict).toBe('fail');
  });

  it('excludes flagged intervals (IEC 61000-4-30 §4.7 flagging) and counts them', () => {
    const values = [...spread(900, 0.5, 1.9), ...spread(108, 4, 6)];
    // Flag exactly the high values: they come from a dip and must not count against the supply.
    const flagged = new Set(Array.from({ length: 108 }, (_, k) => 900 + k));
    const c = voltageUnbalanceCompliance(tenMinuteU2(values, flagged), T0, T0 + 1008 * TEN_MIN);
    expect(c.flagged).toBe(108);
    expect(c.valid).toBe(900);
    expect(c.verdict).toBe('pass');
  });

  it('reports the 95th percentile, maximum and mean as mathjs computes them', () => {
    const values = spread(500, 0.3, 2.6);
    const c = voltageUnbalanceCompliance(tenMinuteU2(values), T0, T0 + 500 * TEN_MIN);
    // Reference library: mathjs quantileSeq / max / mean; u2 goes through the core's Fortescue transform, hence the tolerance.
    expect(c.p95!).toBeCloseTo(quantileSeq(values, 0.95) as number, 9);
    expect(c.max!).toBeCloseTo(max(values), 9);
    expect(c.mean!).toBeCloseTo(mean(values), 9);
    expect(c.expected).toBe(500);
    expect(c.fullPeriod).toBe(false);
  });
});

describe('balanceSummary', () => {
  const currents = [
    [210, 180, 150],
    [230, 170, 160],
    [190, 200, 140],
  ];
  // Per-phase magnitudes from full phasors at 0/-120/120 degrees.
  const results = currents.map(([a, b, c], k) => {
    const r = makeResult('EH-F1', T0 + k * 3000, '3s', { pos: [7200, 0], neg: [0, 0], zero: [0, 0] }, { pos: [100, 0], neg: [0, 0], zero: [0, 0] });
    r.i!.rms = { a: a!, b: b!, c: c! };
    return r;
  });

  it('computes mean and peak current per phase (reference: mathjs mean/max)', () => {
    const s = balanceSummary(results);
    for (const [k, p] of (['a', 'b', 'c'] as const).entries()) {
      const col = currents.map((row) => row[k]!);
      expect(s.phases[p].meanA!).toBeCloseTo(mean(col), 12);
      expect(s.phases[p].peakA!).toBe(max(col));
    }
  });

  it('names the heaviest and lightest phase and their spread', () => {
    const s = balanceSummary(results);
    expect(s.heaviest).toBe('a');
    expect(s.lightest).toBe('c');
    expect(s.spreadA!).toBeCloseTo(210 - 150, 12);
  });

  it('gives the largest deviation from the average of the phase means in percent (NEMA MG-1 style definition)', () => {
    const s = balanceSummary(results);
    const avg = (210 + 183.33333333333334 + 150) / 3;
    expect(s.maxDeviationPercent!).toBeCloseTo((100 * Math.max(210 - avg, avg - 150)) / avg, 9);
  });

  it('returns nulls rather than numbers when no result carries phase currents', () => {
    const s = balanceSummary([]);
    expect(s).toMatchObject({ samples: 0, heaviest: null, lightest: null, spreadA: null, maxDeviationPercent: null });
    expect(s.caution).toMatch(/licensed practice/);
  });
});
