/**
 * Disturbance recording: start, duration, peak and classification of one
 * fault, with the default pickup of 2000 A (settings.ts placeholder), reset at
 * 95 % of pickup (IEC 60255-151 reset ratio, from memory) and a 50 ms dropout
 * (common practice: three cycles at 60 Hz).
 */
import { complex } from 'mathjs';
import { describe, expect, it } from 'vitest';
import { FAULT_DROPOUT_MS, FaultRecorder, RESET_RATIO } from '../../../agent/core/detect/fault-recorder.js';
import { DEFAULT_DETECTION } from '../../../agent/core/detect/settings.js';
import { balanced, currents } from './results.js';
import { faultPhaseCurrents } from './sequence-network.js';

const CFG = DEFAULT_DETECTION.fault;
const LOAD = currents(balanced(300, -25.8));
const NET = { name: 'substation bus', vln: 7200, z1: complex(0.15, 1.2), z2: complex(0.15, 1.2), z0: complex(0.45, 2.7) };
const LOAD_SPEC = { amps: 300, pfAngleDeg: 25.8, unbalance: 0.03 };
const T0 = 1_772_460_000_000;

describe('FaultRecorder', () => {
  it('records start, duration (first result above pickup to first below reset), peak phase and type', () => {
    const rec = new FaultRecorder(CFG);
    const ag = currents(faultPhaseCurrents('AG', NET, 0, LOAD_SPEC));
    const agSmaller = currents(faultPhaseCurrents('AG', NET, 1, LOAD_SPEC));
    expect(rec.step(T0, LOAD)).toBeNull();
    expect(rec.step(T0 + 16, agSmaller)).toBeNull();
    expect(rec.step(T0 + 33, ag)).toBeNull();
    expect(rec.step(T0 + 50, agSmaller)).toBeNull();
    expect(rec.step(T0 + 66, LOAD)).toBeNull(); // below reset: ending
    expect(rec.phase()).toBe('ending');
    expect(rec.step(T0 + 66 + FAULT_DROPOUT_MS - 1, LOAD)).toBeNull();
    const done = rec.step(T0 + 66 + FAULT_DROPOUT_MS, LOAD);
    expect(done).not.toBeNull();
    expect(done!.startTs).toBe(T0 + 16);
    expect(done!.durationMs).toBe(50);
    expect(done!.peakPhase).toBe('a');
    expect(done!.peakCurrent).toBeCloseTo(ag.rms!.a, 6);
    expect(done!.classification.type).toBe('AG');
    expect(rec.phase()).toBe('idle');
  });

  it('keeps a fault that re-strikes within the dropout as one disturbance', () => {
    const rec = new FaultRecorder(CFG);
    const bc = currents(faultPhaseCurrents('BC', NET, 0, LOAD_SPEC));
    rec.step(T0, bc);
    rec.step(T0 + 20, LOAD);
    rec.step(T0 + 40, bc);
    rec.step(T0 + 60, LOAD);
    const done = rec.step(T0 + 60 + FAULT_DROPOUT_MS, LOAD);
    expect(done!.startTs).toBe(T0);
    expect(done!.durationMs).toBe(60);
    expect(done!.classification.type).toBe('BC');
  });

  it(`does not end the fault while the current stays between the reset level (${RESET_RATIO} × pickup) and the pickup`, () => {
    const rec = new FaultRecorder(CFG);
    rec.step(T0, currents(balanced(2500, -80)));
    rec.step(T0 + 20, currents(balanced(0.97 * CFG.pickupA, -80)));
    expect(rec.step(T0 + 200, currents(balanced(0.97 * CFG.pickupA, -80)))).toBeNull();
    expect(rec.phase()).toBe('in-fault');
  });

  it('classifies at the peak, so an evolving fault is reported as what it became (AG growing into ABG)', () => {
    const rec = new FaultRecorder(CFG);
    rec.step(T0, currents(faultPhaseCurrents('AG', NET, 2, LOAD_SPEC)));
    rec.step(T0 + 20, currents(faultPhaseCurrents('ABG', NET, 0, LOAD_SPEC)));
    rec.step(T0 + 40, LOAD);
    expect(rec.step(T0 + 100, LOAD)!.classification.type).toBe('ABG');
  });

  it('closes an ending disturbance on a tick once the dropout has run out (data stopped after the fault)', () => {
    const rec = new FaultRecorder(CFG);
    rec.step(T0, currents(balanced(3000, -80)));
    rec.step(T0 + 20, LOAD);
    expect(rec.onTime(T0 + 20 + FAULT_DROPOUT_MS - 1)).toBeNull();
    expect(rec.onTime(T0 + 20 + FAULT_DROPOUT_MS)!.classification.type).toBe('ABC');
  });

  it('holds its state on a result without currents', () => {
    const rec = new FaultRecorder(CFG);
    rec.step(T0, currents(balanced(3000, -80)));
    expect(rec.step(T0 + 20, null)).toBeNull();
    expect(rec.phase()).toBe('in-fault');
  });
});
