/**
 * Channel units and scaling: value = a·x + b in the CFG unit uu (IEEE
 * C37.111 analog channel fields a, b, uu), then SI prefix to base unit, then
 * secondary -> primary by primary/secondary when PS = S (CHECKS.md §8.2).
 */
import type { AnalogChannel } from './types.js';

export type Quantity = 'voltage' | 'current' | 'other';

export interface UnitInfo {
  readonly quantity: Quantity;
  /** Factor from the CFG unit to V or A (e.g. 1000 for kV). */
  readonly toBase: number;
}

const PREFIX: Record<string, number> = { '': 1, k: 1e3, K: 1e3, M: 1e6, m: 1e-3, u: 1e-6, 'µ': 1e-6 };

export function unitInfo(unit: string): UnitInfo {
  const m = /^\s*([kKMmuµ]?)([VvAa])\s*$/.exec(unit);
  if (m === null) return { quantity: 'other', toBase: 1 };
  return { quantity: m[2]!.toUpperCase() === 'V' ? 'voltage' : 'current', toBase: PREFIX[m[1]!]! };
}

/**
 * Factor and offset that turn a stored value x into base units (V or A) on the
 * requested side of the instrument transformer: y = gain·x + offset.
 * A channel without a PS field (1991 layout) is taken as already primary.
 */
export function channelScale(ch: AnalogChannel, side: 'primary' | 'secondary'): { gain: number; offset: number } {
  const base = unitInfo(ch.unit).toBase;
  let ratio = 1;
  const hasRatio = ch.primary !== null && ch.secondary !== null && ch.primary > 0 && ch.secondary > 0;
  if (side === 'primary' && ch.ps === 'S' && hasRatio) ratio = ch.primary! / ch.secondary!;
  if (side === 'secondary' && ch.ps === 'P' && hasRatio) ratio = ch.secondary! / ch.primary!;
  const k = base * ratio;
  return { gain: ch.a * k, offset: ch.b * k };
}
