/**
 * Where config/schema.json lives. The same code runs from the source tree
 * (agent/config/*.ts under vitest) and compiled (dist/agent/config/*.js), so
 * the file is looked for two and three levels up; the container image copies
 * config/ next to dist/ for the same reason.
 */
import { existsSync, readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';

const CANDIDATES = ['../../config/schema.json', '../../../config/schema.json'];

export function schemaPath(): string {
  for (const rel of CANDIDATES) {
    const p = fileURLToPath(new URL(rel, import.meta.url));
    if (existsSync(p)) return p;
  }
  throw new Error(`config/schema.json not found next to ${fileURLToPath(import.meta.url)}; the installation is incomplete`);
}

let cached: Record<string, unknown> | null = null;

/** The configuration JSON Schema, read once. */
export function configSchema(): Record<string, unknown> {
  if (cached === null) cached = JSON.parse(readFileSync(schemaPath(), 'utf8')) as Record<string, unknown>;
  return cached;
}
