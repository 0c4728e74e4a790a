/**
 * The outcome map in a real browser, with one job worker process beside the server: the analyst sets a 6 × 5 map
 * over drive frequency by drive amplitude in the Map tab, computes it in the browser (rows fill in, progress in
 * cells), reads the heatmap's hover and the count of each outcome, then runs the same map on the server and sees the
 * stored map in its place; opening the revision again shows the stored map.
 */
import { resolve } from 'node:path';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';

import { demoRigCase } from '../../shared/case/templates';
import { DESKTOP, NARROW, launchBrowser, screenshot, type TestBrowser } from './support/browser';
import { DEMO_LAB_NAME, startE2eServer, type E2eServer } from './support/server';
import { apiClient, demoAccount } from './support/api-client';
import { signIn } from './support/session';

const SHOTS = process.env['QP_E2E_SHOTS'] ?? resolve(__dirname, '..', '..', 'test-results', 'outcome-map');

let server: E2eServer;
const { api, tokenOf } = apiClient(() => server.baseUrl);
let browser: TestBrowser;
let caseId = '';

async function signInAs(page: Page, role: string): Promise<void> {
  await signIn(page, server.baseUrl, demoAccount(role), '/library');
}

async function pick(page: Page, testId: string, option: string): Promise<void> {
  await page.getByTestId(testId).click();
  await page.getByRole('option', { name: option, exact: true }).click();
}

/** The counts table as [outcome, cells] pairs. */
async function counts(page: Page): Promise<Array<[string, number]>> {
  const rows = page.getByTestId('outcome-map-counts').locator('tbody tr');
  const out: Array<[string, number]> = [];
  for (let i = 0; i < (await rows.count()); i++) {
    const cells = await rows.nth(i).locator('td').allTextContents();
    out.push([cells[0].trim(), Number(cells[1].trim())]);
  }
  return out;
}

beforeAll(async () => {
  server = await startE2eServer({ database: 'quiverpoint_e2e_outcome_map', workers: 1 });
  browser = await launchBrowser();
  const analyst = await tokenOf('analyst');
  const { body: me } = await api<{ memberships: { labId: string; labName: string }[] }>('/api/me', { token: analyst });
  const labId = me.memberships.find((m) => m.labName === DEMO_LAB_NAME)?.labId ?? '';
  const params = demoRigCase('shaker-tall-rod');
  if (!labId || !params) throw new Error('demo lab or rig missing');
  params.run.duration = 3;
  const created = await api<{ id: string }>(`/api/labs/${labId}/cases`, { token: analyst, body: { title: 'Tall rod map', tags: [], params, note: 'for the outcome map' } });
  expect(created.status).toBe(201);
  caseId = created.body.id;
}, 300_000);

afterAll(async () => {
  await browser?.close();
  await server?.stop();
});

describe('outcome map', () => {
  it('computes a 6 × 5 map in the browser, then on the server, and shows the stored map', async () => {
    const page = await browser.newPage(DESKTOP);
    await signInAs(page, 'analyst');
    await page.goto(`${server.baseUrl}/cases/${caseId}/r/1/map`);
    await page.getByRole('heading', { name: 'Outcome map' }).waitFor();

    await pick(page, 'outcome-map-x-field', 'Drive frequency');
    await pick(page, 'outcome-map-y-field', 'Drive amplitude');
    // The form speaks the Rig's units: Hz and mm, never SI.
    expect(await page.getByTestId('outcome-map-x').textContent()).toContain('Hz');
    expect(await page.getByTestId('outcome-map-y').textContent()).toContain('mm');
    await page.getByTestId('outcome-map-x-from').fill('40');
    await page.getByTestId('outcome-map-x-to').fill('90');
    await page.getByTestId('outcome-map-x-count').fill('6');
    await page.getByTestId('outcome-map-y-from').fill('4');
    await page.getByTestId('outcome-map-y-to').fill('12');
    await page.getByTestId('outcome-map-y-count').fill('0');
    expect(await page.getByTestId('run-refusal').textContent()).toContain('Vertical axis: cells must be a whole number from 2 to 200.');
    await page.getByTestId('outcome-map-y-count').fill('5');
    expect(await page.getByTestId('outcome-map-size').textContent()).toContain('30 cells, each a motion run of 3 s.');

    await page.getByTestId('run-outcome-map').click();
    // Rows fill in while the map runs: progress counts cells, the plot shows those done so far.
    await page.getByTestId('run-outcome-map-progress').waitFor();
    expect(await page.getByTestId('run-outcome-map-progress').textContent()).toMatch(/^\d+ of 30 cells$/);
    await expect.poll(async () => (await page.getByTestId('outcome-map-computed').textContent())?.trim(), { timeout: 180_000 }).toBe('30 cells.');
    const browserCounts = await counts(page);
    expect(browserCounts.map(([o]) => o)).toEqual(['holds upright', 'settles tilted', 'falls', 'tumbles', 'irregular']);
    expect(browserCounts.reduce((n, [, c]) => n + c, 0)).toBe(30);

    const plot = page.getByTestId('outcome-map-plot');
    expect(await plot.locator('.hm, .heatmaplayer image').count()).toBeGreaterThan(0);
    expect(await plot.locator('.xtitle').textContent()).toBe('Drive frequency (Hz)');
    expect(await plot.locator('.ytitle').textContent()).toBe('Drive amplitude (mm)');
    await plot.scrollIntoViewIfNeeded();
    const area = await plot.locator('.nsewdrag').first().boundingBox();
    if (!area) throw new Error('no plot area');
    await page.mouse.move(area.x + area.width * 0.45, area.y + area.height * 0.45);
    await page.mouse.move(area.x + area.width * 0.5, area.y + area.height * 0.5, { steps: 4 });
    await plot.locator('.hovertext').first().waitFor();
    const hover = await plot.locator('.hovertext').first().textContent();
    expect(hover).toMatch(/^Drive frequency \d+(\.\d+)? HzDrive amplitude \d+(\.\d+)? mm(holds upright|settles tilted|falls|tumbles|irregular)/);
    await screenshot(page, 'outcome-map-browser-desktop', { dir: SHOTS });

    // The same settings on the server: the job's stored map replaces the one computed here.
    const submit = page.getByTestId('server-outcome-map');
    await expect.poll(() => submit.isEnabled()).toBe(true);
    await submit.click();
    const job = page.getByTestId('server-outcome-map-job').first();
    await job.waitFor();
    await expect.poll(() => job.getAttribute('data-state'), { timeout: 240_000, interval: 500 }).toBe('succeeded');
    expect(await job.textContent()).toMatch(/Server job, Outcome map of r1, 6 × 5 cells/);
    await expect
      .poll(() => page.locator('[data-testid=stored-mark][data-kind=map]').textContent(), { timeout: 30_000 })
      .toMatch(/Stored r1 · Outcome map, computed .* by Ada Analyst/);
    // One engine, so the server's cells are the browser's.
    expect(await counts(page)).toEqual(browserCounts);
    await screenshot(page, 'outcome-map-server-desktop', { dir: SHOTS });

    // A large map fills in row by row and can be cancelled; the stored map stays shown meanwhile and after.
    await page.getByTestId('outcome-map-x-count').fill('30');
    await page.getByTestId('outcome-map-y-count').fill('40');
    expect(await page.getByTestId('outcome-map-size').textContent()).toContain('Run on the server keeps going when you close the page');
    await page.getByTestId('run-outcome-map').click();
    await page.getByText(/^\s*[1-9]\d* of 1200 cells computed so far\.\s*$/).waitFor({ timeout: 120_000 });
    expect(await page.getByTestId('run-outcome-map-progress').textContent()).toMatch(/^\d+ of 1200 cells$/);
    await page.getByTestId('outcome-map-plot').scrollIntoViewIfNeeded();
    await screenshot(page, 'outcome-map-running-desktop', { dir: SHOTS, axe: false });
    await page.getByTestId('run-outcome-map-cancel').click();
    await page.getByTestId('run-outcome-map-cancelled').waitFor();
    expect(await counts(page)).toEqual(browserCounts);

    // Opening the revision again shows the stored map, its settings back in the form.
    const phone = await browser.newPage(NARROW);
    await signInAs(phone, 'analyst');
    await phone.goto(`${server.baseUrl}/cases/${caseId}/r/1/map`);
    await expect
      .poll(() => phone.locator('[data-testid=stored-mark][data-kind=map]').count(), { timeout: 60_000 })
      .toBe(1);
    expect(await phone.getByTestId('outcome-map-x-count').inputValue()).toBe('6');
    expect(await phone.getByTestId('outcome-map-y-from').inputValue()).toBe('4');
    expect(await counts(phone)).toEqual(browserCounts);
    await phone.getByTestId('outcome-map-plot').scrollIntoViewIfNeeded();
    await screenshot(phone, 'outcome-map-stored-phone', { dir: SHOTS });
    const overflow = await phone.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
    expect(overflow).toBeLessThanOrEqual(1);
  }, 600_000);
});
