/**
 * The simulator as a FrameSource: frames go straight to the pipeline's sink
 * without a broker (for `seqmon analyze`-style runs, tests and benchmarks).
 * When the sink asks for a pause, frames are skipped until it drains.
 */
import type { FrameSink, FrameSource, Scheduler, SourceState, SourceStatus } from '../../core/ports.js';
import type { SubstationSimulator } from './generator.js';
import { SimulatorLoop } from './simulator-loop.js';

export class SimulatorFrameSource implements FrameSource {
  readonly name: string;
  private loop: SimulatorLoop | null = null;
  private state: SourceState = 'idle';
  private since: number;

  constructor(
    private readonly simulator: SubstationSimulator,
    private readonly scheduler: Scheduler,
    name = 'simulator',
  ) {
    this.name = name;
    this.since = scheduler.now();
  }

  start(sink: FrameSink): Promise<void> {
    if (this.loop !== null || this.state === 'closed') return Promise.resolve();
    const loop = new SimulatorLoop({
      simulator: this.simulator,
      scheduler: this.scheduler,
      publish: (f) => sink.push({ feeder: f.feeder, kind: f.kind, payload: f.payload, origin: `simulator:${f.feeder}/${f.kind}` }),
    });
    sink.onDrain(() => loop.resume());
    this.loop = loop;
    loop.start();
    this.setState('connected');
    return Promise.resolve();
  }

  status(): SourceStatus {
    return { name: this.name, state: this.state, since: this.since, lastError: null };
  }

  /** Frames generated and frames skipped (paused sink or stalled timer). */
  counts(): { published: number; skipped: number } {
    const s = this.loop?.stats();
    return { published: s?.published ?? 0, skipped: s?.skipped ?? 0 };
  }

  close(): Promise<void> {
    this.loop?.destroy();
    if (this.state !== 'closed') this.setState('closed');
    return Promise.resolve();
  }

  destroy(): void {
    void this.close();
  }

  private setState(s: SourceState): void {
    this.state = s;
    this.since = this.scheduler.now();
  }
}
