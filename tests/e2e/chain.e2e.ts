/**
 * A two-link chain in a real browser: created from its preset, links edited on the Rig tab in the shown unit (added,
 * refused out of range, removed), kept whole through a save, the Floquet margins with all four multipliers, and a motion run plotting both
 * joints.
 */
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';

import { resolve } from 'node:path';

import { NARROW, screenshot, type TestBrowser } from './support/browser';
import { DEMO_ACCOUNTS, type E2eServer } from './support/server';
import { type AnalystSession, openTab, startAnalystSession } from './support/session';

/** This file's screenshots (each also runs the axe check), in their own folder. */
const SHOTS = resolve(__dirname, '..', '..', 'test-results', 'chain');

const analyst = DEMO_ACCOUNTS.find((a) => a.role === 'analyst') ?? DEMO_ACCOUNTS[0];

let server: E2eServer;
let browser: TestBrowser;
let page: Page;

let session: AnalystSession | undefined;

beforeAll(async () => {
  session = await startAnalystSession('quiverpoint_e2e_chain');
  ({ server, browser, page } = session);
}, 180_000);

afterAll(async () => {
  await session?.stop();
});

describe('two-link chain', () => {
  it('creates a two-link case, keeps both links through a save, and runs margins and motion on both joints', async () => {
    await page.goto(`${server.baseUrl}/cases/new?preset=two-link-shaker`);
    const links = page.getByTestId('chain-links').locator('li');
    await expect.poll(() => links.allTextContents()).toEqual([
      'Link 1: rod 200 mm, 0.03 kg; joint damping 0.0002 N·m·s/rad',
      'Link 2: rod 150 mm, 0.02 kg; joint damping 0.0002 N·m·s/rad; starts bent 2.865°',
    ]);
    // links are edited in the shown unit: a third link, a length out of range, then back to the two links
    await page.getByRole('button', { name: 'Add a link' }).click();
    await expect.poll(() => links.count()).toBe(3);
    const third = page.locator('input[data-field="body.links.2.rodLength"]');
    await third.fill('0.5');
    await expect.poll(() => page.getByText('Must be at least 1 mm').count()).toBeGreaterThan(0);
    await page.getByRole('button', { name: 'Remove link 3' }).click();
    await expect.poll(() => links.count()).toBe(2);
    expect(await page.getByText('Must be at least 1 mm').count()).toBe(0);

    await page.getByLabel('Case title').fill('Two hinged rods, chain test');
    await page.getByRole('button', { name: /Save/ }).click();
    await page.getByTestId('revision-note').fill('Two links as built');
    await page.getByTestId('save-revision').click();
    await page.waitForURL((url) => /\/cases\/[^/]+\/r\/1\//.test(url.pathname), { timeout: 30_000 });
    await page.reload();
    await openTab(page, 'Rig');
    await expect.poll(() => links.count()).toBe(2);
    expect(await links.first().textContent()).toContain('rod 200 mm');
    await screenshot(page, 'chain-rig-desktop', { dir: SHOTS });

    await openTab(page, 'Margins');
    await page.getByTestId('run-margins').click();
    await expect.poll(() => page.getByTestId('upright-verdict').textContent(), { timeout: 90_000 }).toBe('holds');
    const upright = page.locator('section[aria-labelledby="motions-title"] tbody tr').first();
    const cells = await upright.locator('td').allTextContents();
    expect(cells[0]).toBe('upright');
    // 2N = 4 multipliers, as two complex pairs
    expect(cells[2].split(', ')).toHaveLength(4);
    expect(Number(cells[3])).toBeLessThan(1);
    expect(await page.getByTestId('limits').textContent()).toMatch(/mm/);
    // the modes, the one that loses stability first on top, with both links' angles
    const modeRows = page.getByTestId('chain-modes').locator('tbody tr');
    expect(await modeRows.count()).toBeGreaterThanOrEqual(2);
    expect((await modeRows.first().locator('td').allTextContents())[2]).toMatch(/^−?[\d.]+ : −?[\d.]+$/);
    await screenshot(page, 'chain-margins-desktop', { dir: SHOTS });

    await openTab(page, 'Motion');
    await page.getByTestId('run-motion').click();
    await expect.poll(() => page.getByTestId('outcome').textContent(), { timeout: 90_000 }).toBe('holds upright');
    await expect.poll(() => page.locator('.legendtext').allTextContents()).toEqual(
      expect.arrayContaining(['link 1 angle θ1', 'link 2 angle θ2', 'link 1 slow motion', 'link 2 slow motion']),
    );
    // the animation draws both links
    await expect.poll(() => page.getByRole('img', { name: /^Body at t = / }).locator('line.rod').count()).toBe(2);
    await screenshot(page, 'chain-motion-desktop', { dir: SHOTS });

    // The same case on a phone: the links and the modes fit without sideways scrolling of the page.
    const phone = await browser.newPage(NARROW);
    await phone.goto(`${server.baseUrl}/sign-in?returnUrl=${encodeURIComponent(new URL(page.url()).pathname.replace(/motion$/, 'rig'))}`);
    await phone.getByLabel('Email').fill(analyst.email);
    await phone.getByLabel('Password', { exact: true }).fill(analyst.password);
    await phone.getByRole('button', { name: 'Sign in', exact: true }).click();
    await phone.getByTestId('chain-links').locator('li').first().waitFor();
    await screenshot(phone, 'chain-rig-phone', { dir: SHOTS });
    expect(await phone.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth)).toBeLessThanOrEqual(1);
  }, 240_000);
});
