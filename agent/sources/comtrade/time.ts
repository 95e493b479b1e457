/**
 * COMTRADE date-time fields and the 2013 time_code.
 *
 * CFG times are `dd/mm/yyyy,hh:mm:ss.ssssss` in the 1999 and 2013 revisions and
 * `mm/dd/yy,hh:mm:ss.ssssss` in 1991 (shared/CHECKS.md §8.2: 1999 layout from
 * the published description, 1991 from memory). The 2013 revision allows nine
 * fractional digits (nanoseconds). Lenient reading: a 1991-style date in a
 * newer file (or the reverse) is accepted when the day/month order is
 * unambiguous, with a warning.
 */
import type { ComtradeRevision, ComtradeTime } from './types.js';

const DATE = /^(\d{1,2})\/(\d{1,2})\/(\d{2}|\d{4})$/;
const TIME = /^(\d{1,2}):(\d{1,2}):(\d{1,2})(?:\.(\d{1,9}))?$/;

/** Two-digit years: 70..99 are 19xx, 00..69 are 20xx (common practice for 1991 files; no source). */
function fullYear(text: string): number {
  const y = Number(text);
  if (text.length === 4) return y;
  return y >= 70 ? 1900 + y : 2000 + y;
}

export type TimeParse = { ok: true; time: ComtradeTime; warning: string | null } | { ok: false; field: 'date' | 'time'; message: string };

export function parseComtradeDateTime(dateText: string, timeText: string, revision: ComtradeRevision): TimeParse {
  const d = DATE.exec(dateText);
  if (d === null) {
    return { ok: false, field: 'date', message: `"${dateText}" is not a date of the form ${revision === 1991 ? 'mm/dd/yy' : 'dd/mm/yyyy'}` };
  }
  const t = TIME.exec(timeText);
  if (t === null) return { ok: false, field: 'time', message: `"${timeText}" is not a time of the form hh:mm:ss.ssssss` };
  const first = Number(d[1]), second = Number(d[2]);
  let day: number, month: number;
  let warning: string | null = null;
  const monthFirst = revision === 1991;
  if (monthFirst) {
    month = first;
    day = second;
    if (month > 12 && day <= 12) {
      [day, month] = [first, second];
      warning = `date "${dateText}" read as dd/mm (the 1991 order mm/dd would give month ${first})`;
    }
  } else {
    day = first;
    month = second;
    if (month > 12 && day <= 12) {
      [day, month] = [second, first];
      warning = `date "${dateText}" read as mm/dd (the ${revision} order dd/mm would give month ${second})`;
    }
  }
  const year = fullYear(d[3]!);
  const hh = Number(t[1]), mi = Number(t[2]), ss = Number(t[3]);
  const frac = t[4] ?? '';
  if (month < 1 || month > 12) return { ok: false, field: 'date', message: `"${dateText}" has month ${month}` };
  const daysInMonth = new Date(Date.UTC(year, month, 0)).getUTCDate();
  if (day < 1 || day > daysInMonth) return { ok: false, field: 'date', message: `"${dateText}" has day ${day}, month ${month} has ${daysInMonth} days` };
  // 60 s is allowed for a leap second.
  if (hh > 23 || mi > 59 || ss > 60) return { ok: false, field: 'time', message: `"${timeText}" is not a valid time of day` };
  const base = Date.UTC(year, month - 1, day, hh, mi, ss);
  const fracMs = frac === '' ? 0 : Number(`0.${frac}`) * 1000;
  return { ok: true, time: { epochMs: base + fracMs, fractionNs: frac === '' ? 0 : Number(frac.padEnd(9, '0')), fractionDigits: frac.length, text: `${dateText},${timeText}` }, warning };
}

const TIME_CODE = /^([+-]?)(\d{1,2})(?:h(\d{1,2}))?$/i;

/**
 * 2013 time_code / local_code: an offset from UTC such as `-5h30`, `+1`, `0`
 * (form from memory, shared/CHECKS.md §8.2); `x` marks "not used". Returns
 * minutes, null for `x`/empty, or undefined when the text cannot be read.
 */
export function parseUtcOffset(text: string): number | null | undefined {
  const s = text.trim();
  if (s === '' || s.toLowerCase() === 'x') return null;
  const m = TIME_CODE.exec(s);
  if (m === null) return undefined;
  const hours = Number(m[2]);
  const minutes = m[3] === undefined ? 0 : Number(m[3]);
  if (hours > 14 || minutes > 59) return undefined;
  const sign = m[1] === '-' ? -1 : 1;
  return sign * (hours * 60 + minutes);
}
