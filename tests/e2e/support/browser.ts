/**
 * Debian's Chromium driven by playwright-core (no downloaded browsers). Each launch gets a fresh temporary
 * profile from playwright, so no state leaks between runs. Screenshots go to test-results/screenshots/; every
 * screenshot also runs the axe accessibility check on the page (support/axe.ts), so each page a test looks at is
 * checked at the size it was shown.
 */
import { mkdirSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { chromium, type Browser, type BrowserContext, type Page } from 'playwright-core';

import { expectAccessible } from './axe';

export const CHROMIUM_PATH = process.env['QP_CHROMIUM'] ?? '/usr/bin/chromium';
export const SCREENSHOT_DIR = resolve(__dirname, '..', '..', '..', 'test-results', 'screenshots');

const CHROMIUM_ARGS = [
  '--headless',
  '--no-sandbox',
  '--disable-gpu',
  '--disable-quic',
  '--no-first-run',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
];

export const DESKTOP = { width: 1440, height: 900 } as const;
export const NARROW = { width: 390, height: 844 } as const;

export interface TestBrowser {
  /** A page in its own context (own storage), at the given viewport size. */
  newPage(viewport: { width: number; height: number }): Promise<Page>;
  close(): Promise<void>;
}

export async function launchBrowser(): Promise<TestBrowser> {
  const browser: Browser = await chromium.launch({ executablePath: CHROMIUM_PATH, args: CHROMIUM_ARGS });
  const contexts: BrowserContext[] = [];
  return {
    async newPage(viewport) {
      // bypassCSP: the app's CSP (script-src 'self') would refuse the injected axe-core script.
      const context = await browser.newContext({ viewport, deviceScaleFactor: 1, bypassCSP: true });
      contexts.push(context);
      const page = await context.newPage();
      page.setDefaultTimeout(20_000);
      return page;
    },
    async close() {
      await Promise.all(contexts.map((c) => c.close().catch(() => undefined)));
      await browser.close();
    },
  };
}

/**
 * Saves a full-page PNG named `<name>.png` in `dir` and returns its path, then fails on serious or critical axe
 * violations on the page (pass `{ axe: false }` only for a state that is not a page, e.g. mid-animation).
 */
export async function screenshot(page: Page, name: string, options: { dir?: string; axe?: boolean } = {}): Promise<string> {
  const dir = options.dir ?? SCREENSHOT_DIR;
  mkdirSync(dir, { recursive: true });
  const path = join(dir, `${name}.png`);
  // A dialog that is closing hides the page from screen readers (aria-hidden on the overlay's siblings) until its
  // animation ends; let such transient states settle first. A lasting one still reaches axe below.
  await page
    .waitForFunction(
      () =>
        !Array.from(document.querySelectorAll('[aria-hidden="true"]')).some((el) =>
          el.querySelector('a[href], button:not([disabled]), input:not([disabled]), select, textarea, [tabindex]:not([tabindex="-1"])'),
        ),
      undefined,
      { timeout: 3_000 },
    )
    .catch(() => undefined);
  await page.screenshot({ path, fullPage: true });
  if (options.axe !== false) await expectAccessible(page, `${name} (${page.viewportSize()?.width ?? '?'} px wide, ${page.url()})`);
  return path;
}
