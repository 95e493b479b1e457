/**
 * The dependency rule of the layout (shared ARCHITECTURE and STYLE): the core
 * imports nothing outside agent/core/ (fft.js only through core/dsp/), and an
 * adapter folder never imports another adapter folder; only agent/main.ts and
 * agent/cli/ compose them.
 */
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { dirname, join, relative, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const agent = join(root, 'agent');
const ADAPTERS = ['config', 'sources', 'stores', 'publish', 'server'];
const NODE_BUILTIN = /^node:/;

function files(dir: string): string[] {
  return readdirSync(dir).flatMap((name) => {
    const p = join(dir, name);
    return statSync(p).isDirectory() ? files(p) : p.endsWith('.ts') ? [p] : [];
  });
}

function imports(file: string): string[] {
  const src = readFileSync(file, 'utf8');
  return [...src.matchAll(/^\s*(?:import|export)\s[^'"]*?from\s+['"]([^'"]+)['"]/gm), ...src.matchAll(/import\(\s*['"]([^'"]+)['"]\s*\)/g)].map((m) => m[1]!);
}

function area(file: string): string {
  return relative(agent, file).split('/')[0]!;
}

describe('layering', () => {
  it('keeps agent/core free of I/O and of imports from outside the core', () => {
    const bad: string[] = [];
    for (const f of files(join(agent, 'core'))) {
      for (const spec of imports(f)) {
        if (spec.startsWith('.')) {
          const target = resolve(dirname(f), spec);
          if (!target.startsWith(join(agent, 'core'))) bad.push(`${relative(root, f)} -> ${spec}`);
        } else if (spec === 'fft.js') {
          if (!relative(agent, f).startsWith('core/dsp/')) bad.push(`${relative(root, f)} -> fft.js (only core/dsp may use it)`);
        } else if (!NODE_BUILTIN.test(spec) || !['node:buffer'].includes(spec)) {
          bad.push(`${relative(root, f)} -> ${spec}`);
        }
      }
    }
    expect(bad).toEqual([]);
  });

  it('never lets one adapter folder import another', () => {
    const bad: string[] = [];
    for (const a of ADAPTERS) {
      let list: string[] = [];
      try {
        list = files(join(agent, a));
      } catch {
        continue;
      }
      for (const f of list) {
        for (const spec of imports(f)) {
          if (!spec.startsWith('.')) continue;
          const target = area(resolve(dirname(f), spec));
          if (ADAPTERS.includes(target) && target !== a) bad.push(`${relative(root, f)} -> ${spec}`);
        }
      }
    }
    expect(bad).toEqual([]);
  });

  it('never lets the core import the composition root or the command line', () => {
    const bad = files(join(agent, 'core')).filter((f) => imports(f).some((s) => /main\.js|\/cli\//.test(s)));
    expect(bad).toEqual([]);
  });
});
