/**
 * Steps every browser test takes: starting a server and Chromium with the analyst signed in, signing in through the
 * sign-in page, and opening a case tab.
 */
import type { Page } from 'playwright-core';
import { DESKTOP, launchBrowser, type TestBrowser } from './browser';
import { DEMO_ACCOUNTS, startE2eServer, type E2eServer } from './server';

/**
 * Signs in as `account` on the sign-in page. With `returnUrl`, the app must land there; without, anywhere but the
 * sign-in page (the home page).
 */
export async function signIn(page: Page, baseUrl: string, account: { email: string; password: string }, returnUrl?: string): Promise<void> {
  await page.goto(`${baseUrl}/sign-in${returnUrl ? `?returnUrl=${encodeURIComponent(returnUrl)}` : ''}`);
  await page.getByLabel('Email').fill(account.email);
  await page.getByLabel('Password', { exact: true }).fill(account.password);
  await page.getByRole('button', { name: 'Sign in', exact: true }).click();
  if (returnUrl) await page.waitForURL((url) => url.pathname === returnUrl.split('?')[0], { timeout: 60_000 });
  else await page.waitForURL((url) => !url.pathname.startsWith('/sign-in'), { timeout: 60_000 });
}

/** Opens a case tab by its label; a dispatched click reaches tabs scrolled out of a narrow tab bar too. */
export async function openTab(page: Page, label: string): Promise<void> {
  await page.getByRole('tab', { name: label, exact: true }).dispatchEvent('click');
  await page.waitForURL((url) => url.pathname.endsWith(`/${label.toLowerCase()}`));
}

export interface AnalystSession {
  server: E2eServer;
  browser: TestBrowser;
  /** a desktop page signed in as the demo analyst, 30 s default timeout */
  page: Page;
  stop(): Promise<void>;
}

/** The set-up of most browser test files: a server on its own database, Chromium, the demo analyst signed in. */
export async function startAnalystSession(database: string): Promise<AnalystSession> {
  const server = await startE2eServer({ database });
  const browser = await launchBrowser();
  const page = await browser.newPage(DESKTOP);
  page.setDefaultTimeout(30_000);
  const analyst = DEMO_ACCOUNTS.find((a) => a.role === 'analyst') ?? DEMO_ACCOUNTS[0];
  if (!analyst) throw new Error('no demo analyst');
  await signIn(page, server.baseUrl, analyst);
  return {
    server, browser, page,
    stop: async () => {
      await browser.close();
      await server.stop();
    },
  };
}
