/** ComtradeSource as a FrameSource (agent/core/ports.ts): blocks in order, back-pressure honoured, idempotent close. */
import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { validateFrame } from '../../../agent/core/frames.js';
import type { FrameSink, RawFrame } from '../../../agent/core/ports.js';
import { ComtradeSource, feederIdFrom } from '../../../agent/sources/comtrade/comtrade-source.js';
import { START_MS, makeFixture } from '../../fixtures/comtrade/fictional-feeder.js';

class PausingSink implements FrameSink {
  readonly frames: RawFrame[] = [];
  private drain: (() => void) | null = null;
  constructor(private readonly acceptBeforePause: number) {}
  push(frame: RawFrame): boolean {
    this.frames.push(frame);
    return this.frames.length < this.acceptBeforePause;
  }
  onDrain(listener: () => void): void {
    this.drain = listener;
  }
  release(): void {
    this.drain?.();
  }
}

let dir = '';
let path = '';
beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'seqmon-ctsrc-'));
  const f = makeFixture({ format: 'BINARY' });
  path = join(dir, 'ac12.cfg');
  await writeFile(path, f.cfg);
  await writeFile(join(dir, 'ac12.dat'), f.dat);
});
afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

describe('ComtradeSource', () => {
  it('pushes the record as samples frames the frame validator accepts, then reports closed', async () => {
    const sink = new PausingSink(Infinity);
    const src = new ComtradeSource({ path, feeder: 'AC-12', maxBlockSamples: 256 });
    await src.start(sink);
    expect(sink.frames.map((f) => f.origin)).toEqual([1, 2, 3].map((k) => `${path}#block${k}`));
    const r = validateFrame(sink.frames[0]!.payload, { feeder: 'AC-12', kind: 'samples' });
    expect(r.ok && r.frame.ts).toBe(START_MS);
    expect(src.status().state).toBe('closed');
  });

  it('waits for onDrain after push returns false', async () => {
    const sink = new PausingSink(1);
    const src = new ComtradeSource({ path, feeder: 'AC-12', maxBlockSamples: 256 });
    const done = src.start(sink);
    await new Promise((r) => setTimeout(r, 100));
    expect(sink.frames.length).toBe(1);
    sink.release();
    await new Promise((r) => setTimeout(r, 20));
    expect(sink.frames.length).toBe(2);
    await src.close();
    await src.close();
    await done;
    expect(sink.frames.length).toBe(2);
  });

  it('fails with the reader error for a missing record', async () => {
    const src = new ComtradeSource({ path: join(dir, 'missing.cfg') });
    await expect(src.start(new PausingSink(Infinity))).rejects.toMatchObject({ code: 'SRC_COMTRADE_INVALID' });
    expect(src.status().state).toBe('failed');
  });

  it('makes a feeder id from a station name', () => {
    expect(feederIdFrom('Alder Creek (fictional)')).toBe('Alder_Creek_fictional');
    expect(feederIdFrom('***')).toBe('comtrade');
  });
});
