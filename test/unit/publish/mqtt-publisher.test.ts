/**
 * Output payloads and options of the MQTT publisher. Field lists are the output
 * contract of shared/ARCHITECTURE.md ("Outputs"); numbers go through
 * roundForWire (agent/core/result.ts) like every other wire value.
 */
import { describe, expect, test } from 'vitest';
import type { AlarmTransition, DisturbanceEvent } from '../../../agent/core/detect/types.js';
import { roundForWire } from '../../../agent/core/result.js';
import { alarmToWire, eventToWire, MqttPublisher } from '../../../agent/publish/mqtt-publisher.js';

const ALARM: AlarmTransition = {
  ts: Date.UTC(2026, 2, 2, 14, 3, 7, 250),
  feeder: 'F1',
  condition: 'voltage-unbalance',
  state: 'raised',
  level: 'warning',
  value: 2.0000000000123,
  limit: 2,
  phase: null,
  message: 'voltage unbalance u2 above the warning limit (fictional test feeder)',
};

const EVENT: DisturbanceEvent = {
  ts: Date.UTC(2026, 2, 2, 14, 3, 7, 250),
  feeder: 'F1',
  type: 'ABG',
  durationMs: 66.66666666666667,
  peakCurrent: 3120.4,
  peakPhase: 'a',
  i0OverI1: null,
  i2OverI1: 0.5,
  message: 'double line-to-ground fault, phases a and b (fictional test feeder)',
};

describe('MQTT output payloads', () => {
  test('an alarm payload has exactly ts, feeder, condition, state, level, value, limit, phase, message, with an ISO time', () => {
    const wire = alarmToWire(ALARM);
    expect(Object.keys(wire)).toEqual(['ts', 'feeder', 'condition', 'state', 'level', 'value', 'limit', 'phase', 'message']);
    expect(wire.ts).toBe('2026-03-02T14:03:07.250Z');
    expect(wire.value).toBe(roundForWire(ALARM.value!));
    expect(wire.phase).toBeNull();
  });

  test('an alarm without a measured value keeps value and limit as null (never missing)', () => {
    const wire = alarmToWire({ ...ALARM, condition: 'stale-data', value: null, limit: null });
    expect(wire).toHaveProperty('value', null);
    expect(wire).toHaveProperty('limit', null);
  });

  test('an event payload has exactly ts, feeder, type, durationMs, peakCurrent, peakPhase, i0OverI1, i2OverI1, message', () => {
    const wire = eventToWire(EVENT);
    expect(Object.keys(wire)).toEqual(['ts', 'feeder', 'type', 'durationMs', 'peakCurrent', 'peakPhase', 'i0OverI1', 'i2OverI1', 'message']);
    expect(wire).toMatchObject({ ts: '2026-03-02T14:03:07.250Z', type: 'ABG', durationMs: roundForWire(EVENT.durationMs), i0OverI1: null, i2OverI1: 0.5 });
  });
});

describe('MQTT publisher options', () => {
  test.each([
    [{ outPrefix: 'seqmon/out/#', connection: { url: 'mqtt://127.0.0.1:1' } }, /outPrefix "seqmon\/out\/#" must be a plain topic name/],
    [{ outPrefix: '/seqmon/out', connection: { url: 'mqtt://127.0.0.1:1' } }, /outPrefix/],
    [{ resultQos: 2 as 1, connection: { url: 'mqtt://127.0.0.1:1' } }, /resultQos must be 0 or 1/],
    [{ maxQueued: 0, connection: { url: 'mqtt://127.0.0.1:1' } }, /maxQueued must be a positive integer/],
    [{ connection: { url: 'nowhere' } }, /connection.url "nowhere" is not a URL/],
    [{ connection: { url: 'mqtt://127.0.0.1:1', reconnect: { minMs: 10, maxMs: 5 } } }, /connection.reconnect needs 0 < minMs <= maxMs/],
    [{}, /client or connection must be given/],
  ])('bad options are refused with CFG_INVALID naming the option (%#)', (options, message) => {
    expect(() => new MqttPublisher(options)).toThrow(expect.objectContaining({ code: 'CFG_INVALID', message: expect.stringMatching(message) }));
  });
});
