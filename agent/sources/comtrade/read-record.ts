/**
 * Reads a COMTRADE record from disk: a .cfg with its .dat beside it (same base
 * name, extension matched case-insensitively, as records often come from
 * DOS-era systems in upper case), or a single 2013 .cff file. Optional .hdr
 * and .inf text is attached when present.
 */
import { readdir, readFile } from 'node:fs/promises';
import { basename, dirname, extname, join } from 'node:path';
import { splitCff } from './cff.js';
import { parseCfg } from './cfg-parser.js';
import { parseDat } from './dat-parser.js';
import { invalid } from './errors.js';
import { buildRecord, type RecordOptions } from './record.js';
import type { ComtradeRecord } from './types.js';

export type ReadOptions = Omit<RecordOptions, 'header' | 'info'>;

async function load(path: string): Promise<Buffer> {
  try {
    return await readFile(path);
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code ?? 'error';
    throw invalid({ file: path, line: null, field: null }, `cannot be read (${code}: ${(e as Error).message})`);
  }
}

export async function readComtradeRecord(path: string, options: ReadOptions = {}): Promise<ComtradeRecord> {
  const ext = extname(path).toLowerCase();
  if (ext === '.cff') return readCff(path, options);
  const base = ext === '.cfg' || ext === '.dat' ? path.slice(0, -ext.length) : path;
  const dir = dirname(base);
  const stem = basename(base);
  const cfgPath = ext === '.cfg' ? path : await sibling(dir, stem, '.cfg', path);
  const cfgText = (await load(cfgPath)).toString('latin1');
  const config = parseCfg(cfgText, { fileName: cfgPath });
  const datPath = ext === '.dat' ? path : await sibling(dir, stem, '.dat', path);
  const data = parseDat(config, await load(datPath), { fileName: datPath });
  const hdr = await optionalSibling(dir, stem, '.hdr');
  const inf = await optionalSibling(dir, stem, '.inf');
  return buildRecord(config, data, { ...options, header: hdr, info: inf });
}

async function readCff(path: string, options: ReadOptions): Promise<ComtradeRecord> {
  const sections = splitCff(await load(path), path);
  const config = parseCfg(sections.cfg, { fileName: `${path} (CFG section)` });
  if (sections.datType !== config.format) {
    throw invalid({ file: path, line: null, field: 'ft' }, `the CFG says ft = ${config.format} but the DAT section is marked ${sections.datType}`);
  }
  const data = parseDat(config, sections.dat, { fileName: `${path} (DAT section)` });
  return buildRecord(config, data, { ...options, header: sections.hdr, info: sections.inf });
}

async function findSibling(dir: string, stem: string, ext: string): Promise<string | null> {
  let names: string[];
  try {
    names = await readdir(dir === '' ? '.' : dir);
  } catch {
    return null;
  }
  const want = `${stem}${ext}`.toLowerCase();
  const exact = names.find((n) => n === `${stem}${ext}`);
  const hit = exact ?? names.find((n) => n.toLowerCase() === want);
  return hit === undefined ? null : join(dir, hit);
}

async function sibling(dir: string, stem: string, ext: string, given: string): Promise<string> {
  const hit = await findSibling(dir, stem, ext);
  if (hit === null) throw invalid({ file: given, line: null, field: null }, `no ${ext} file named ${stem}${ext} beside it; a record needs both the .cfg and the .dat`);
  return hit;
}

async function optionalSibling(dir: string, stem: string, ext: string): Promise<string | null> {
  const hit = await findSibling(dir, stem, ext);
  return hit === null ? null : (await load(hit)).toString('latin1');
}
