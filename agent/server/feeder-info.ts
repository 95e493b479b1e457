/** Builds the FeederInfo the API reports from a feeder's settings (for agent/main.ts). */
import type { DetectionSettings } from '../core/detect/settings.js';
import type { FeederInfo } from './deps.js';

export interface FeederSettingsLike {
  readonly id: string;
  readonly nominalHz: 50 | 60;
  readonly nominalVoltageLN: number | null;
  readonly detection: DetectionSettings;
}

export function feederInfoFromSettings(f: FeederSettingsLike, lastTs: number | null, sources: readonly string[]): FeederInfo {
  const d = f.detection;
  const pair = (l: { enabled: boolean; warning: number; alarm: number }) => ({ enabled: l.enabled, warning: l.warning, alarm: l.alarm });
  return {
    id: f.id,
    nominalHz: f.nominalHz,
    nominalVoltageLN: f.nominalVoltageLN,
    limits: {
      voltageUnbalance: pair(d.voltageUnbalance),
      zeroSequenceVoltage: pair(d.zeroSequenceVoltage),
      currentUnbalance: pair(d.currentUnbalance),
      staleAfterMs: d.staleData.afterMs,
    },
    lastTs,
    sources,
  };
}
