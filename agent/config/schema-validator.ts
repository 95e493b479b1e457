/**
 * Validates a raw configuration object against config/schema.json with ajv
 * (all errors, defaults filled in place) and turns every validator error into
 * a ConfigProblem: path, what was expected, what was found.
 */
import AjvModule from 'ajv/dist/2020.js';
import type { ErrorObject, ValidateFunction } from 'ajv/dist/2020.js';
import { configSchema } from './schema-file.js';
import type { ConfigProblem } from './types.js';

const Ajv2020 = AjvModule.default;

/** Keyword on a schema property that only exists to refuse an old key name. */
export const RENAMED_KEYWORD = 'x-renamedTo';
/** Annotation: a human phrase for what a `pattern` accepts. */
const EXPECTED_KEYWORD = 'x-expected';

export interface SchemaCheck {
  readonly problems: ConfigProblem[];
  /** Renamed keys found (their problems are also in `problems`). */
  readonly renamed: { readonly problem: ConfigProblem; readonly renamedTo: string }[];
}

let compiled: ValidateFunction | null = null;

function validator(): ValidateFunction {
  if (compiled !== null) return compiled;
  const ajv = new Ajv2020({ allErrors: true, useDefaults: true, verbose: true, strict: true, strictTypes: false, strictRequired: false, allowUnionTypes: true });
  ajv.addKeyword({ keyword: EXPECTED_KEYWORD, schemaType: 'string' });
  ajv.addKeyword({
    keyword: RENAMED_KEYWORD,
    schemaType: 'string',
    // The keyword sits on the old key's own schema, so it runs only when the old key is present: always an error.
    validate: function renamed(target: string): boolean {
      (renamed as unknown as { errors: Partial<ErrorObject>[] }).errors = [{ keyword: RENAMED_KEYWORD, message: `renamed to ${target}`, params: { renamedTo: target } }];
      return false;
    },
    errors: true,
  });
  compiled = ajv.compile(configSchema());
  return compiled;
}

/** Validates `raw` in place (defaults are written into it) and explains every error. */
export function checkAgainstSchema(raw: Record<string, unknown>, lineOf: (path: readonly (string | number)[]) => number | null): SchemaCheck {
  const validate = validator();
  if (validate(raw)) return { problems: [], renamed: [] };
  const errors = (validate.errors ?? []).filter(keep);
  const problems: ConfigProblem[] = [];
  const renamed: { problem: ConfigProblem; renamedTo: string }[] = [];
  const seen = new Set<string>();
  for (const e of errors) {
    const p = explain(e, errors, lineOf);
    const key = `${p.path}|${p.expected}|${p.found}`;
    if (seen.has(key)) continue;
    seen.add(key);
    problems.push(p);
    if (e.keyword === RENAMED_KEYWORD) renamed.push({ problem: p, renamedTo: String((e.params as { renamedTo: unknown }).renamedTo) });
  }
  return { problems, renamed };
}

/** Errors that only repeat another one: the if/then wrapper, and `required` inside an anyOf that is reported as a whole. */
function keep(e: ErrorObject): boolean {
  if (e.keyword === 'if') return false;
  if (e.keyword === 'required' && e.schemaPath.includes('/anyOf/')) return false;
  return true;
}

export function segmentsOf(instancePath: string): (string | number)[] {
  if (instancePath === '') return [];
  return instancePath
    .slice(1)
    .split('/')
    .map((s) => s.replace(/~1/g, '/').replace(/~0/g, '~'))
    .map((s) => (/^\d+$/.test(s) ? Number(s) : s));
}

/** feeders.list[2].detection.openPhase.pickupMs */
export function formatPath(segments: readonly (string | number)[]): string {
  if (segments.length === 0) return '(root)';
  let out = '';
  for (const s of segments) {
    if (typeof s === 'number') out += `[${s}]`;
    else if (/^[A-Za-z_$][A-Za-z0-9_$]*$/.test(s) || /^[0-9A-Za-z]+$/.test(s)) out += out === '' ? s : `.${s}`;
    else out += `[${JSON.stringify(s)}]`;
  }
  return out;
}

/** A short description of a YAML value for "found". */
export function describeValue(v: unknown): string {
  if (v === undefined) return 'nothing';
  if (v === null) return 'null';
  if (typeof v === 'string') return v.length > 60 ? `text ${JSON.stringify(v.slice(0, 57) + '...')}` : `text ${JSON.stringify(v)}`;
  if (typeof v === 'number') return Number.isInteger(v) ? `the integer ${v}` : `the number ${v}`;
  if (typeof v === 'boolean') return `${v}`;
  if (Array.isArray(v)) return `a list of ${v.length} item${v.length === 1 ? '' : 's'}`;
  if (typeof v === 'object') {
    const keys = Object.keys(v as object);
    return keys.length === 0 ? 'an empty mapping' : `a mapping with keys ${keys.slice(0, 8).join(', ')}${keys.length > 8 ? ', ...' : ''}`;
  }
  return typeof v;
}

const TYPE_WORDS: Record<string, string> = {
  object: 'a mapping',
  array: 'a list',
  string: 'text',
  integer: 'an integer',
  number: 'a number',
  boolean: 'true or false',
  null: 'null',
};

function typeWords(t: unknown): string {
  const list = Array.isArray(t) ? t : [t];
  return list.map((x) => TYPE_WORDS[String(x)] ?? String(x)).join(' or ');
}

function schemaOf(e: ErrorObject): Record<string, unknown> {
  return (e.parentSchema ?? {}) as Record<string, unknown>;
}

function explain(e: ErrorObject, all: readonly ErrorObject[], lineOf: (path: readonly (string | number)[]) => number | null): ConfigProblem {
  const at = segmentsOf(e.instancePath);
  const params = e.params as Record<string, unknown>;
  const make = (segs: (string | number)[], expected: string, found: string): ConfigProblem => ({
    path: formatPath(segs),
    expected,
    found,
    line: lineOf(segs),
  });
  switch (e.keyword) {
    case RENAMED_KEYWORD:
      return make(at, `the key ${String(params.renamedTo)} (${formatPath(at)} was renamed)`, `the old key ${formatPath(at)}`);
    case 'required': {
      const missing = String(params.missingProperty);
      return make([...at, missing], 'this key (it is required here)', 'nothing');
    }
    case 'additionalProperties': {
      const extra = String(params.additionalProperty);
      const allowed = allowedKeys(schemaOf(e));
      const guess = closest(extra, allowed);
      const expectedKeys = allowed.length === 0 ? 'no keys here' : `one of the keys ${allowed.join(', ')}`;
      return make([...at, extra], guess === null ? expectedKeys : `${expectedKeys} (did you mean ${guess}?)`, `the unknown key ${JSON.stringify(extra)}`);
    }
    case 'false schema':
      return make(at, `no ${String(at[at.length - 1])} key for this kind (phasor takes v and i; rms takes vll, vln and i)`, describeValue(e.data));
    case 'type':
      return make(at, typeWords(params.type), describeValue(e.data));
    case 'enum':
      return make(at, `one of ${(params.allowedValues as unknown[]).map((x) => JSON.stringify(x)).join(', ')}`, describeValue(e.data));
    case 'const':
      return make(at, `exactly ${JSON.stringify(params.allowedValue)}`, describeValue(e.data));
    case 'pattern': {
      const s = schemaOf(e);
      const words = typeof s[EXPECTED_KEYWORD] === 'string' ? (s[EXPECTED_KEYWORD] as string) : `text matching ${String(params.pattern)}`;
      return make(at, words, describeValue(e.data));
    }
    case 'minimum':
    case 'maximum':
    case 'exclusiveMinimum':
    case 'exclusiveMaximum': {
      const sign = { minimum: '>=', maximum: '<=', exclusiveMinimum: '>', exclusiveMaximum: '<' }[e.keyword];
      return make(at, `a value ${sign} ${String(params.limit)}`, describeValue(e.data));
    }
    case 'minLength':
      return make(at, `text of at least ${String(params.limit)} character${params.limit === 1 ? '' : 's'}`, describeValue(e.data));
    case 'maxLength':
      return make(at, `text of at most ${String(params.limit)} characters`, describeValue(e.data));
    case 'minItems':
      return make(at, `a list of at least ${String(params.limit)} items`, describeValue(e.data));
    case 'anyOf': {
      const branches = (e.schema as Record<string, unknown>[]).map((b) => (Array.isArray(b.required) ? (b.required as string[]).join(' and ') : '?'));
      return make(at, `at least one of the keys ${branches.join(', ')}`, describeValue(e.data));
    }
    default: {
      const sibling = all.find((x) => x !== e && x.instancePath === e.instancePath);
      return make(at, e.message ?? `a value allowed by the schema (${e.keyword})`, sibling === undefined ? describeValue(e.data) : describeValue(sibling.data));
    }
  }
}

function allowedKeys(schema: Record<string, unknown>): string[] {
  const props = (schema.properties ?? {}) as Record<string, Record<string, unknown>>;
  return Object.keys(props).filter((k) => typeof props[k] !== 'object' || props[k]![RENAMED_KEYWORD] === undefined);
}

/** The allowed key nearest to a misspelt one (edit distance <= 2, or a case-insensitive match), or null. */
export function closest(word: string, candidates: readonly string[]): string | null {
  let best: string | null = null;
  let bestD = Number.POSITIVE_INFINITY;
  for (const c of candidates) {
    if (c.toLowerCase() === word.toLowerCase()) return c;
    const d = editDistance(word.toLowerCase(), c.toLowerCase());
    if (d < bestD) {
      bestD = d;
      best = c;
    }
  }
  return bestD <= 2 ? best : null;
}

function editDistance(a: string, b: string): number {
  const prev = new Array<number>(b.length + 1);
  for (let j = 0; j <= b.length; j++) prev[j] = j;
  for (let i = 1; i <= a.length; i++) {
    let diag = prev[0]!;
    prev[0] = i;
    for (let j = 1; j <= b.length; j++) {
      const tmp = prev[j]!;
      prev[j] = Math.min(prev[j]! + 1, prev[j - 1]! + 1, diag + (a[i - 1] === b[j - 1] ? 0 : 1));
      diag = tmp;
    }
  }
  return prev[b.length]!;
}
