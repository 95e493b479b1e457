/** Number, time and level formatting shared by the views. */
import type { LimitPair } from './api.js';

export const PHASE_LABEL: Record<string, string> = { a: 'a · L1', b: 'b · L2', c: 'c · L3' };

export function pct(x: number | null | undefined, digits = 2): string {
  return x === null || x === undefined || !Number.isFinite(x) ? '–' : `${x.toFixed(digits)} %`;
}

export function amps(x: number | null | undefined): string {
  return x === null || x === undefined ? '–' : `${x >= 1000 ? x.toFixed(0) : x.toFixed(1)} A`;
}

export function volts(x: number | null | undefined): string {
  if (x === null || x === undefined) return '–';
  return x >= 1000 ? `${(x / 1000).toFixed(3)} kV` : `${x.toFixed(1)} V`;
}

export function deg(x: number | null | undefined): string {
  return x === null || x === undefined ? '∠ n/a' : `∠${x.toFixed(1)}°`;
}

export function clock(iso: string): string {
  const d = new Date(iso);
  return d.toLocaleString(undefined, { month: 'short', day: '2-digit', hour: '2-digit', minute: '2-digit', second: '2-digit' });
}

export function age(ms: number): string {
  if (ms < 0) ms = 0;
  if (ms < 60_000) return `${Math.round(ms / 1000)} s ago`;
  if (ms < 3_600_000) return `${Math.round(ms / 60_000)} min ago`;
  if (ms < 86_400_000) return `${(ms / 3_600_000).toFixed(1)} h ago`;
  return `${(ms / 86_400_000).toFixed(1)} d ago`;
}

export type Level = 'ok' | 'warning' | 'alarm';

export function levelOf(x: number | null | undefined, limit: LimitPair): Level {
  if (x === null || x === undefined || !limit.enabled) return 'ok';
  if (x >= limit.alarm) return 'alarm';
  if (x >= limit.warning) return 'warning';
  return 'ok';
}

export const CONDITION_LABEL: Record<string, string> = {
  'voltage-unbalance': 'Voltage unbalance (u2)',
  'zero-sequence-voltage': 'Zero-sequence voltage (u0)',
  'current-unbalance': 'Current unbalance (u2)',
  'open-phase': 'Open phase',
  'stale-data': 'Stale data',
};

export const SWITCHING_NOTE =
  "Open phases, switching and moving load between phases can injure people and damage equipment. Any action follows the utility's switching procedures, local codes and licensed practice.";

/** The API attaches a caution to open-phase and current-unbalance alarms; live messages carry the bare transition, so the same rule applies here. */
export function cautionOf(a: { condition: string; caution?: string | null }): string | null {
  if (a.caution !== undefined && a.caution !== null) return a.caution;
  return a.condition === 'open-phase' || a.condition === 'current-unbalance' ? SWITCHING_NOTE : null;
}
