/**
 * Headless Chromium for browser tests: Debian's /usr/bin/chromium driven by
 * playwright-core (never a downloaded browser), a fresh profile folder per
 * launch, flags from shared/SERVICES.md. close() removes the profile.
 */
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { chromium, type BrowserContext } from 'playwright-core';

export const CHROMIUM_PATH = '/usr/bin/chromium';

export const CHROMIUM_ARGS = [
  '--headless',
  '--no-sandbox',
  '--disable-gpu',
  '--disable-quic',
  '--no-first-run',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
];

export interface Browser {
  context: BrowserContext;
  close(): Promise<void>;
}

export async function launchChromium(options: { width?: number; height?: number; acceptDownloads?: boolean } = {}): Promise<Browser> {
  if (!existsSync(CHROMIUM_PATH)) {
    throw new Error(`${CHROMIUM_PATH} is missing: install Debian's chromium (apt-get install -y chromium); the tests never download a browser`);
  }
  const profile = mkdtempSync(join(tmpdir(), 'seqmon-chromium-'));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: CHROMIUM_PATH,
    headless: true,
    args: CHROMIUM_ARGS,
    viewport: { width: options.width ?? 1366, height: options.height ?? 900 },
    acceptDownloads: options.acceptDownloads ?? true,
  });
  let closed = false;
  return {
    context,
    async close() {
      if (closed) return;
      closed = true;
      await context.close().catch(() => undefined);
      rmSync(profile, { recursive: true, force: true });
    },
  };
}
