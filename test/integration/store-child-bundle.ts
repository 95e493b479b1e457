/**
 * Bundles a TypeScript child-process entry into one .mjs under
 * test-artifacts/ (inside the repo, so node_modules resolves), for tests that
 * kill a writer process with SIGKILL.
 */
import { mkdirSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { build } from 'esbuild';

const repo = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..');

export async function bundleChild(entry: string, name: string): Promise<string> {
  const outDir = join(repo, 'test-artifacts', 'children');
  mkdirSync(outDir, { recursive: true });
  const outfile = join(outDir, `${name}-${process.pid}.mjs`);
  await build({
    entryPoints: [entry],
    bundle: true,
    platform: 'node',
    format: 'esm',
    target: 'node20',
    external: ['better-sqlite3', 'influx'],
    outfile,
    logLevel: 'silent',
  });
  return outfile;
}

/** Collects a child's stdout as lines. */
export function lineReader(stream: NodeJS.ReadableStream, onLine: (line: string) => void): void {
  let buf = '';
  stream.setEncoding('utf8');
  stream.on('data', (chunk: string) => {
    buf += chunk;
    let nl: number;
    while ((nl = buf.indexOf('\n')) >= 0) {
      onLine(buf.slice(0, nl));
      buf = buf.slice(nl + 1);
    }
  });
}
