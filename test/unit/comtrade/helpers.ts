/** Shared helpers for the COMTRADE tests: build records in memory from the fictional fixture. */
import { expect } from 'vitest';
import { isAgentError, type ErrorCode } from '../../../agent/core/errors.js';
import { parseCfg } from '../../../agent/sources/comtrade/cfg-parser.js';
import { parseDat } from '../../../agent/sources/comtrade/dat-parser.js';
import { buildRecord } from '../../../agent/sources/comtrade/record.js';
import type { ComtradeRecord } from '../../../agent/sources/comtrade/types.js';
import { makeFixture, type Fixture, type FixtureOptions } from '../../fixtures/comtrade/fictional-feeder.js';

export function recordOf(o: FixtureOptions = {}): { fixture: Fixture; record: ComtradeRecord } {
  const fixture = makeFixture(o);
  const config = parseCfg(fixture.cfg, { fileName: 'ac12.cfg' });
  const data = parseDat(config, fixture.dat, { fileName: 'ac12.dat' });
  return { fixture, record: buildRecord(config, data) };
}

/** Runs fn and returns the AgentError it throws, failing the test when it does not throw one. */
export function thrown(fn: () => unknown, code: ErrorCode): Error & { code: string; details?: Readonly<Record<string, unknown>> | undefined } {
  try {
    fn();
  } catch (e) {
    if (!isAgentError(e)) throw e;
    expect(e.code).toBe(code);
    return e;
  }
  throw new Error(`expected ${code} to be thrown`);
}

/** Replaces CFG line `lineNo` (1-based) with `text`. */
export function withCfgLine(cfg: string, lineNo: number, text: string): string {
  const lines = cfg.split('\r\n');
  lines[lineNo - 1] = text;
  return lines.join('\r\n');
}

export function cfgLines(cfg: string): string[] {
  return cfg.split('\r\n');
}
