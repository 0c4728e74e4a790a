import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';

import { DESKTOP, NARROW, launchBrowser, screenshot, type TestBrowser } from './support/browser';
import { DEMO_ACCOUNTS, DEMO_LAB_NAME, startE2eServer, type E2eServer } from './support/server';

function account(role: string): { email: string; name: string; password: string } {
  const found = DEMO_ACCOUNTS.find((a) => a.role === role);
  if (!found) throw new Error(`no demo ${role}`);
  return found;
}

describe('signing in', () => {
  let server: E2eServer;
  let browser: TestBrowser;

  beforeAll(async () => {
    server = await startE2eServer();
    browser = await launchBrowser();
  });

  afterAll(async () => {
    await browser?.close();
    await server?.stop();
  });

  async function signIn(page: Page, email: string, password: string): Promise<void> {
    await page.getByLabel('Email').fill(email);
    await page.getByLabel('Password', { exact: true }).fill(password);
    await page.getByRole('button', { name: 'Sign in' }).click();
  }

  async function memberNames(page: Page): Promise<string[]> {
    await page.locator('.member-name').first().waitFor();
    return (await page.locator('.member-name').allTextContents()).map((t) => t.replace(/\(you\)/, '').trim());
  }

  /** The demo lab's id, asked of the API the way any client would. */
  async function demoLabId(): Promise<string> {
    const analyst = account('analyst');
    const signedIn = await fetch(`${server.baseUrl}/api/auth/sign-in`, {
      method: 'POST',
      headers: { 'Content-Type': 'application/json' },
      body: JSON.stringify({ email: analyst.email, password: analyst.password }),
    });
    const { token } = (await signedIn.json()) as { token: string };
    const me = await fetch(`${server.baseUrl}/api/me`, { headers: { Authorization: `Bearer ${token}` } });
    const { memberships } = (await me.json()) as { memberships: { labId: string; labName: string }[] };
    const lab = memberships.find((m) => m.labName === DEMO_LAB_NAME);
    if (!lab) throw new Error('the demo analyst is not in the demo lab');
    return lab.labId;
  }

  it('takes the demo analyst from a deep link through sign-in to their lab and its members', async () => {
    const analyst = account('analyst');
    const labId = await demoLabId();
    const page = await browser.newPage(DESKTOP);
    await page.goto(`${server.baseUrl}/labs/${labId}`);
    await page.waitForURL(`${server.baseUrl}/sign-in?returnUrl=${encodeURIComponent(`/labs/${labId}`)}`);
    await page.getByRole('heading', { name: 'Sign in to Quiverpoint' }).waitFor();
    await screenshot(page, 'sign-in-desktop');

    await signIn(page, analyst.email, analyst.password);
    await page.waitForURL(`${server.baseUrl}/labs/${labId}`);
    await page.getByRole('heading', { level: 1, name: DEMO_LAB_NAME }).waitFor();
    expect(await memberNames(page)).toEqual(DEMO_ACCOUNTS.map((a) => a.name).sort((a, b) => a.localeCompare(b)));
    expect(await page.getByText('You are analyst in this lab.').isVisible()).toBe(true);
    // Analysts see roles but none of the owner's controls.
    expect(await page.locator('form[aria-label="Add a member"]').count()).toBe(0);
    expect(await page.locator('.members-table mat-select').count()).toBe(0);
    await screenshot(page, 'lab-analyst-desktop');

    await page.getByRole('link', { name: 'Home', exact: true }).click();
    await page.getByRole('heading', { name: `Welcome, ${analyst.name}` }).waitFor();
    expect(await page.locator('.lab-name').textContent()).toContain(DEMO_LAB_NAME);
    await screenshot(page, 'home-desktop');
  });

  it('works on a narrow phone screen, navigation in a drawer', async () => {
    const analyst = account('analyst');
    const page = await browser.newPage(NARROW);
    await page.goto(server.baseUrl);
    await page.waitForURL(/\/sign-in/);
    await screenshot(page, 'sign-in-narrow');
    await signIn(page, analyst.email, analyst.password);
    await page.getByRole('heading', { name: `Welcome, ${analyst.name}` }).waitFor();
    await screenshot(page, 'home-narrow');

    await page.getByRole('button', { name: 'Open navigation' }).click();
    // Every entry of the drawer is on screen and on top, Home first: nothing (the toolbar) covers it.
    const nav = page.getByRole('navigation', { name: 'Main' });
    await nav.getByRole('link', { name: 'Home', exact: true }).waitFor();
    await page.waitForTimeout(500);
    const covered = await nav.getByRole('link').evaluateAll((links) =>
      links
        .filter((link) => {
          const box = link.getBoundingClientRect();
          const top = document.elementFromPoint(box.left + box.width / 2, box.top + box.height / 2);
          return box.bottom > window.innerHeight || !top || !link.contains(top);
        })
        .map((link) => link.textContent?.trim()),
    );
    expect(covered).toEqual([]);
    for (const name of ['Home', 'Case library', 'New case', 'Lab members']) {
      expect(await nav.getByRole('link', { name, exact: true }).count(), name).toBe(1);
    }
    await screenshot(page, 'navigation-narrow');
    await page.getByRole('link', { name: 'Lab members', exact: true }).click();
    await page.getByRole('heading', { level: 1, name: DEMO_LAB_NAME }).waitFor();
    expect(await memberNames(page)).toHaveLength(DEMO_ACCOUNTS.length);
    await screenshot(page, 'lab-analyst-narrow');
  });

  it('tells the user when the password is wrong and keeps them on the sign-in page', async () => {
    const page = await browser.newPage(DESKTOP);
    await page.goto(`${server.baseUrl}/sign-in`);
    await signIn(page, account('analyst').email, 'not-the-password');
    const alert = page.getByRole('alert');
    await alert.waitFor();
    expect(await alert.textContent()).toContain('The email or password is incorrect.');
    expect(new URL(page.url()).pathname).toBe('/sign-in');
    await screenshot(page, 'sign-in-wrong-password');
  });

  it('gives the owner the add-member form and a role picker per member, and signs out', async () => {
    const owner = account('owner');
    const page = await browser.newPage(DESKTOP);
    await page.goto(`${server.baseUrl}/sign-in`);
    await signIn(page, owner.email, owner.password);
    await page.getByRole('heading', { name: `Welcome, ${owner.name}` }).waitFor();
    await page.getByRole('link', { name: 'See lab members' }).click();
    await page.locator('form[aria-label="Add a member"]').waitFor();
    await expect.poll(() => page.locator('.members-table mat-select').count()).toBe(DEMO_ACCOUNTS.length);
    await screenshot(page, 'lab-owner-desktop');
    // The theme follows the system colour scheme; keep the dark variant in view too.
    await page.emulateMedia({ colorScheme: 'dark' });
    await screenshot(page, 'lab-owner-desktop-dark');
    await page.emulateMedia({ colorScheme: 'light' });

    await page.getByRole('button', { name: `Account: ${owner.name}` }).click();
    await page.getByRole('menuitem', { name: 'Sign out' }).click();
    await page.waitForURL(/\/sign-in$/);
    await page.goto(`${server.baseUrl}/`);
    await page.waitForURL(/\/sign-in/);
  });
});
