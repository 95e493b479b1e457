/**
 * Faults end to end: phasor frames every 20 ms through the pipeline, fault
 * currents and voltages from the textbook sequence-network model
 * (test/unit/detect/sequence-network.ts, computed with mathjs; Glover,
 * Sarma & Overbye ch. 9). Fault pickup 2000 A (settings.ts placeholder, above
 * this feeder's 300 A load), disturbance dropout FAULT_DROPOUT_MS (50 ms,
 * common practice), open-phase pickup 1 s (settings.ts).
 */
import { complex } from 'mathjs';
import { describe, expect, it } from 'vitest';
import { FAULT_DROPOUT_MS } from '../../agent/core/detect/fault-recorder.js';
import { DEFAULT_DETECTION } from '../../agent/core/detect/settings.js';
import { FAULT_TYPES } from '../../agent/core/detect/types.js';
import type { PolarSet } from '../unit/detect/results.js';
import { balanced } from '../unit/detect/results.js';
import type { Load, SourceNetwork } from '../unit/detect/sequence-network.js';
import { faultPhaseCurrents, faultPhaseVoltages } from '../unit/detect/sequence-network.js';
import { FeederStream, T0, VLN } from './feeder-stream.js';

const FRAME_MS = 20;
const OP = DEFAULT_DETECTION.openPhase;
// Fictional substation bus of a 12.47 kV feeder: X/R 8, Z0 = 2.25 × Z1 (typical distribution values, common practice).
const NET: SourceNetwork = { name: 'fictional substation bus', vln: VLN, z1: complex(0.15, 1.2), z2: complex(0.15, 1.2), z0: complex(0.45, 2.7) };
const LOAD_SPEC: Load = { amps: 300, pfAngleDeg: 25.8, unbalance: 0.03 };
const LOAD = balanced(300, -25.8);
const BUS_V = balanced(VLN);
const NO_CURRENT: PolarSet = { a: [0, 0], b: [0, 0], c: [0, 0] };

/** Time of the first frame at or after `t0 + ms` when frames run every FRAME_MS from t0. */
const firstFrameAfter = (t0: number, ms: number): number => t0 + Math.ceil(ms / FRAME_MS) * FRAME_MS;

describe('faults through the pipeline', () => {
  it('records a phase-a-to-ground fault cleared by the breaker and reclosed: one AG event, no open-phase alarm', () => {
    const s = new FeederStream();
    const fault = { v: faultPhaseVoltages('AG', NET, 0), i: faultPhaseCurrents('AG', NET, 0, LOAD_SPEC) };
    let t = s.run(T0, T0 + 500, FRAME_MS, () => ({ v: BUS_V, i: LOAD }));
    const start = t;
    t = s.run(t, t + 100, FRAME_MS, () => fault);
    const trip = t;
    t = s.run(t, t + 500, FRAME_MS, () => ({ v: BUS_V, i: NO_CURRENT })); // breaker open, bus VT still energised
    s.run(t, t + 6000, FRAME_MS, () => ({ v: BUS_V, i: LOAD }));
    expect(s.events.map((e) => [e.type, e.ts - T0, e.durationMs, e.peakPhase])).toEqual([['AG', start - T0, trip - start, 'a']]);
    expect(s.events[0]!.peakCurrent).toBeGreaterThan(DEFAULT_DETECTION.fault.pickupA);
    expect(s.events[0]!.message).toMatch(/switching procedures/);
    expect(s.alarms).toEqual([]);
  });

  it('reports a fuse that blew on a phase-c fault: the CG event, then open-phase c within 2 s of the fuse clearing', () => {
    const s = new FeederStream();
    const fault = { v: faultPhaseVoltages('CG', NET, 0.5), i: faultPhaseCurrents('CG', NET, 0.5, LOAD_SPEC) };
    const fuseOpen: PolarSet = { ...LOAD, c: [0, 0] }; // grounded-wye load keeps phases a and b (published worked example "Examples" Ex. 2 (scribd 906678531) signature)
    let t = s.run(T0, T0 + 500, FRAME_MS, () => ({ v: BUS_V, i: LOAD }));
    const start = t;
    t = s.run(t, t + 60, FRAME_MS, () => fault);
    const blown = t;
    s.run(t, t + 3000, FRAME_MS, () => ({ v: BUS_V, i: fuseOpen }));
    expect(s.events.map((e) => [e.type, e.ts - T0, e.durationMs])).toEqual([['CG', start - T0, blown - start]]);
    // Open-phase is blocked until the disturbance has closed (FAULT_DROPOUT_MS after the current fell), then picks up.
    const raisedAt = firstFrameAfter(blown, FAULT_DROPOUT_MS) + OP.pickupMs;
    expect(s.alarmLog()).toEqual([['open-phase', 'raised', 'alarm', 'c', raisedAt - T0]]);
    expect(raisedAt - blown).toBeLessThanOrEqual(2000);
  });

  for (const type of FAULT_TYPES) {
    it(`classifies a bolted ${type} fault of 80 ms as ${type}`, () => {
      const s = new FeederStream();
      const fault = { v: faultPhaseVoltages(type, NET, 0), i: faultPhaseCurrents(type, NET, 0, LOAD_SPEC) };
      let t = s.run(T0, T0 + 200, FRAME_MS, () => ({ v: BUS_V, i: LOAD }));
      t = s.run(t, t + 80, FRAME_MS, () => fault);
      s.run(t, t + 500, FRAME_MS, () => ({ v: BUS_V, i: LOAD }));
      expect(s.events.map((e) => [e.type, e.durationMs])).toEqual([[type, 80]]);
    });
  }
});
