import { describe, expect, test } from 'vitest';
import { createMetrics } from '../../../agent/runtime/metrics.js';
import type { FrameCounts } from '../../../agent/runtime/metrics.js';

/** The value of one sample line of the Prometheus text format, or null. */
function sample(text: string, name: string, labels: Record<string, string> = {}): number | null {
  const want = Object.entries(labels).map(([k, v]) => `${k}="${v}"`);
  for (const line of text.split('\n')) {
    if (!line.startsWith(name)) continue;
    const m = /^([a-z_]+)(\{([^}]*)\})? (\S+)$/.exec(line);
    if (m === null || m[1] !== name) continue;
    const have = (m[3] ?? '').split(',').filter(Boolean);
    if (want.every((w) => have.includes(w)) && have.length === want.length) return Number(m[4]);
  }
  return null;
}

describe('metrics', () => {
  test('frame counts are read from the pipeline at scrape time, adding only what is new each scrape', async () => {
    const m = createMetrics({ processMetrics: false });
    let counts: FrameCounts = { accepted: { F1: 10 }, rejected: { F1: { FRAME_BAD_VALUE: 2 } } };
    m.bindFrameCounts(() => counts);
    let text = await m.metrics();
    expect(sample(text, 'seqmon_frames_accepted_total', { feeder: 'F1' })).toBe(10);
    expect(sample(text, 'seqmon_frames_rejected_total', { feeder: 'F1', reason: 'FRAME_BAD_VALUE' })).toBe(2);
    counts = { accepted: { F1: 25, F2: 1 }, rejected: { F1: { FRAME_BAD_VALUE: 2, FRAME_NOT_JSON: 1 } } };
    text = await m.metrics();
    expect(sample(text, 'seqmon_frames_accepted_total', { feeder: 'F1' })).toBe(25);
    expect(sample(text, 'seqmon_frames_accepted_total', { feeder: 'F2' })).toBe(1);
    expect(sample(text, 'seqmon_frames_rejected_total', { feeder: 'F1', reason: 'FRAME_NOT_JSON' })).toBe(1);
    expect(sample(text, 'seqmon_frames_rejected_total', { feeder: 'F1', reason: 'FRAME_BAD_VALUE' })).toBe(2);
  });

  test('each source reports 1 for its current state and 0 for the others', async () => {
    const m = createMetrics({ processMetrics: false });
    m.bindSources(() => [{ name: 'mqtt', state: 'reconnecting', since: 0, lastError: 'ECONNREFUSED' }]);
    m.sourceState('opcua', 'connected');
    const text = await m.metrics();
    expect(sample(text, 'seqmon_source_state', { source: 'mqtt', state: 'reconnecting' })).toBe(1);
    expect(sample(text, 'seqmon_source_state', { source: 'mqtt', state: 'connected' })).toBe(0);
    expect(sample(text, 'seqmon_source_state', { source: 'opcua', state: 'connected' })).toBe(1);
  });

  test('store queue fill is queued / capacity, and 0 for a store without a queue', async () => {
    const m = createMetrics({ processMetrics: false });
    m.storeQueue(0, 0);
    expect(sample(await m.metrics(), 'seqmon_store_queue_fill_ratio')).toBe(0);
    m.bindStore(() => ({ kind: 'influx', ok: false, detail: 'unreachable', queued: 2500, queueCapacity: 10000 }));
    const text = await m.metrics();
    expect(sample(text, 'seqmon_store_queue_points')).toBe(2500);
    expect(sample(text, 'seqmon_store_queue_fill_ratio')).toBe(0.25);
  });

  test('published results, raised alarms and latency observations are exported', async () => {
    const m = createMetrics({ processMetrics: false });
    m.resultsPublished('sequence', 3);
    m.resultsPublished('alarm');
    m.alarmRaised('F1', 'open-phase', 'alarm');
    m.observeLatency(0.0007);
    m.observeLatency(0.03);
    const text = await m.metrics();
    expect(sample(text, 'seqmon_results_published_total', { kind: 'sequence' })).toBe(3);
    expect(sample(text, 'seqmon_results_published_total', { kind: 'alarm' })).toBe(1);
    expect(sample(text, 'seqmon_alarms_raised_total', { feeder: 'F1', condition: 'open-phase', level: 'alarm' })).toBe(1);
    expect(sample(text, 'seqmon_pipeline_latency_seconds_count')).toBe(2);
    expect(sample(text, 'seqmon_pipeline_latency_seconds_bucket', { le: '0.001' })).toBe(1);
    expect(sample(text, 'seqmon_pipeline_latency_seconds_bucket', { le: '0.05' })).toBe(2);
  });

  test('two registries do not share metrics (one per service instance, tests included)', async () => {
    const a = createMetrics({ processMetrics: false });
    const b = createMetrics({ processMetrics: true });
    a.resultsPublished('event');
    expect(sample(await b.metrics(), 'seqmon_results_published_total', { kind: 'event' })).toBeNull();
    expect(await b.metrics()).toMatch(/^seqmon_process_cpu_seconds_total/m);
  });
});
