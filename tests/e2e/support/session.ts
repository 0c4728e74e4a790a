/**
 * Steps every browser test takes: signing in through the sign-in page, and opening a case tab.
 */
import type { Page } from 'playwright-core';

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
