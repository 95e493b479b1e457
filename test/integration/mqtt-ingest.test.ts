/**
 * Live ingest end to end: publisher -> real mosquitto -> MqttSource -> the
 * real Pipeline. Bad frames are rejected whole with their named FRAME_* code
 * (agent/core/errors.ts, docs/errors.md), counted per feeder and reason, and
 * the valid frames around them are all processed (shared/ARCHITECTURE.md,
 * "Input frames").
 */
import mqtt, { type MqttClient } from 'mqtt';
import { afterEach, beforeEach, describe, expect, test } from 'vitest';
import { DEFAULT_DETECTION } from '../../agent/core/detect/settings.js';
import { DEFAULT_FRAME_LIMITS, type FrameLimits } from '../../agent/core/frames.js';
import { UNKNOWN_FEEDER_LABEL } from '../../agent/core/pipeline.js';
import { MqttSource } from '../../agent/sources/mqtt/mqtt-source.js';
import { waitFor } from '../helpers/free-port.js';
import { Mosquitto, mosquittoAvailable } from '../helpers/mosquitto.js';
import { PipelineSink } from '../helpers/mqtt-pipeline.js';
import { Teardown } from '../helpers/teardown.js';

// Small limits so that "too large" and "too many samples" stay quick to send.
const LIMITS: FrameLimits = { ...DEFAULT_FRAME_LIMITS, maxPayloadBytes: 256 * 1024, maxSamplesPerChannel: 4096 };
const T0 = 1772460187000; // 2026-03-02T14:03:07Z
const RATE = 7680;

function phasor(ts: number | string, extra: Record<string, unknown> = {}): string {
  return JSON.stringify({ ts, v: { a: [7212.4, 0], b: [7190.1, -120.4], c: [7168.8, 119.7] }, i: { a: [212, -24.8], b: [205.3, -146.1], c: [198.6, 95] }, ...extra });
}
function rms(ts: number): string {
  return JSON.stringify({ ts, vll: { ab: 12470.2, bc: 12391.0, ca: 12440.7 }, i: { a: 212.0, b: 205.3, c: 198.6 } });
}
/** A balanced 60 Hz set, 7200 V RMS line-to-neutral, n samples per phase. */
function wave(n: number, shift: number): number[] {
  return Array.from({ length: n }, (_, j) => Math.round(7200 * Math.SQRT2 * Math.sin((2 * Math.PI * 60 * j) / RATE - (shift * 2 * Math.PI) / 3) * 10) / 10);
}
function samples(ts: number, n: number, nb = n): string {
  return JSON.stringify({ ts, rate: RATE, v: { a: wave(n, 0), b: wave(nb, 1), c: wave(n, 2) } });
}

describe.skipIf(!mosquittoAvailable())('MQTT ingest into the Pipeline', () => {
  const td = new Teardown();
  let broker: Mosquitto;
  let pub: MqttClient;
  let sink: PipelineSink;
  let src: MqttSource;

  beforeEach(async () => {
    broker = await Mosquitto.start();
    td.add(() => broker.dispose());
    sink = new PipelineSink({ discoverFeeders: true, defaults: { nominalHz: 60, nominalVoltageLN: 7200, detection: DEFAULT_DETECTION }, feeders: [], limits: LIMITS });
    src = new MqttSource({ url: broker.url, reconnect: { minMs: 50, maxMs: 400 }, maxPayloadBytes: LIMITS.maxPayloadBytes });
    td.add(() => src.destroy());
    await src.start(sink);
    await waitFor(() => src.status().state === 'connected', 5_000);
    pub = await mqtt.connectAsync(broker.url, { reconnectPeriod: 100, clientId: `test-pub-${Math.random().toString(16).slice(2, 10)}` });
    td.add(() => pub.endAsync(true));
  });
  afterEach(() => td.run());

  test('each malformed frame gets its named rejection and every valid frame around them is processed', async () => {
    const longFeeder = 'F'.repeat(65);
    // [topic, payload, expected code or null for a valid frame]
    const script: [string, string, string | null][] = [
      ['seqmon/in/F1/phasor', phasor(T0), null],
      ['seqmon/in/F1/phasor', '{"ts": 1772460187020, "v": {"a": [7212.4, 0]', 'FRAME_NOT_JSON'],
      ['seqmon/in/F1/phasor', 'not json at all', 'FRAME_NOT_JSON'],
      ['seqmon/in/F1/phasor', '[1, 2, 3]', 'FRAME_NOT_OBJECT'],
      ['seqmon/in/F1/phasor', phasor(T0 + 20, { v: { a: ['7212.4', 0], b: [7190.1, -120.4], c: [7168.8, 119.7] } }), 'FRAME_BAD_VALUE'],
      ['seqmon/in/F1/phasor', phasor(T0 + 20, { v: { a: [7212.4, 0], b: [7190.1, -120.4] } }), 'FRAME_MISSING_FIELD'],
      ['seqmon/in/F1/phasor', phasor(T0 + 20, { v: { a: ['NaN', 0], b: [7190.1, -120.4], c: [7168.8, 119.7] } }), 'FRAME_BAD_VALUE'],
      ['seqmon/in/F1/phasor', phasor(T0 + 20, { v: { a: [7212.4, 'Infinity'], b: [7190.1, -120.4], c: [7168.8, 119.7] } }), 'FRAME_BAD_VALUE'],
      ['seqmon/in/F1/phasor', phasor(T0 + 20), null],
      ['seqmon/in/F1/phasor', phasor(T0 + 10), 'FRAME_TIME_REVERSED'],
      ['seqmon/in/F1/phasor', phasor(T0 + 20), 'FRAME_TIME_REVERSED'],
      ['seqmon/in/F1/phasor', phasor(Math.floor((T0 + 40) / 1000)), 'FRAME_BAD_TIMESTAMP'],
      ['seqmon/in/F1/phasor', phasor('yesterday'), 'FRAME_BAD_TIMESTAMP'],
      ['seqmon/in/F1/phasor', phasor(T0 + 40, { kind: 'rms' }), 'FRAME_UNKNOWN_KIND'],
      ['seqmon/in/F1/phasor', phasor(T0 + 40, { feeder: 'F2' }), 'FRAME_BAD_FEEDER'],
      ['seqmon/in/bad feeder!/phasor', phasor(T0 + 40), 'FRAME_BAD_FEEDER'],
      [`seqmon/in/${longFeeder}/phasor`, phasor(T0 + 40), 'FRAME_BAD_FEEDER'],
      ['seqmon/in/F2/rms', rms(T0), null],
      ['seqmon/in/F2/rms', JSON.stringify({ ts: T0 + 100, vll: { ab: -1, bc: 12391.0, ca: 12440.7 } }), 'FRAME_BAD_VALUE'],
      ['seqmon/in/F2/rms', JSON.stringify({ ts: T0 + 100 }), 'FRAME_MISSING_FIELD'],
      ['seqmon/in/F3/samples', samples(T0, 1920), null],
      ['seqmon/in/F3/samples', samples(T0 + 250, LIMITS.maxSamplesPerChannel + 1), 'FRAME_BAD_LENGTH'],
      ['seqmon/in/F3/samples', samples(T0 + 250, 1920, 1919), 'FRAME_BAD_LENGTH'],
      ['seqmon/in/F3/samples', JSON.stringify({ ts: T0 + 250, rate: 100, v: { a: [1], b: [1], c: [1] } }), 'FRAME_BAD_RATE'],
      ['seqmon/in/F3/samples', `{"ts":${T0 + 250},"pad":"${'x'.repeat(LIMITS.maxPayloadBytes)}"}`, 'FRAME_TOO_LARGE'],
      ['seqmon/in/F3/samples', samples(T0 + 250, 1920), null],
      ['seqmon/in/F2/rms', rms(T0 + 100), null],
      ['seqmon/in/F1/phasor', phasor(T0 + 40), null],
    ];
    for (const [topic, payload] of script) await pub.publishAsync(topic, payload, { qos: 1 });
    await waitFor(() => sink.frames === script.length, 10_000);

    expect(sink.out.rejections.map((r) => r.code)).toEqual(script.flatMap(([, , code]) => (code === null ? [] : [code])));
    expect(sink.out.rejections.map((r) => r.origin)).toEqual(script.flatMap(([topic, , code]) => (code === null ? [] : [topic])));
    const stats = sink.pipeline.stats();
    expect(stats.accepted).toEqual({ F1: 3, F2: 2, F3: 2 });
    expect(stats.rejected.F1).toEqual({ FRAME_NOT_JSON: 2, FRAME_NOT_OBJECT: 1, FRAME_BAD_VALUE: 3, FRAME_MISSING_FIELD: 1, FRAME_TIME_REVERSED: 2, FRAME_BAD_TIMESTAMP: 2, FRAME_UNKNOWN_KIND: 1, FRAME_BAD_FEEDER: 1 });
    expect(stats.rejected[UNKNOWN_FEEDER_LABEL]).toEqual({ FRAME_BAD_FEEDER: 2 });
    expect(stats.rejected.F3).toEqual({ FRAME_BAD_LENGTH: 2, FRAME_BAD_RATE: 1, FRAME_TOO_LARGE: 1 });
    // One result per phasor/rms frame; samples give one per complete basic window (12 cycles at 60 Hz = 1536 samples).
    const perFeeder = (f: string): number => sink.out.results.filter((r) => r.feeder === f).length;
    expect([perFeeder('F1'), perFeeder('F2')]).toEqual([3, 2]);
    expect(perFeeder('F3')).toBeGreaterThanOrEqual(2);
    expect(src.counters().oversized).toBe(1);
  });

  test('across a broker restart mid-stream every frame is processed exactly once', async () => {
    const send = async (from: number, to: number): Promise<void> => {
      for (let n = from; n < to; n++) {
        await pub.publishAsync('seqmon/in/F1/phasor', phasor(T0 + 20 * n), { qos: 1 });
        await pub.publishAsync('seqmon/in/F2/rms', rms(T0 + 20 * n), { qos: 1 });
      }
    };
    await send(0, 50);
    await waitFor(() => sink.frames === 100, 5_000);
    await broker.restart();
    await waitFor(() => src.status().state === 'connected' && pub.connected, 10_000);
    await send(50, 100);
    await waitFor(() => sink.frames === 200, 5_000);
    await new Promise((r) => setTimeout(r, 100));
    expect(sink.frames).toBe(200);
    expect(sink.out.rejections).toEqual([]);
    expect(sink.pipeline.stats().accepted).toEqual({ F1: 100, F2: 100 });
    const f1 = sink.out.results.filter((r) => r.feeder === 'F1').map((r) => r.ts);
    expect(f1).toEqual(Array.from({ length: 100 }, (_, n) => T0 + 20 * n));
  });
});
