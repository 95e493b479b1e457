/**
 * Checks every record before any of its batch is stored, so a bad record is
 * refused with a coded error that names the field, and a batch is either
 * stored whole or not at all: nothing already accepted is lost, nothing
 * half-written.
 */
import { AgentError } from '../core/errors.js';
import { ALARM_CONDITIONS, FAULT_TYPES, type AlarmTransition, type DisturbanceEvent } from '../core/detect/types.js';
import { FEEDER_ID_PATTERN } from '../core/frames.js';
import { AGGREGATE_WINDOWS, type SequenceResult } from '../core/result.js';

const PHASES: readonly string[] = ['a', 'b', 'c'];
const STATES: readonly string[] = ['raised', 'cleared'];
const LEVELS: readonly string[] = ['warning', 'alarm'];

/** Thrown inside a check; turned into one AgentError by the caller, who knows which record it was. */
class FieldProblem {
  constructor(
    readonly field: string,
    readonly problem: string,
  ) {}
}

function describe(x: unknown): string {
  if (x === null) return 'null';
  if (x === undefined) return 'nothing';
  if (typeof x === 'number') return String(x);
  if (typeof x === 'string') return `"${x.length > 40 ? `${x.slice(0, 40)}...` : x}"`;
  return Array.isArray(x) ? 'an array' : typeof x;
}

function finite(x: unknown, field: string): void {
  if (typeof x !== 'number' || !Number.isFinite(x)) throw new FieldProblem(field, `must be a finite number, found ${describe(x)}`);
}

function finiteOrNull(x: unknown, field: string): void {
  if (x !== null && (typeof x !== 'number' || !Number.isFinite(x))) {
    throw new FieldProblem(field, `must be a finite number or null, found ${describe(x)}`);
  }
}

function oneOf(x: unknown, allowed: readonly string[], field: string): void {
  if (typeof x !== 'string' || !allowed.includes(x)) throw new FieldProblem(field, `must be one of ${allowed.join(', ')}, found ${describe(x)}`);
}

function feederId(x: unknown): void {
  if (typeof x !== 'string' || !FEEDER_ID_PATTERN.test(x)) throw new FieldProblem('feeder', `must match [A-Za-z0-9_.-]{1,64}, found ${describe(x)}`);
}

function timestamp(x: unknown): void {
  // InfluxDB 1.x keeps times up to 2262 (int64 ns = 9.22e12 ms); 0..9e12 ms (1970..2255) fits every store.
  if (typeof x !== 'number' || !Number.isFinite(x) || x < 0 || x > 9e12) {
    throw new FieldProblem('ts', `must be epoch milliseconds between 0 (1970) and 9e12 (2255), found ${describe(x)}`);
  }
}

interface PhasorNames {
  readonly key: 'zero' | 'pos' | 'neg';
  readonly name: string;
  readonly magnitude: string;
  readonly angle: string;
}

interface TripleNames {
  readonly key: 'rms' | 'thd' | 'rmsLL';
  readonly name: string;
  readonly keys: readonly string[];
  readonly names: readonly string[];
}

/** Field names of one quantity, built once, so checking a record builds no strings unless it fails. */
interface QuantityNames {
  readonly self: string;
  readonly phasors: readonly PhasorNames[];
  readonly u2: string;
  readonly u0: string;
  readonly triples: readonly TripleNames[];
  readonly lvur: string;
  readonly pvur: string;
}

function quantityNames(q: 'v' | 'i'): QuantityNames {
  const triple = (key: TripleNames['key'], keys: readonly string[]): TripleNames => ({
    key,
    name: `${q}.${key}`,
    keys,
    names: keys.map((c) => `${q}.${key}.${c}`),
  });
  const triples = [triple('rms', PHASES), triple('thd', PHASES)];
  if (q === 'v') triples.push(triple('rmsLL', ['ab', 'bc', 'ca']));
  return {
    self: q,
    phasors: (['zero', 'pos', 'neg'] as const).map((key) => ({ key, name: `${q}.${key}`, magnitude: `${q}.${key}[0]`, angle: `${q}.${key}[1]` })),
    u2: `${q}.u2`,
    u0: `${q}.u0`,
    triples,
    lvur: `${q}.lvur`,
    pvur: `${q}.pvur`,
  };
}

const V_NAMES = quantityNames('v');
const I_NAMES = quantityNames('i');

function isObject(x: unknown): x is Record<string, unknown> {
  return typeof x === 'object' && x !== null && !Array.isArray(x);
}

function quantity(x: unknown, n: QuantityNames, voltage: boolean): void {
  if (x === null) return;
  if (!isObject(x)) throw new FieldProblem(n.self, `must be an object or null, found ${describe(x)}`);
  for (let k = 0; k < n.phasors.length; k++) {
    const names = n.phasors[k];
    const p = x[names.key];
    if (p === null) continue;
    if (!Array.isArray(p) || p.length !== 2) throw new FieldProblem(names.name, `must be [magnitude, angle] or null, found ${describe(p)}`);
    finite(p[0], names.magnitude);
    finiteOrNull(p[1], names.angle);
  }
  finiteOrNull(x.u2, n.u2);
  finiteOrNull(x.u0, n.u0);
  for (let k = 0; k < n.triples.length; k++) {
    const names = n.triples[k];
    const t = x[names.key];
    if (t === null) continue;
    if (!isObject(t)) throw new FieldProblem(names.name, `must be an object or null, found ${describe(t)}`);
    for (let j = 0; j < names.keys.length; j++) finite(t[names.keys[j]], names.names[j]);
  }
  if (voltage) {
    finiteOrNull(x.lvur, n.lvur);
    finiteOrNull(x.pvur, n.pvur);
  }
}

function resultFields(r: SequenceResult): void {
  if (typeof r !== 'object' || r === null) throw new FieldProblem('(record)', `must be an object, found ${describe(r)}`);
  feederId(r.feeder);
  if (!(AGGREGATE_WINDOWS as readonly string[]).includes(r.window)) {
    throw new FieldProblem('window', `must be one of ${AGGREGATE_WINDOWS.join(', ')} (only aggregates are trended), found ${describe(r.window)}`);
  }
  timestamp(r.ts);
  finite(r.durationMs, 'durationMs');
  if (r.durationMs < 0) throw new FieldProblem('durationMs', `must not be negative, found ${r.durationMs}`);
  finiteOrNull(r.freq, 'freq');
  if (typeof r.flagged !== 'boolean') throw new FieldProblem('flagged', `must be true or false, found ${describe(r.flagged)}`);
  if (!Number.isSafeInteger(r.count) || r.count < 0) throw new FieldProblem('count', `must be a whole number >= 0, found ${describe(r.count)}`);
  quantity(r.v, V_NAMES, true);
  quantity(r.i, I_NAMES, false);
}

function alarmFields(a: AlarmTransition): void {
  if (typeof a !== 'object' || a === null) throw new FieldProblem('(record)', `must be an object, found ${describe(a)}`);
  feederId(a.feeder);
  timestamp(a.ts);
  oneOf(a.condition, ALARM_CONDITIONS, 'condition');
  oneOf(a.state, STATES, 'state');
  oneOf(a.level, LEVELS, 'level');
  finiteOrNull(a.value, 'value');
  finiteOrNull(a.limit, 'limit');
  if (a.phase !== null) oneOf(a.phase, PHASES, 'phase');
  if (typeof a.message !== 'string') throw new FieldProblem('message', `must be a string, found ${describe(a.message)}`);
}

function eventFields(e: DisturbanceEvent): void {
  if (typeof e !== 'object' || e === null) throw new FieldProblem('(record)', `must be an object, found ${describe(e)}`);
  feederId(e.feeder);
  timestamp(e.ts);
  oneOf(e.type, FAULT_TYPES, 'type');
  finite(e.durationMs, 'durationMs');
  if (e.durationMs < 0) throw new FieldProblem('durationMs', `must not be negative, found ${e.durationMs}`);
  finite(e.peakCurrent, 'peakCurrent');
  if (e.peakCurrent < 0) throw new FieldProblem('peakCurrent', `must not be negative, found ${e.peakCurrent}`);
  oneOf(e.peakPhase, PHASES, 'peakPhase');
  finiteOrNull(e.i0OverI1, 'i0OverI1');
  finiteOrNull(e.i2OverI1, 'i2OverI1');
  if (typeof e.message !== 'string') throw new FieldProblem('message', `must be a string, found ${describe(e.message)}`);
}

function refuse(what: string, p: FieldProblem): AgentError {
  return new AgentError('STORE_WRITE_FAILED', `${what}: ${p.field} ${p.problem}; nothing of this batch was stored`, {
    details: { field: p.field },
  });
}

/** Throws STORE_WRITE_FAILED naming the first bad field of the first bad result. */
export function checkResults(results: readonly SequenceResult[]): void {
  if (!Array.isArray(results)) throw new AgentError('STORE_WRITE_FAILED', 'writeResults expects an array of results');
  for (let k = 0; k < results.length; k++) {
    try {
      resultFields(results[k]);
    } catch (e) {
      if (e instanceof FieldProblem) throw refuse(`result ${k} of the batch`, e);
      throw e;
    }
  }
}

export function checkAlarm(a: AlarmTransition): void {
  try {
    alarmFields(a);
  } catch (e) {
    if (e instanceof FieldProblem) throw refuse('alarm transition', e);
    throw e;
  }
}

export function checkEvent(e: DisturbanceEvent): void {
  try {
    eventFields(e);
  } catch (err) {
    if (err instanceof FieldProblem) throw refuse('disturbance event', err);
    throw err;
  }
}
