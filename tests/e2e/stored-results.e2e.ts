/**
 * Stored results in a real browser: a revision with a stored motion run and a stored sweep (computed here by the
 * engine, posted through the API and rerun by the server) opens with both shown in their tabs, marked as stored,
 * with no worker job at all; an edit turns them stale and Run replaces the stored motion with a fresh one. A visitor
 * opening a case link signed out sees the outcome and the stored plots.
 */
import { resolve } from 'node:path';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';

import type { CaseParams } from '../../shared/case/case-schema';
import { demoRigCase } from '../../shared/case/templates';
import { computeRun, makeRunRecord, type RunSettings } from '../../shared/engine/run-record';
import { DESKTOP, NARROW, launchBrowser, screenshot as saveScreenshot, type TestBrowser } from './support/browser';
import { DEMO_LAB_NAME, startE2eServer, type E2eServer } from './support/server';
import { apiClient, demoAccount } from './support/api-client';
import { signIn } from './support/session';

const CASE_TITLE = 'Stored tall rod';
const SWEEP_POINTS = 5;
const SHOTS = process.env['QP_E2E_SHOTS'] ?? resolve(__dirname, '..', '..', 'test-results', 'stored-results');

let server: E2eServer;
const { api, tokenOf } = apiClient(() => server.baseUrl);
let browser: TestBrowser;
let caseId = '';
let linkUrl = '';

/** A run record computed by the engine here, as the browser would post it. */
function engineRun(params: CaseParams, settings: RunSettings) {
  return makeRunRecord(params, settings, computeRun(params, settings));
}

/** Counts engine Web Workers made and messages posted to any worker, from before the app's first script. */
async function countWorkerUse(page: Page): Promise<void> {
  await page.addInitScript(() => {
    const counts = { made: 0, posted: 0 };
    (window as unknown as { __qpWorkers: typeof counts }).__qpWorkers = counts;
    const post = Worker.prototype.postMessage;
    Worker.prototype.postMessage = function (this: Worker, ...args: unknown[]) {
      counts.posted++;
      return (post as (...a: unknown[]) => void).apply(this, args);
    } as Worker['postMessage'];
    window.Worker = new Proxy(window.Worker, {
      construct(target, args: ConstructorParameters<typeof Worker>) {
        counts.made++;
        return Reflect.construct(target, args);
      },
    });
  });
}

/** Notes when a stored-result marker first appears, in the page's own clock. */
async function timeStoredMark(page: Page): Promise<void> {
  await page.addInitScript(() => {
    const w = window as unknown as { __qpMarkShownAt?: number };
    new MutationObserver((_, observer) => {
      if (document.querySelector('[data-testid="stored-mark"]')) {
        w.__qpMarkShownAt = performance.now();
        observer.disconnect();
      }
    }).observe(document, { childList: true, subtree: true });
  });
}

async function workerUse(page: Page): Promise<{ made: number; posted: number }> {
  return page.evaluate(() => (window as unknown as { __qpWorkers: { made: number; posted: number } }).__qpWorkers);
}

async function signInAs(page: Page, role: string): Promise<void> {
  await signIn(page, server.baseUrl, demoAccount(role), '/library');
}

/** Plotly drew at least one trace of the plot with this title. */
async function expectDrawn(page: Page, title: string): Promise<void> {
  const traces = page.locator(`figure[aria-label="${title}"] .plot-container .trace`);
  await expect.poll(() => traces.count(), { message: `${title} has traces` }).toBeGreaterThan(0);
}

beforeAll(async () => {
  server = await startE2eServer({ database: 'quiverpoint_e2e_stored' });
  browser = await launchBrowser();
  const analyst = await tokenOf('analyst');
  const { body: me } = await api<{ memberships: { labId: string; labName: string }[] }>('/api/me', { token: analyst });
  const labId = me.memberships.find((m) => m.labName === DEMO_LAB_NAME)?.labId;
  const params = demoRigCase('shaker-tall-rod');
  if (!labId || !params) throw new Error('demo lab or rig missing');
  params.run.duration = 3;
  const created = await api<{ id: string }>(`/api/labs/${labId}/cases`, { token: analyst, body: { title: CASE_TITLE, tags: [], params, note: 'stored runs' } });
  expect(created.status).toBe(201);
  caseId = created.body.id;
  const a = params.drive.amplitude;
  const sweep: RunSettings = { kind: 'sweep', spec: { field: 'drive.amplitude', from: a / 2, to: a * 1.5, steps: SWEEP_POINTS } };
  for (const settings of [{ kind: 'motion' } as RunSettings, sweep]) {
    expect((await api(`/api/cases/${caseId}/revisions/1/runs`, { token: analyst, body: engineRun(params, settings) })).status).toBe(201);
  }
  // The server reruns each stored run on its own engine; its full result is stored once that has settled.
  const deadline = Date.now() + 240_000;
  for (;;) {
    const { body } = await api<{ runs: { verification: { state: string } }[] }>(`/api/cases/${caseId}/revisions/1`, { token: analyst });
    const states = body.runs.map((r) => r.verification.state);
    if (states.length === 2 && states.every((s) => s === 'verified')) break;
    if (states.includes('unreproduced') || Date.now() > deadline) throw new Error(`the server's reruns ended ${states.join(', ')}`);
    await new Promise((done) => setTimeout(done, 1000));
  }
  const link = await api<{ url: string }>(`/api/cases/${caseId}/links`, { token: analyst, body: { revision: 1, expiresInDays: 7 } });
  expect(link.status).toBe(201);
  linkUrl = link.body.url;
}, 300_000);

afterAll(async () => {
  await browser?.close();
  await server?.stop();
});

describe('stored results', () => {
  it('opens a revision with its stored motion and sweep, marked, without any worker job', async () => {
    const page = await browser.newPage(DESKTOP);
    await countWorkerUse(page);
    await signInAs(page, 'analyst');
    await timeStoredMark(page);

    await page.goto(`${server.baseUrl}/cases/${caseId}/r/1/motion`);
    const mark = page.getByTestId('stored-mark');
    await mark.waitFor();
    // From the revision's arrival (the page then knows its runs) to the stored result on screen, timed in the page.
    const timing = await page.evaluate(() => {
      const revision = performance
        .getEntriesByType('resource')
        .find((e) => /\/api\/cases\/[^/]+\/revisions\/1$/.test(e.name)) as PerformanceResourceTiming | undefined;
      const shown = (window as unknown as { __qpMarkShownAt?: number }).__qpMarkShownAt;
      return { revisionAt: revision?.responseEnd ?? null, shownAt: shown ?? null };
    });
    console.log(`[stored-results] revision read at ${timing.revisionAt} ms, stored motion on screen at ${timing.shownAt} ms`);
    if (timing.revisionAt === null || timing.shownAt === null) throw new Error('no timing of the revision or the stored result');
    expect(timing.shownAt - timing.revisionAt).toBeLessThan(1000);
    expect(await mark.textContent()).toMatch(/Stored r1 · Motion, computed \d{1,2} \w{3} \d{4} \d\d:\d\d by Ada Analyst/);
    expect((await page.getByTestId('stored-verification').textContent())?.trim()).toBe('Verified by the server');
    expect(await page.getByTestId('outcome').textContent()).toBe('holds upright');
    await expectDrawn(page, 'Angle against time');
    await expectDrawn(page, 'Phase portrait');
    await saveScreenshot(page, 'stored-motion-desktop', { dir: SHOTS });

    await page.getByRole('tab', { name: 'Sweeps', exact: true }).click();
    await page.waitForURL((url) => url.pathname.endsWith('/sweeps'));
    expect(await page.getByTestId('stored-mark').textContent()).toMatch(/Stored r1 · Sweep, computed .* by Ada Analyst/);
    await expectDrawn(page, 'Sweep: outcome and slow frequency');
    expect(await page.getByTestId('sweep-count').inputValue()).toBe(String(SWEEP_POINTS));
    await saveScreenshot(page, 'stored-sweep-desktop', { dir: SHOTS });

    expect(await workerUse(page)).toEqual({ made: 0, posted: 0 });

    // An edit makes the stored view stale like any result; only Run computes, and the fresh result takes its place.
    await page.getByRole('tab', { name: 'Rig', exact: true }).click();
    const amplitude = page.locator('input[data-field="drive.amplitude"]');
    await amplitude.fill('9');
    await page.getByRole('tab', { name: 'Motion', exact: true }).click();
    await page.waitForURL((url) => url.pathname.endsWith('/motion'));
    await page.getByText('These results belong to earlier inputs').waitFor();
    expect(await page.getByTestId('stored-mark').count()).toBe(1);
    expect((await workerUse(page)).posted).toBe(0);
    await page.getByTestId('run-motion').click();
    await page.getByTestId('outcome').waitFor({ state: 'detached' });
    await page.getByTestId('outcome').waitFor({ timeout: 60_000 });
    expect(await page.getByTestId('stored-mark').count()).toBe(0);
    expect(await page.getByText('These results belong to earlier inputs').count()).toBe(0);
    expect((await workerUse(page)).posted).toBeGreaterThan(0);
  });

  it('shows a visitor the outcome and the stored plots through a case link, signed out', async () => {
    const page = await browser.newPage(NARROW);
    await countWorkerUse(page);
    await page.goto(linkUrl);
    await page.getByTestId('outcome').waitFor();
    expect(await page.getByTestId('outcome').textContent()).toBe('holds upright');
    await expectDrawn(page, 'Angle against time');
    await expectDrawn(page, 'Phase portrait');
    await expectDrawn(page, 'Sweep: outcome and slow frequency');
    expect(await page.getByRole('button', { name: 'Save' }).count()).toBe(0);
    expect(await workerUse(page)).toEqual({ made: 0, posted: 0 });
    await saveScreenshot(page, 'stored-visitor-phone', { dir: SHOTS });
  });
});
