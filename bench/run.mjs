#!/usr/bin/env node
// Runs every benchmark module in bench/ (each exports `async function run()`
// returning { name, figures }), prints the figures and writes them to
// bench/out/results.json. `npm run bench -- NAME...` runs only the named files.
// Figures are ratios against a baseline measured in the same run wherever the
// machine's noise would make a bare time meaningless.
import { mkdirSync, readdirSync, writeFileSync } from 'node:fs';
import { cpus, totalmem } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

const here = dirname(fileURLToPath(import.meta.url));
const only = process.argv.slice(2);
const files = readdirSync(here)
  .filter((f) => f.endsWith('.mjs') && f !== 'run.mjs' && !f.startsWith('_'))
  .filter((f) => only.length === 0 || only.some((o) => f.includes(o)))
  .sort();

const machine = { node: process.version, cpus: cpus().length, cpu: cpus()[0]?.model ?? 'unknown', memGiB: Math.round(totalmem() / 2 ** 30) };
console.log(`seqmon benchmarks on ${machine.cpus} x ${machine.cpu}, ${machine.memGiB} GiB, Node ${machine.node}`);
if (typeof globalThis.gc !== 'function') console.log('(run with --expose-gc for allocation figures)');

const results = [];
let failed = 0;
for (const f of files) {
  const mod = await import(pathToFileURL(join(here, f)).href);
  if (typeof mod.run !== 'function') continue;
  process.stdout.write(`\n== ${f}\n`);
  try {
    const r = await mod.run();
    results.push({ file: f, ...r });
    for (const [k, v] of Object.entries(r.figures ?? {})) console.log(`  ${k}: ${typeof v === 'number' ? formatNumber(v) : v}`);
  } catch (e) {
    failed++;
    console.log(`  FAILED: ${e instanceof Error ? e.stack : String(e)}`);
    results.push({ file: f, error: String(e) });
  }
}
mkdirSync(join(here, 'out'), { recursive: true });
writeFileSync(join(here, 'out', 'results.json'), JSON.stringify({ date: new Date().toISOString(), machine, results }, null, 2));
console.log(`\nwrote bench/out/results.json${failed ? ` (${failed} benchmark(s) failed)` : ''}`);
process.exitCode = failed ? 1 : 0;

function formatNumber(v) {
  if (Math.abs(v) >= 1000) return Math.round(v).toLocaleString('en-US');
  return Number(v.toPrecision(4)).toString();
}
