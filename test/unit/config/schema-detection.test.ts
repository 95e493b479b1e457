import { readFileSync } from 'node:fs';
import { describe, expect, test } from 'vitest';
import { parseConfigText } from '../../../agent/config/load-config.js';
import { DEFAULT_DETECTION } from '../../../agent/core/detect/settings.js';

type JsonSchema = { $ref?: string; properties?: Record<string, JsonSchema> };
const schema = JSON.parse(readFileSync(new URL('../../../config/schema.json', import.meta.url), 'utf8')) as JsonSchema & { $defs: Record<string, JsonSchema> };

function deref(s: JsonSchema): JsonSchema {
  return s.$ref === undefined ? s : deref(schema.$defs[s.$ref.replace('#/$defs/', '')]!);
}

describe('detection settings in the schema mirror DetectionSettings', () => {
  const detection = deref(schema.$defs.detection!);

  test('the schema has exactly the groups of DEFAULT_DETECTION', () => {
    expect(Object.keys(detection.properties!).sort()).toEqual(Object.keys(DEFAULT_DETECTION).sort());
  });

  test.each(Object.keys(DEFAULT_DETECTION))('group %s has exactly the keys of its default', (group) => {
    const props = deref(detection.properties![group]!).properties!;
    expect(Object.keys(props).sort()).toEqual(Object.keys(DEFAULT_DETECTION[group as keyof typeof DEFAULT_DETECTION]).sort());
  });

  test('DEFAULT_DETECTION itself, written out as a configuration, is valid and loads unchanged', () => {
    const c = parseConfigText(`feeders:\n  defaults:\n    detection: ${JSON.stringify(DEFAULT_DETECTION)}\n`, 'defaults.yaml', {}, '/');
    expect(c.feeders.defaults.detection).toEqual(DEFAULT_DETECTION);
  });
});
