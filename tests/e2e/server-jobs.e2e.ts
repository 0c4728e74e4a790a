/**
 * Server jobs in a real browser, with one job worker process beside the server: the analyst runs a small sweep on
 * the server from the Sweeps tab, follows its progress to the end and sees the stored run in the tab; starts a large
 * basin map on the server, leaves the case, comes back to find it still running, and cancels it; the lab's Server
 * jobs page lists both with their states. Unsaved edits turn "Run on the server" off with the reason on screen.
 */
import { resolve } from 'node:path';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';

import { demoRigCase } from '../../shared/case/templates';
import { DESKTOP, NARROW, launchBrowser, screenshot as saveScreenshot, type TestBrowser } from './support/browser';
import { DEMO_LAB_NAME, startE2eServer, type E2eServer } from './support/server';
import { apiClient, demoAccount } from './support/api-client';
import { signIn } from './support/session';

const CASE_TITLE = 'Overnight tall rod';
const SHOTS = process.env['QP_E2E_SHOTS'] ?? resolve(__dirname, '..', '..', 'test-results', 'server-jobs');

let server: E2eServer;
const { api, tokenOf } = apiClient(() => server.baseUrl);
let browser: TestBrowser;
let caseId = '';
let labId = '';

async function signInAs(page: Page, role: string): Promise<void> {
  await signIn(page, server.baseUrl, demoAccount(role), '/library');
}

beforeAll(async () => {
  server = await startE2eServer({ database: 'quiverpoint_e2e_jobs', workers: 1 });
  browser = await launchBrowser();
  const analyst = await tokenOf('analyst');
  const { body: me } = await api<{ memberships: { labId: string; labName: string }[] }>('/api/me', { token: analyst });
  labId = me.memberships.find((m) => m.labName === DEMO_LAB_NAME)?.labId ?? '';
  const params = demoRigCase('shaker-tall-rod');
  if (!labId || !params) throw new Error('demo lab or rig missing');
  params.run.duration = 3;
  const created = await api<{ id: string }>(`/api/labs/${labId}/cases`, { token: analyst, body: { title: CASE_TITLE, tags: [], params, note: 'for server jobs' } });
  expect(created.status).toBe(201);
  caseId = created.body.id;
}, 300_000);

afterAll(async () => {
  await browser?.close();
  await server?.stop();
});

describe('server jobs', () => {
  it('runs a sweep on the server, shows its stored run, and cancels a basin map after leaving and coming back', async () => {
    const page = await browser.newPage(DESKTOP);
    await signInAs(page, 'analyst');
    await page.goto(`${server.baseUrl}/cases/${caseId}/r/1/sweeps`);
    await page.getByTestId('sweep-count').fill('6');
    const submit = page.getByTestId('server-sweep');
    await expect.poll(() => submit.isEnabled()).toBe(true);
    await submit.click();

    const job = page.getByTestId('server-sweep-job').first();
    await job.waitFor();
    // Live progress: the job is followed through its states to the end, with its chunks counted.
    await expect
      .poll(() => job.getAttribute('data-state'), { timeout: 180_000, interval: 250 })
      .toBe('succeeded');
    expect(await page.getByTestId('server-sweep-state').first().textContent()).toBe('Done');
    expect(await job.textContent()).toMatch(/Done: \d+ chunks?, stored with r1/);
    // The stored run shows in the tab like any stored run, verified by the server.
    await expect.poll(() => page.getByTestId('stored-mark').textContent(), { timeout: 30_000 }).toMatch(/Stored r1 · Sweep, computed .* by Ada Analyst/);
    expect((await page.getByTestId('stored-verification').textContent())?.trim()).toBe('Verified by the server');
    expect(await page.getByTestId('sweep-count').inputValue()).toBe('6');
    await saveScreenshot(page, 'server-sweep-done-desktop', { dir: SHOTS });

    // A large basin map: started, left running while the analyst goes elsewhere, found again, cancelled.
    await page.getByRole('tab', { name: 'Map', exact: true }).click();
    await page.waitForURL((url) => url.pathname.endsWith('/map'));
    await page.getByRole('combobox', { name: 'Cells per side' }).nth(1).click();
    await page.getByRole('option', { name: '21', exact: true }).click();
    await page.getByTestId('server-basin').click();
    const basinJob = page.getByTestId('server-basin-job').first();
    await basinJob.waitFor();
    await expect.poll(() => basinJob.getAttribute('data-state'), { timeout: 60_000 }).toBe('running');
    await page.getByTestId('server-basin-progress').first().waitFor();
    expect(await page.getByTestId('server-basin-progress').first().textContent()).toMatch(/^(\d+ of \d+ chunks \(\d+ %\)|waiting for a worker)$/);
    await saveScreenshot(page, 'server-basin-running-desktop', { dir: SHOTS, axe: true });

    await page.getByRole('link', { name: 'Case library' }).click();
    await page.waitForURL((url) => url.pathname === '/library');
    await page.goto(`${server.baseUrl}/cases/${caseId}/r/1/map`);
    const again = page.getByTestId('server-basin-job').first();
    await again.waitFor();
    expect(await again.getAttribute('data-state')).toMatch(/^(queued|running)$/);
    await page.getByTestId('server-basin-cancel').first().click();
    await expect.poll(() => again.getAttribute('data-state'), { timeout: 30_000 }).toBe('cancelled');
    expect(await again.textContent()).toMatch(/Cancelled by Ada Analyst after \d+ of \d+ chunks; nothing was stored/);
    await saveScreenshot(page, 'server-basin-cancelled-desktop', { dir: SHOTS });

    // Unsaved edits: the button is off and says why.
    await page.getByRole('tab', { name: 'Rig', exact: true }).click();
    await page.locator('input[data-field="drive.amplitude"]').fill('9');
    await page.getByRole('tab', { name: 'Sweeps', exact: true }).click();
    await page.waitForURL((url) => url.pathname.endsWith('/sweeps'));
    expect(await page.getByTestId('server-sweep').isDisabled()).toBe(true);
    expect(await page.getByTestId('server-sweep-why').textContent()).toContain('Save the case first: server jobs run a saved revision');
    await page.close();
  });

  it("lists the lab's jobs, running and finished, with their states and the stored run", async () => {
    const page = await browser.newPage(DESKTOP);
    await signInAs(page, 'analyst');
    await page.getByRole('link', { name: 'Server jobs' }).click();
    await page.waitForURL((url) => url.pathname === `/labs/${labId}/jobs`);
    const finished = page.getByTestId('finished-jobs');
    await finished.waitFor();
    const rows = finished.getByTestId('job-row');
    expect(await rows.count()).toBe(2);
    const texts = await rows.allTextContents();
    expect(texts.find((t) => t.includes('Basin map'))).toMatch(new RegExp(`${CASE_TITLE}, r1Cancelled.*Basin map.*Ada Analyst`));
    expect(texts.find((t) => t.includes('Sweep'))).toMatch(new RegExp(`${CASE_TITLE}, r1Done.*Sweep.*Ada Analyst`));
    expect(await page.getByTestId('no-active-jobs').count()).toBe(1);
    await saveScreenshot(page, 'server-jobs-list-desktop', { dir: SHOTS });

    await page.getByTestId('job-run-link').click();
    await page.waitForURL((url) => url.pathname === `/cases/${caseId}/r/1/sweeps`);
    await expect.poll(() => page.getByTestId('stored-mark').textContent(), { timeout: 30_000 }).toMatch(/Stored r1 · Sweep/);

    const phone = await browser.newPage(NARROW);
    await signInAs(phone, 'viewer');
    await phone.goto(`${server.baseUrl}/labs/${labId}/jobs`);
    await phone.getByTestId('finished-jobs').waitFor();
    expect(await phone.getByTestId('job-cancel').count()).toBe(0);
    await saveScreenshot(phone, 'server-jobs-list-phone', { dir: SHOTS });
    await phone.goto(`${server.baseUrl}/cases/${caseId}/r/1/sweeps`);
    await phone.getByTestId('server-sweep-why').waitFor();
    expect(await phone.getByTestId('server-sweep-why').textContent()).toContain('owners and analysts');
    await saveScreenshot(phone, 'server-sweep-viewer-phone', { dir: SHOTS });
  });
});
