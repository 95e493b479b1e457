/**
 * Chooses the three phase voltages and the three phase currents of a record.
 *
 * In order: an explicit override (channel ids or 1-based An numbers), else the
 * ph field (a/b/c, A/B/C, L1/L2/L3, R/S/T, optionally followed by N or G), else
 * the channel name (VA, V_A, VAN, UL1, IA, IL1 ...). Voltage or current is
 * decided by the unit (V/kV or A/kA), or by the name's leading V/U or I when
 * the unit says neither. Line-to-line, residual and neutral channels (VAB,
 * 3V0, IN) never match a phase. Two candidates for one phase is an error that
 * names them, so a record with two voltage sets (bus and line side) is mapped
 * on purpose, not by luck.
 */
import { unsupported } from './errors.js';
import { unitInfo, type Quantity } from './units.js';
import type { AnalogChannel, ComtradeConfig } from './types.js';

export type PhaseLetter = 'a' | 'b' | 'c';
const PHASES: readonly PhaseLetter[] = ['a', 'b', 'c'];

/** A channel reference: its ch_id (exact, then case-insensitive) or its 1-based An number. */
export type ChannelRef = string | number;

export interface ChannelOverride {
  readonly v?: readonly [ChannelRef, ChannelRef, ChannelRef] | undefined;
  readonly i?: readonly [ChannelRef, ChannelRef, ChannelRef] | undefined;
}

export interface PhaseChannels {
  /** 0-based positions in config.analog for phases a, b, c. */
  readonly v: readonly [number, number, number] | null;
  readonly i: readonly [number, number, number] | null;
  /** Why a quantity is absent, for the user. */
  readonly notes: readonly string[];
}

const PHASE_NAMES: Record<string, PhaseLetter> = { a: 'a', b: 'b', c: 'c', l1: 'a', l2: 'b', l3: 'c', r: 'a', s: 'b', t: 'c' };

/** Phase from the ph field: "a", "A", "L1", "AN", "ag" ... ; null when it names no single phase. */
export function phaseFromField(ph: string): PhaseLetter | null {
  const m = /^(a|b|c|l1|l2|l3|r|s|t)(n|g)?$/i.exec(ph.trim());
  return m === null ? null : PHASES_OF(m[1]!);
}

function PHASES_OF(text: string): PhaseLetter | null {
  return PHASE_NAMES[text.toLowerCase()] ?? null;
}

/** Quantity and phase from a channel name such as "VA", "V_A", "Va-N", "UL1", "IA", "I L3", "Bus VB". */
export function fromName(id: string): { quantity: Quantity; phase: PhaseLetter } | null {
  // The last token-like run that reads V/U/I + phase (+ N/G), not followed by another phase letter (VAB).
  const m = /(?:^|[^A-Za-z0-9])([VUI])[\s_-]?(A|B|C|L1|L2|L3|R|S|T)(?:[\s_-]?(?:N|G))?(?![A-Za-z0-9])/i.exec(id);
  if (m === null) return null;
  const phase = PHASES_OF(m[2]!);
  if (phase === null) return null;
  const q = m[1]!.toUpperCase() === 'I' ? 'current' : 'voltage';
  return { quantity: q, phase };
}

function quantityOf(ch: AnalogChannel): Quantity {
  const u = unitInfo(ch.unit).quantity;
  if (u !== 'other') return u;
  return fromName(ch.id)?.quantity ?? 'other';
}

function resolveRef(cfg: ComtradeConfig, ref: ChannelRef, what: string): number {
  if (typeof ref === 'number' || /^\d+$/.test(ref)) {
    const n = Number(ref);
    const k = cfg.analog.findIndex((c) => c.index === n);
    if (k >= 0) return k;
    if (typeof ref === 'number') throw unsupported({ file: cfg.fileName, line: null, field: what }, `no analog channel number ${n} (the record has ${cfg.analog.length})`);
  }
  const s = String(ref);
  let k = cfg.analog.findIndex((c) => c.id === s);
  if (k < 0) k = cfg.analog.findIndex((c) => c.id.toLowerCase() === s.toLowerCase());
  if (k < 0) {
    throw unsupported({ file: cfg.fileName, line: null, field: what }, `no analog channel named "${s}"; channels are ${cfg.analog.map((c) => `${c.index}:${c.id}`).join(', ')}`);
  }
  return k;
}

export function mapPhaseChannels(cfg: ComtradeConfig, override: ChannelOverride = {}): PhaseChannels {
  const notes: string[] = [];
  const pick = (quantity: 'voltage' | 'current', ov: ChannelOverride['v']): [number, number, number] | null => {
    const label = quantity === 'voltage' ? 'v' : 'i';
    if (ov !== undefined) {
      const chosen = ov.map((r, k) => resolveRef(cfg, r, `${label}.${PHASES[k]}`)) as [number, number, number];
      for (const k of chosen) {
        const q = quantityOf(cfg.analog[k]!);
        if (q !== 'other' && q !== quantity) {
          throw unsupported({ file: cfg.fileName, line: cfg.analog[k]!.line, field: 'uu' }, `channel ${cfg.analog[k]!.id} was chosen as a ${quantity} but its unit "${cfg.analog[k]!.unit}" is a ${q}`);
        }
      }
      return chosen;
    }
    const byPhase: number[][] = [[], [], []];
    const byName: number[][] = [[], [], []];
    cfg.analog.forEach((ch, k) => {
      if (quantityOf(ch) !== quantity) return;
      const p = phaseFromField(ch.phase);
      if (p !== null) byPhase[PHASES.indexOf(p)]!.push(k);
      const n = fromName(ch.id);
      if (n !== null && n.quantity === quantity) byName[PHASES.indexOf(n.phase)]!.push(k);
    });
    const out: number[] = [];
    for (let p = 0; p < 3; p++) {
      const list = byPhase[p]!.length > 0 ? byPhase[p]! : byName[p]!;
      if (list.length === 0) {
        notes.push(`no phase ${PHASES[p]} ${quantity} channel found (by ph field or name); ${quantity === 'voltage' ? 'voltage' : 'current'} quantities are not computed`);
        return null;
      }
      if (list.length > 1) {
        const names = list.map((k) => `${cfg.analog[k]!.index}:${cfg.analog[k]!.id}`).join(', ');
        throw unsupported(
          { file: cfg.fileName, line: cfg.analog[list[1]!]!.line, field: 'ph' },
          `more than one phase ${PHASES[p]} ${quantity} channel (${names}); choose the three ${quantity} channels explicitly`,
        );
      }
      out.push(list[0]!);
    }
    return out as [number, number, number];
  };
  const v = pick('voltage', override.v);
  const i = pick('current', override.i);
  if (v === null && i === null) {
    throw unsupported({ file: cfg.fileName, line: null, field: 'ph' }, 'neither three phase voltages nor three phase currents could be identified; choose the channels explicitly');
  }
  return { v, i, notes };
}
