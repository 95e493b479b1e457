import { describe, expect, it } from 'vitest';
import { DEFAULT_DETECTION } from '../../../agent/core/detect/settings.js';
import { feederInfoFromSettings } from '../../../agent/server/feeder-info.js';

describe('feederInfoFromSettings', () => {
  it('reports the warning and alarm limits and the stale-data time of the feeder settings', () => {
    const detection = { ...DEFAULT_DETECTION, currentUnbalance: { ...DEFAULT_DETECTION.currentUnbalance, warning: 12, alarm: 20 } };
    const info = feederInfoFromSettings({ id: 'EH-F1', nominalHz: 50, nominalVoltageLN: 230, detection }, 1_772_460_187_250, ['mqtt']);
    expect(info).toEqual({
      id: 'EH-F1',
      nominalHz: 50,
      nominalVoltageLN: 230,
      limits: {
        voltageUnbalance: { enabled: true, warning: DEFAULT_DETECTION.voltageUnbalance.warning, alarm: DEFAULT_DETECTION.voltageUnbalance.alarm },
        zeroSequenceVoltage: { enabled: true, warning: DEFAULT_DETECTION.zeroSequenceVoltage.warning, alarm: DEFAULT_DETECTION.zeroSequenceVoltage.alarm },
        currentUnbalance: { enabled: true, warning: 12, alarm: 20 },
        staleAfterMs: DEFAULT_DETECTION.staleData.afterMs,
      },
      lastTs: 1_772_460_187_250,
      sources: ['mqtt'],
    });
  });
});
