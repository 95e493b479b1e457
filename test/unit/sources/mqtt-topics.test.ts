/** Input topics `<prefix>/<feeder>/<kind>` (shared/ARCHITECTURE.md, "Input frames"); topic rules from MQTT 3.1.1 §4.7 (from memory). */
import { describe, expect, test } from 'vitest';
import { inputFilters, parseInputTopic, prefixProblem } from '../../../agent/sources/mqtt/topics.js';

describe('input topics', () => {
  test('one single-level wildcard filter is subscribed per frame kind', () => {
    expect(inputFilters('seqmon/in')).toEqual(['seqmon/in/+/phasor', 'seqmon/in/+/rms', 'seqmon/in/+/samples']);
  });

  test.each([
    ['seqmon/in/F1/phasor', 'F1', 'phasor'],
    ['seqmon/in/feeder_12.b-3/rms', 'feeder_12.b-3', 'rms'],
    ['seqmon/in/F1/samples', 'F1', 'samples'],
  ])('%s names feeder %s and kind %s', (topic, feeder, kind) => {
    expect(parseInputTopic('seqmon/in', topic)).toEqual({ feeder, kind });
  });

  test('a feeder level that is not a valid id is still passed on, for the validator to reject and count', () => {
    expect(parseInputTopic('seqmon/in', 'seqmon/in/bad feeder!/phasor')).toEqual({ feeder: 'bad feeder!', kind: 'phasor' });
    // "+" matches an empty level too (MQTT 3.1.1 §4.7.1.3, from memory).
    expect(parseInputTopic('seqmon/in', 'seqmon/in//rms')).toEqual({ feeder: '', kind: 'rms' });
  });

  test.each([
    ['seqmon/in/F1/voltage'],
    ['seqmon/in/F1/phasor/extra'],
    ['seqmon/inx/F1/phasor'],
    ['other/in/F1/phasor'],
    ['seqmon/in/phasor'],
    ['seqmon/in'],
  ])('%s is not an input topic', (topic) => {
    expect(parseInputTopic('seqmon/in', topic)).toBeNull();
  });

  test('a prefix must be a plain topic name', () => {
    expect(prefixProblem('seqmon/in')).toBeNull();
    expect(prefixProblem('site7/bay-3/in')).toBeNull();
    expect(prefixProblem('')).toMatch(/empty/);
    expect(prefixProblem('seqmon/+/in')).toMatch(/wildcards/);
    expect(prefixProblem('seqmon/#')).toMatch(/wildcards/);
    expect(prefixProblem('/seqmon')).toMatch(/start or end/);
    expect(prefixProblem('seqmon/in/')).toMatch(/start or end/);
    expect(prefixProblem('seqmon//in')).toMatch(/empty level/);
  });
});
