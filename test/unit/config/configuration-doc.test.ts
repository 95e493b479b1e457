import { readFileSync } from 'node:fs';
import { describe, expect, test } from 'vitest';
import { DEFAULT_DETECTION } from '../../../agent/core/detect/settings.js';
import { ENV_OVERRIDES } from '../../../agent/config/env-overrides.js';

type S = { $ref?: string; properties?: Record<string, S> };
const schema = JSON.parse(readFileSync(new URL('../../../config/schema.json', import.meta.url), 'utf8')) as S & { $defs: Record<string, S> };
const doc = readFileSync(new URL('../../../docs/configuration.md', import.meta.url), 'utf8');
const deref = (s: S): S => (s.$ref === undefined ? s : { ...deref(schema.$defs[s.$ref.replace('#/$defs/', '')]!), ...s, $ref: undefined });

function keys(props: Record<string, S>, prefix: string, out: string[]): string[] {
  for (const [k, v] of Object.entries(props)) {
    const path = prefix === '' ? k : `${prefix}.${k}`;
    out.push(path);
    const d = deref(v);
    if (d.properties !== undefined && k !== 'detection') keys(d.properties, path, out);
  }
  return out;
}

describe('docs/configuration.md', () => {
  test('documents every key of the schema', () => {
    const missing = keys(schema.properties!, '', []).filter((k) => !doc.includes(`\`${k}\``));
    expect(missing).toEqual([]);
  });

  test('documents every detection setting', () => {
    const missing: string[] = [];
    for (const [group, values] of Object.entries(DEFAULT_DETECTION)) {
      for (const key of Object.keys(values as object)) if (!doc.includes(`${group}.${key}`) && !doc.includes(`${group}.*`)) missing.push(`${group}.${key}`);
    }
    expect(missing).toEqual([]);
  });

  test('documents every environment override', () => {
    expect(ENV_OVERRIDES.filter((v) => !doc.includes(`\`${v}\``))).toEqual([]);
  });
});
