/**
 * Debian's Chromium driven by playwright-core, headless without GPU, with a fresh profile per launch.
 */
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { chromium, type BrowserContext, type Page } from 'playwright-core';

export const CHROMIUM = '/usr/bin/chromium';
export const hasChromium = existsSync(CHROMIUM);

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
  page: Page;
  /** Every console error and page error seen, for the test to assert none happened. */
  errors: string[];
  downloadsDir: string;
  close(): Promise<void>;
}

export async function launch(): Promise<Browser> {
  const profile = mkdtempSync(join(tmpdir(), 'loopwise-chromium-'));
  const downloadsDir = mkdtempSync(join(tmpdir(), 'loopwise-downloads-'));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: CHROMIUM,
    headless: true,
    args: CHROMIUM_ARGS,
    acceptDownloads: true,
    downloadsPath: downloadsDir,
    viewport: { width: 1400, height: 1000 },
  });
  const page = context.pages()[0] ?? (await context.newPage());
  const errors: string[] = [];
  page.on('console', (m) => {
    if (m.type() === 'error') errors.push(m.text());
  });
  page.on('pageerror', (e) => errors.push(e.message));
  page.on('response', (r) => {
    if (r.status() >= 400) errors.push(`HTTP ${r.status()} ${new URL(r.url()).pathname}`);
  });
  return {
    context,
    page,
    errors,
    downloadsDir,
    close: async () => {
      await context.close();
      rmSync(profile, { recursive: true, force: true });
      rmSync(downloadsDir, { recursive: true, force: true });
    },
  };
}
