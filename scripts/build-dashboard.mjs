// Bundles dashboard/ (TypeScript, uPlot) with esbuild into dist/dashboard/ as static files the agent serves at /.
// Usage: node scripts/build-dashboard.mjs [OUT_DIR]   (also importable: buildDashboard(outDir))
import { copyFileSync, mkdirSync, rmSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { build } from 'esbuild';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');

export async function buildDashboard(outDir = join(root, 'dist', 'dashboard')) {
  rmSync(outDir, { recursive: true, force: true });
  mkdirSync(join(outDir, 'vendor'), { recursive: true });
  await build({
    entryPoints: [join(root, 'dashboard', 'main.ts')],
    outfile: join(outDir, 'app.js'),
    bundle: true,
    format: 'esm',
    platform: 'browser',
    target: ['chrome110', 'firefox115', 'safari16'],
    minify: true,
    sourcemap: true,
    legalComments: 'linked',
    logLevel: 'warning',
  });
  for (const f of ['index.html', 'styles.css', 'theme-boot.js']) copyFileSync(join(root, 'dashboard', f), join(outDir, f));
  copyFileSync(join(root, 'node_modules', 'uplot', 'dist', 'uPlot.min.css'), join(outDir, 'vendor', 'uPlot.min.css'));
  return outDir;
}

if (process.argv[1] !== undefined && resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  const out = await buildDashboard(process.argv[2] === undefined ? undefined : resolve(process.argv[2]));
  console.log(`dashboard built in ${out}`);
}
