import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';

import { DESKTOP, NARROW, launchBrowser, screenshot, type TestBrowser } from './support/browser';
import { DEMO_ACCOUNTS, startE2eServer, type E2eServer } from './support/server';

const owner = DEMO_ACCOUNTS.find((a) => a.role === 'owner');
const viewer = DEMO_ACCOUNTS.find((a) => a.role === 'viewer');

describe('an owner manages the lab', () => {
  let server: E2eServer;
  let browser: TestBrowser;

  beforeAll(async () => {
    // Its own database, so it can run beside the other browser test files.
    server = await startE2eServer({ database: 'quiverpoint_e2e_labs' });
    browser = await launchBrowser();
  });

  afterAll(async () => {
    await browser?.close();
    await server?.stop();
  });

  async function openLabAsOwner(page: Page): Promise<void> {
    if (!owner) throw new Error('no demo owner');
    await page.goto(`${server.baseUrl}/sign-in`);
    await page.getByLabel('Email').fill(owner.email);
    await page.getByLabel('Password', { exact: true }).fill(owner.password);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.getByRole('link', { name: 'See lab members' }).click();
    await page.locator('.member-name').first().waitFor();
  }

  it('invites an address, sees it pending, and revokes it', async () => {
    const page = await browser.newPage(DESKTOP);
    await openLabAsOwner(page);
    await page.getByText('No invitations are waiting for an answer.').waitFor();
    await page.getByLabel('Email').fill('new-colleague@quiverpoint.test');
    await page.getByRole('button', { name: 'Add member' }).click();
    await page.getByText('an invitation to join as analyst is on its way by e-mail').waitFor();
    const row = page.locator('.invitations-table tr', { hasText: 'new-colleague@quiverpoint.test' });
    await row.waitFor();
    expect(await row.locator('td').nth(1).textContent()).toContain('Analyst');
    await screenshot(page, 'lab-invitations-desktop');

    await page.getByRole('button', { name: 'Revoke the invitation for new-colleague@quiverpoint.test' }).click();
    await page.getByText('No invitations are waiting for an answer.').waitFor();
    expect(await page.locator('.invitations-table').count()).toBe(0);
  });

  it('is told in the dialog that the only owner cannot leave, and removes another member', async () => {
    if (!viewer) throw new Error('no demo viewer');
    const page = await browser.newPage(DESKTOP);
    await openLabAsOwner(page);
    await page.getByRole('button', { name: 'Leave this lab' }).click();
    const dialog = page.getByRole('dialog');
    await dialog.getByRole('button', { name: 'Leave lab' }).click();
    const refusal = dialog.getByRole('alert');
    await refusal.waitFor();
    expect(await refusal.textContent()).toContain('A lab needs at least one owner');
    expect(await dialog.getByRole('button', { name: 'Leave lab' }).count()).toBe(0);
    await screenshot(page, 'lab-last-owner-dialog');
    await dialog.getByRole('button', { name: 'Close' }).click();
    await dialog.waitFor({ state: 'detached' });

    await page.getByRole('button', { name: `Remove ${viewer.name}` }).click();
    await dialog.getByRole('button', { name: 'Remove' }).click();
    await page.getByText(`${viewer.name} was removed from`).waitFor();
    await page.locator('.member-name', { hasText: viewer.name }).waitFor({ state: 'detached' });
    expect(await page.locator('.member-name').count()).toBe(DEMO_ACCOUNTS.length - 1);
  });

  it('fits the remove controls and invitations on a phone', async () => {
    const page = await browser.newPage(NARROW);
    await openLabAsOwner(page);
    await page.getByLabel('Email').fill('phone-invitee@quiverpoint.test');
    await page.getByRole('button', { name: 'Add member' }).click();
    const row = page.locator('.invitations-table tr', { hasText: 'phone-invitee@quiverpoint.test' });
    await row.waitFor();
    // The shell scrolls its content area, so measure the tables against the viewport rather than the document.
    const rightEdges = await page.evaluate(() =>
      ['.members-table', '.invitations-table'].map((s) => document.querySelector(s)?.getBoundingClientRect().right ?? Infinity),
    );
    for (const right of rightEdges) expect(right).toBeLessThanOrEqual(NARROW.width);
    await screenshot(page, 'lab-owner-phone');
    await row.scrollIntoViewIfNeeded();
    await screenshot(page, 'lab-invitations-phone');
  });
});
