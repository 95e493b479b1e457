/** A real Pipeline behind the FrameSink port, for MQTT tests: every frame is ingested at once. */
import { DEFAULT_DETECTION } from '../../agent/core/detect/settings.js';
import { Pipeline, createOutput, type PipelineOutput, type PipelineSettings } from '../../agent/core/pipeline.js';
import type { FrameSink, RawFrame } from '../../agent/core/ports.js';

export const DISCOVERING_SETTINGS: PipelineSettings = {
  discoverFeeders: true,
  defaults: { nominalHz: 60, nominalVoltageLN: 7200, detection: DEFAULT_DETECTION },
  feeders: [],
};

export class PipelineSink implements FrameSink {
  readonly pipeline: Pipeline;
  /** Everything the pipeline produced, accumulated. */
  readonly out: PipelineOutput = createOutput();
  frames = 0;

  constructor(settings: PipelineSettings = DISCOVERING_SETTINGS) {
    this.pipeline = new Pipeline(settings);
  }

  push(frame: RawFrame): boolean {
    this.frames++;
    this.pipeline.ingest(frame, this.out);
    return true;
  }

  onDrain(): void {
    // ingest is synchronous: this sink never asks for a pause.
  }
}
