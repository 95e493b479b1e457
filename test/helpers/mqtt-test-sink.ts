/** A FrameSink for source tests: records frames, and can be told to ask for a pause. */
import type { FrameSink, RawFrame } from '../../agent/core/ports.js';

export class FrameCollector implements FrameSink {
  readonly frames: RawFrame[] = [];
  /** When set, push() returns false (pause) once this many frames have arrived. */
  pauseAfter: number | null = null;
  private readonly drainListeners: (() => void)[] = [];

  push(frame: RawFrame): boolean {
    this.frames.push(frame);
    return this.pauseAfter === null || this.frames.length < this.pauseAfter;
  }

  onDrain(listener: () => void): void {
    this.drainListeners.push(listener);
  }

  /** Lift the pause and tell the source to continue. */
  drain(): void {
    this.pauseAfter = null;
    for (const l of this.drainListeners) l();
  }

  texts(): string[] {
    return this.frames.map((f) => (typeof f.payload === 'string' ? f.payload : f.payload instanceof Uint8Array ? Buffer.from(f.payload).toString('utf8') : JSON.stringify(f.payload)));
  }
}
