/** Choice of the three phase voltages and currents (ph field, name, override). Phase names a/b/c: shared/ARCHITECTURE.md conventions; L1/L2/L3 and R/S/T: common practice. */
import { describe, expect, it } from 'vitest';
import { fromName, mapPhaseChannels, phaseFromField } from '../../../agent/sources/comtrade/channel-map.js';
import { parseCfg } from '../../../agent/sources/comtrade/cfg-parser.js';
import { makeFixture } from '../../fixtures/comtrade/fictional-feeder.js';
import { thrown, withCfgLine } from './helpers.js';

const cfgOf = (text: string) => parseCfg(text, { fileName: 'ac12.cfg' });

describe('phase channel mapping', () => {
  it('maps by the ph field', () => {
    const m = mapPhaseChannels(cfgOf(makeFixture().cfg));
    expect([m.v, m.i]).toEqual([[0, 1, 2], [3, 4, 5]]);
  });

  it('maps by channel name when the ph fields are empty', () => {
    const m = mapPhaseChannels(cfgOf(makeFixture({ blankPhaseFields: true }).cfg));
    expect([m.v, m.i]).toEqual([[0, 1, 2], [3, 4, 5]]);
  });

  it('reads phase fields a, A, L1, R, AN and AG as phase a', () => {
    expect(['a', 'A', 'L1', 'R', 'AN', 'ag'].map(phaseFromField)).toEqual(['a', 'a', 'a', 'a', 'a', 'a']);
  });

  it('reads names like VA, V_A, Va-N, UL2, I C and Bus VB', () => {
    expect(['VA', 'V_A', 'Va-N', 'UL2', 'I C', 'Bus VB'].map((n) => fromName(n))).toEqual([
      { quantity: 'voltage', phase: 'a' },
      { quantity: 'voltage', phase: 'a' },
      { quantity: 'voltage', phase: 'a' },
      { quantity: 'voltage', phase: 'b' },
      { quantity: 'current', phase: 'c' },
      { quantity: 'voltage', phase: 'b' },
    ]);
  });

  it('never takes line-to-line, residual or neutral channels for a phase', () => {
    expect(['VAB', 'V_BC', '3V0', 'IN', 'I0', 'VCA'].map((n) => fromName(n))).toEqual([null, null, null, null, null, null]);
    expect(['AB', 'N', ''].map(phaseFromField)).toEqual([null, null, null]);
  });

  it('follows an override by channel id or An number', () => {
    const m = mapPhaseChannels(cfgOf(makeFixture().cfg), { v: ['vc', 'VB', 1], i: [6, 5, 4] });
    expect([m.v, m.i]).toEqual([[2, 1, 0], [5, 4, 3]]);
  });

  it('reports a quantity with no channel for some phase in notes and leaves it null', () => {
    const m = mapPhaseChannels(cfgOf(withCfgLine(makeFixture().cfg, 5, '3,VX,,AC-12,V,0.01,0,0,-99998,99998,7200,120,S')));
    expect(m.v).toBeNull();
    expect(m.notes.join()).toMatch(/no phase c voltage channel/);
  });

  it('rejects two candidates for one phase, naming both', () => {
    const text = withCfgLine(makeFixture().cfg, 5, '3,VA2,A,AC-12,V,0.01,0,0,-99998,99998,7200,120,S');
    const e = thrown(() => mapPhaseChannels(cfgOf(text)), 'SRC_COMTRADE_UNSUPPORTED');
    expect(e.message).toMatch(/more than one phase a voltage channel \(1:VA, 3:VA2\)/);
  });

  it('rejects an override naming a channel that does not exist', () => {
    const e = thrown(() => mapPhaseChannels(cfgOf(makeFixture().cfg), { v: ['VA', 'VB', 'VZ'] }), 'SRC_COMTRADE_UNSUPPORTED');
    expect(e.message).toMatch(/no analog channel named "VZ"/);
  });

  it('rejects an override that puts a current channel in the voltage set', () => {
    const e = thrown(() => mapPhaseChannels(cfgOf(makeFixture().cfg), { v: ['VA', 'VB', 'IC'] }), 'SRC_COMTRADE_UNSUPPORTED');
    expect(e.message).toMatch(/chosen as a voltage but its unit "A" is a current/);
  });

  it('rejects a record with neither three voltages nor three currents', () => {
    let text = makeFixture({ blankPhaseFields: true }).cfg;
    for (const [line, id] of [[3, 'X1'], [6, 'X2']] as const) {
      const parts = text.split('\r\n')[line - 1]!.split(',');
      parts[1] = id;
      text = withCfgLine(text, line, parts.join(','));
    }
    const e = thrown(() => mapPhaseChannels(cfgOf(text)), 'SRC_COMTRADE_UNSUPPORTED');
    expect(e.message).toMatch(/neither three phase voltages nor three phase currents/);
  });
});
