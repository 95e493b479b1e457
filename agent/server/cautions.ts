/**
 * Safety wording shown wherever the data could lead someone to operate on the
 * network (open phases, switching, moving load between phases).
 */
import type { AlarmCondition } from '../core/detect/types.js';

export const SWITCHING_CAUTION =
  'Open phases, switching and moving load between phases can injure people and damage equipment: any action follows the utility\'s switching procedures, local codes and licensed practice.';

export const BALANCE_CAUTION =
  'Planning figures only. Moving load between phases is switching work: it follows the utility\'s switching procedures, local codes and licensed practice, after checking protection settings and downstream single-phase equipment.';

export const CSV_CAUTION =
  'Caution: moving load between phases follows the utility\'s switching procedures, local codes and licensed practice; these readings are for planning only.';

/** The caution that goes with an alarm condition, or null when none applies. */
export function cautionFor(condition: AlarmCondition): string | null {
  switch (condition) {
    case 'open-phase':
    case 'current-unbalance':
      return SWITCHING_CAUTION;
    default:
      return null;
  }
}
