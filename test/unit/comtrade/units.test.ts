/** Scaling value = a·x + b, SI prefixes and PS conversion (IEEE C37.111-1999 analog fields, shared/CHECKS.md §8.2). */
import { describe, expect, it } from 'vitest';
import { channelScale, unitInfo } from '../../../agent/sources/comtrade/units.js';
import type { AnalogChannel } from '../../../agent/sources/comtrade/types.js';
import { recordOf } from './helpers.js';
import { scaledChannel } from '../../../agent/sources/comtrade/samples-frames.js';

const ch = (o: Partial<AnalogChannel>): AnalogChannel => ({
  index: 1, id: 'X', phase: '', circuit: '', unit: 'V', a: 1, b: 0, skewUs: 0, min: null, max: null, primary: null, secondary: null, ps: null, line: 3, ...o,
});

describe('units', () => {
  it('reads V, kV, mV, A, kA as voltage/current with their SI factor', () => {
    expect(['V', 'kV', 'KV', 'mV', 'A', 'kA', 'mA'].map((u) => [unitInfo(u).quantity, unitInfo(u).toBase])).toEqual([
      ['voltage', 1], ['voltage', 1000], ['voltage', 1000], ['voltage', 0.001], ['current', 1], ['current', 1000], ['current', 0.001],
    ]);
  });

  it('treats other units (Hz, W, deg) as neither voltage nor current', () => {
    expect(['Hz', 'W', 'deg', ''].map((u) => unitInfo(u).quantity)).toEqual(['other', 'other', 'other', 'other']);
  });
});

describe('scaling a·x + b', () => {
  it('applies a and b in the channel unit, then the SI factor', () => {
    const s = channelScale(ch({ unit: 'kV', a: 0.5, b: 2 }), 'primary');
    expect(s.gain * 10 + s.offset).toBe((0.5 * 10 + 2) * 1000);
  });

  it('converts secondary values to primary by primary/secondary when PS = S', () => {
    const s = channelScale(ch({ a: 1, primary: 7200, secondary: 120, ps: 'S' }), 'primary');
    expect(s.gain).toBeCloseTo(60, 12);
  });

  it('leaves primary values alone when PS = P and converts them for the secondary side', () => {
    const c = ch({ unit: 'A', a: 2, primary: 600, secondary: 5, ps: 'P' });
    expect(channelScale(c, 'primary').gain).toBe(2);
    expect(channelScale(c, 'secondary').gain).toBeCloseTo(2 / 120, 12);
  });

  it('takes a channel without PS (1991 layout) as primary', () => {
    expect(channelScale(ch({ a: 3 }), 'primary').gain).toBe(3);
  });

  it('turns the fixture secondary voltage record into primary volts', () => {
    const { record, fixture } = recordOf();
    const va = scaledChannel(record, 0);
    const n = 7;
    expect(va[n]).toBeCloseTo(fixture.sample('va', fixture.times[n]!), -1);
  });
});
