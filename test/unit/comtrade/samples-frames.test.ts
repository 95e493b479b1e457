/** Record -> SamplesFrame blocks (agent/core/frames.ts type) and their wire form checked by the shared frame validator. */
import { describe, expect, it } from 'vitest';
import { validateFrame } from '../../../agent/core/frames.js';
import { mapPhaseChannels } from '../../../agent/sources/comtrade/channel-map.js';
import { recordToSamplesFrames, samplesFrameToWire } from '../../../agent/sources/comtrade/samples-frames.js';
import { START_MS } from '../../fixtures/comtrade/fictional-feeder.js';
import { recordOf } from './helpers.js';

describe('samples frames from a record', () => {
  it('gives one block per fixed-rate run, in primary volts and amperes', () => {
    const { record, fixture } = recordOf({ format: 'BINARY' });
    const frames = recordToSamplesFrames(record, mapPhaseChannels(record.config), { feeder: 'AC-12' });
    expect(frames.length).toBe(1);
    const f = frames[0]!;
    expect([f.ts, f.rate, f.length]).toEqual([START_MS, 1920, 640]);
    // Within 1 count of full scale (a ≈ peak/25000): 0.01 % of the peak.
    expect(Math.abs(f.v![1][10]! - fixture.sample('vb', fixture.times[10]!))).toBeLessThan(7200 * Math.SQRT2 * 1e-4);
    expect(Math.abs(f.i![0][10]! - fixture.sample('ia', fixture.times[10]!))).toBeLessThan(3000 * Math.SQRT2 * 1e-4);
  });

  it('cuts blocks at the maximum length', () => {
    const { record } = recordOf();
    const frames = recordToSamplesFrames(record, mapPhaseChannels(record.config), { feeder: 'AC-12', maxBlockSamples: 256 });
    expect(frames.map((f) => f.length)).toEqual([256, 256, 128]);
    expect(frames[1]!.ts).toBeCloseTo(START_MS + (256 / 1920) * 1000, 6);
  });

  it('ends a block at a missing sample and resumes after it, inventing no value', () => {
    const { record } = recordOf({ missing: [100, 101] });
    const frames = recordToSamplesFrames(record, mapPhaseChannels(record.config), { feeder: 'AC-12' });
    expect(frames.map((f) => f.length)).toEqual([100, 538]);
    expect(frames[1]!.ts).toBeCloseTo(START_MS + (102 / 1920) * 1000, 6);
  });

  it('starts a new block at each change of sampling rate', () => {
    const { record } = recordOf({ rates: [[3840, 128], [1920, 64]] });
    const frames = recordToSamplesFrames(record, mapPhaseChannels(record.config), { feeder: 'AC-12' });
    expect(frames.map((f) => [f.rate, f.length])).toEqual([[3840, 128], [1920, 64]]);
  });

  it('produces wire objects the frame validator accepts', () => {
    const { record } = recordOf();
    const [frame] = recordToSamplesFrames(record, mapPhaseChannels(record.config), { feeder: 'AC-12', maxBlockSamples: 64 });
    const r = validateFrame(samplesFrameToWire(frame!));
    expect(r.ok).toBe(true);
  });
});
