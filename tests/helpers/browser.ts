/**
 * Headless Debian Chromium driven by playwright-core, with the handbook's
 * flags and a fresh profile folder. Screenshots go to tests/e2e/screenshots/
 * (ignored by git) so a person can look at them.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { chromium, type BrowserContext, type Page } from 'playwright-core';
import { ROOT_DIR } from '../../server/config';

export const CHROMIUM = process.env.CHROMIUM_PATH ?? '/usr/bin/chromium';
export const SCREENSHOT_DIR = path.join(ROOT_DIR, 'tests', 'e2e', 'screenshots');

export interface Browser {
  context: BrowserContext;
  page: Page;
  shot(name: string): Promise<string>;
  close(): Promise<void>;
}

export async function openBrowser(baseURL: string, viewport = { width: 1440, height: 900 }): Promise<Browser> {
  const profile = fs.mkdtempSync(path.join(os.tmpdir(), 'cayline-chromium-'));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: CHROMIUM,
    headless: true,
    baseURL,
    viewport,
    args: [
      '--headless',
      '--no-sandbox',
      '--disable-gpu',
      '--disable-quic',
      '--no-first-run',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
    ],
  });
  const page = context.pages()[0] ?? (await context.newPage());
  const errors: string[] = [];
  page.on('pageerror', (e) => errors.push(String(e)));
  fs.mkdirSync(SCREENSHOT_DIR, { recursive: true });
  return {
    context,
    page,
    async shot(name) {
      const file = path.join(SCREENSHOT_DIR, `${name}.png`);
      await page.screenshot({ path: file, fullPage: false });
      return file;
    },
    async close() {
      await context.close();
      fs.rmSync(profile, { recursive: true, force: true });
      if (errors.length) throw new Error(`page errors during the test:\n${errors.join('\n')}`);
    },
  };
}
