/** COMTRADE errors name the file, the 1-based line (or byte offset / sample) and the field, so the user can find the fault. */
import { AgentError } from '../../core/errors.js';

export interface ComtradeLocation {
  readonly file: string;
  /** 1-based line of a text file, or null. */
  readonly line?: number | null;
  /** Field name from the standard (e.g. "rev_year", "An.a"), or null. */
  readonly field?: string | null;
}

function where(loc: ComtradeLocation): string {
  let s = loc.file;
  if (loc.line !== undefined && loc.line !== null) s += `:${loc.line}`;
  if (loc.field !== undefined && loc.field !== null) s += ` field ${loc.field}`;
  return s;
}

export function invalid(loc: ComtradeLocation, message: string): AgentError {
  return new AgentError('SRC_COMTRADE_INVALID', `${where(loc)}: ${message}`, {
    details: { file: loc.file, line: loc.line ?? null, field: loc.field ?? null },
  });
}

export function unsupported(loc: ComtradeLocation, message: string): AgentError {
  return new AgentError('SRC_COMTRADE_UNSUPPORTED', `${where(loc)}: ${message}`, {
    details: { file: loc.file, line: loc.line ?? null, field: loc.field ?? null },
  });
}
