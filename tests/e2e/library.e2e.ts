/**
 * The case library in a real browser: an analyst edits a stored case, saves r2 with a note and a run, compares the
 * results of r1 and r2, downloads the case report and asks for a recheck; the
 * reviewer reruns it in their browser and confirms; both notices reach the local mail sink; a visitor opens a case
 * link read-only, reruns it and cannot save; a revoked link says so. Screenshots at desktop and phone sizes.
 */
import { Client } from 'pg';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';

import { CAUTION_DEFERRAL } from '../../shared/case/caution';
import { formatFrequency, formatLength, formatPercent } from '../../shared/case/display';
import type { CaseParams } from '../../shared/case/case-schema';
import { demoRigCase } from '../../shared/case/templates';
import { computeRun, makeRunRecord, type RunSettings } from '../../shared/engine/run-record';
import { readFileSync } from 'node:fs';
import { pdfText } from '../support/pdf-text';
import { resolve } from 'node:path';

import { DESKTOP, NARROW, launchBrowser, screenshot as saveScreenshot, type TestBrowser } from './support/browser';
import { contrastRatio, textAndBackground } from './support/axe';
import { DEMO_LAB_NAME, startE2eServer, type E2eServer } from './support/server';
import { apiClient, demoAccount } from './support/api-client';
import { openTab, signIn } from './support/session';

const CASE_TITLE = 'Tall rod on the long-stroke shaker';

/** This file's screenshots, in their own folder so other browser tests running alongside leave them alone. */
const SHOTS = process.env['QP_E2E_SHOTS'] ?? resolve(__dirname, '..', '..', 'test-results', 'library');

async function screenshot(page: Page, name: string): Promise<void> {
  await saveScreenshot(page, name, { dir: SHOTS });
}

let server: E2eServer;
const { api, tokenOf } = apiClient(() => server.baseUrl);
let browser: TestBrowser;
let caseId = '';
let visitorUrl = '';
let r1Margins: ReturnType<typeof engineRun>;

async function signInAs(page: Page, role: string, returnUrl: string): Promise<void> {
  await signIn(page, server.baseUrl, demoAccount(role), returnUrl);
}

async function noSideScroll(page: Page): Promise<void> {
  const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
  expect(overflow).toBeLessThanOrEqual(1);
}

beforeAll(async () => {
  server = await startE2eServer({ database: 'quiverpoint_e2e_library' });
  browser = await launchBrowser();
  // The seed has no site admin; the lab owner doubles as one here so the mail sink can be read.
  const db = new Client({ connectionString: server.databaseUrl });
  await db.connect();
  await db.query('UPDATE users SET is_site_admin = true WHERE email = $1', [demoAccount('owner').email]);
  await db.end();

  // The stored case the analyst starts from: a demo rig, kept short so reruns take a few seconds.
  const analyst = await tokenOf('analyst');
  const { body: me } = await api<{ memberships: { labId: string; labName: string }[] }>('/api/me', { token: analyst });
  const labId = me.memberships.find((m) => m.labName === DEMO_LAB_NAME)?.labId;
  const params = demoRigCase('shaker-tall-rod');
  if (!labId || !params) throw new Error('demo lab or rig missing');
  params.run.duration = 3;
  const created = await api<{ id: string }>(`/api/labs/${labId}/cases`, {
    token: analyst,
    body: { title: CASE_TITLE, tags: ['shaker', 'upright'], params, note: 'from the demo rig, 3 s run' },
  });
  expect(created.status).toBe(201);
  caseId = created.body.id;
  // r1 keeps a motion run and Floquet margins, so History can compare its results with r2's and its report has margins.
  expect((await api(`/api/cases/${caseId}/revisions/1/runs`, { token: analyst, body: engineRun(params, { kind: 'motion' }) })).status).toBe(201);
  r1Margins = engineRun(params, { kind: 'margins', relTolerance: 1e-6 });
  expect((await api(`/api/cases/${caseId}/revisions/1/runs`, { token: analyst, body: r1Margins })).status).toBe(201);
}, 300_000);

/** A run record computed by the engine here, as the browser would post it. */
function engineRun(params: CaseParams, settings: RunSettings) {
  return makeRunRecord(params, settings, computeRun(params, settings));
}

afterAll(async () => {
  await browser?.close();
  await server?.stop();
});

describe('case library', () => {
  it('lets an analyst change a stored case, save r2 with a run and ask for a recheck', async () => {
    const page = await browser.newPage(DESKTOP);
    await signInAs(page, 'analyst', '/library');
    const row = page.getByRole('link', { name: CASE_TITLE });
    await row.waitFor();
    await expect.poll(() => page.locator('qp-recheck-chip').first().textContent()).toContain('Draft');
    await screenshot(page, 'library-desktop');

    await row.click();
    await page.waitForURL(new RegExp(`/cases/${caseId}/r/1/rig$`));
    const amplitude = page.locator('input[data-field="drive.amplitude"]');
    await expect.poll(() => amplitude.inputValue()).toBe('8');
    await amplitude.fill('9');
    await openTab(page, 'Motion');
    await page.getByTestId('run-motion').click();
    await expect.poll(() => page.getByTestId('outcome').textContent(), { timeout: 60_000 }).toBe('holds upright');
    await page.getByRole('button', { name: 'Save' }).click();
    await page.getByTestId('revision-note').fill('Amplitude 9 mm');
    await page.getByTestId('save-revision').click();
    await page.waitForURL(new RegExp(`/cases/${caseId}/r/2/motion$`));

    await openTab(page, 'History');
    await page.locator('.meta .note', { hasText: 'Amplitude 9 mm' }).waitFor();
    const changed = page.locator('.diff-table:not(.results-diff) tr.changed');
    await expect.poll(() => changed.count()).toBe(1);
    expect(await changed.locator('.path').textContent()).toContain('Drive amplitude');
    expect((await changed.locator('.left').textContent())?.trim()).toBe('8');
    expect((await changed.locator('.right').textContent())?.trim()).toBe('9');
    await expect.poll(() => page.locator('qp-stored-runs-table .kind').allTextContents()).toEqual(['Motion']);

    // Results of r1 and r2 side by side: the motion of both, the margins only in r1.
    const results = page.locator('.results-diff tbody tr');
    await expect.poll(() => results.count()).toBeGreaterThan(4);
    const outcome = results.filter({ hasText: 'Outcome' });
    expect((await outcome.locator('.left').textContent())?.trim()).toBe('holds upright');
    expect((await outcome.locator('.right').textContent())?.trim()).toBe('holds upright');
    const slow = results.filter({ hasText: 'Slow frequency' });
    expect(await slow.locator('.left').textContent()).toMatch(/^\s*([\d.]+ Hz|none found)\s*$/);
    expect(await slow.locator('.change').textContent()).toMatch(/[↑↓=≠]/);
    const margin = results.filter({ hasText: 'Margin of the upright' });
    expect((await margin.locator('.left').textContent())?.trim()).toBe(formatPercent(r1Margins.summary['marginPercent'] as number));
    expect((await margin.locator('.change').textContent())?.trim()).toBe('not in the second');
    await screenshot(page, 'history-results-desktop');

    const report = async (): Promise<{ name: string; text: string }> => {
      const [download] = await Promise.all([page.waitForEvent('download'), page.getByRole('button', { name: 'Case report (PDF)' }).click()]);
      return { name: download.suggestedFilename(), text: pdfText(readFileSync((await download.path()) ?? '')) };
    };
    const r2Report = await report();
    expect(r2Report.name).toMatch(/-r2-report\.pdf$/);
    expect(r2Report.text).toContain(CASE_TITLE);
    expect(r2Report.text).toContain('Amplitude 9 mm');
    expect(r2Report.text).toContain('Outcome: holds upright');
    expect(r2Report.text).toContain(CAUTION_DEFERRAL);
    await page.locator('.revision-row .rev-number', { hasText: 'r1' }).click();
    await page.waitForURL(new RegExp(`/cases/${caseId}/r/1/history$`));
    const r1Report = await report();
    expect(r1Report.name).toMatch(/-r1-report\.pdf$/);
    expect(r1Report.text).toContain(`Margin of the upright ${formatPercent(r1Margins.summary['marginPercent'] as number)}`);
    expect(r1Report.text).toContain(`Lower amplitude limit ${formatLength(r1Margins.summary['amplitudeLower'] as number, 6)}`);
    expect(r1Report.text).toContain(`Lower frequency limit ${formatFrequency(r1Margins.summary['frequencyLower'] as number, 6)}`);
    await page.locator('.revision-row .rev-number', { hasText: 'r2' }).click();
    await page.waitForURL(new RegExp(`/cases/${caseId}/r/2/history$`));

    await page.getByRole('button', { name: 'Ask for a recheck' }).click();
    await page.getByRole('combobox', { name: 'Reviewer' }).click();
    await page.getByRole('option', { name: /Rui Reviewer/ }).click();
    await page.getByLabel('Message (optional)').fill('Amplitude raised to 9 mm; please confirm it still holds.');
    await page.getByRole('button', { name: 'Send request' }).click();
    await expect.poll(() => page.locator('.card-head qp-recheck-chip').first().textContent()).toContain('Awaiting recheck');
    await page.locator('mat-dialog-container').waitFor({ state: 'detached' });
    await screenshot(page, 'history-desktop');
  }, 180_000);

  it('takes bench traces: a bad row is named by its line, a good file is listed and plotted', async () => {
    const page = await browser.newPage(DESKTOP);
    await signInAs(page, 'analyst', `/cases/${caseId}/r/2/bench`);
    await page.getByRole('heading', { name: 'Upload a bench trace' }).waitFor();
    const bad = 'time,angle\n0,1.5\n0.01,x\n';
    await page.setInputFiles('#bench-file', { name: 'bad.csv', mimeType: 'text/csv', buffer: Buffer.from(bad) });
    await page.locator('.upload-button').click();
    await expect.poll(() => page.locator('.upload-error').textContent()).toContain('line 3');

    const rows = Array.from({ length: 300 }, (_, i) => {
      const t = i * 0.01;
      return `${t.toFixed(2)},${(5 * Math.cos(2 * Math.PI * 1.1 * t) * Math.exp(-0.2 * t)).toFixed(4)}`;
    });
    const good = `time,angle\n${rows.join('\n')}\n`;
    await page.setInputFiles('#bench-file', { name: 'free-swing.csv', mimeType: 'text/csv', buffer: Buffer.from(good) });
    await page.locator('.upload-button').click();
    await page.locator('.trace-label', { hasText: 'free-swing' }).waitFor();
    expect(await page.locator('.upload-error').count()).toBe(0);
    expect((await page.locator('tr.mat-mdc-row td.num').first().textContent())?.trim()).toBe('300');
    await page.getByRole('button', { name: 'Plot' }).click();
    await page.locator('qp-plot .scatterlayer .trace').first().waitFor({ timeout: 30_000 });
    await screenshot(page, 'bench-desktop');
  }, 120_000);

  it('lets the reviewer rerun r2 in the browser, see the same numbers and confirm', async () => {
    const page = await browser.newPage(DESKTOP);
    await signInAs(page, 'reviewer', `/cases/${caseId}/r/2/recheck`);
    await page.getByText('Amplitude raised to 9 mm').waitFor();
    await page.locator('.rerun-button').click();
    await expect.poll(() => page.locator('.run-state').allTextContents().then((t) => t.map((s) => s.trim())), { timeout: 90_000 }).toEqual(['same numbers, same digest']);
    await page.locator('.run-panel').first().click();
    await expect.poll(() => page.locator('qp-comparison-table tr.mismatch').count()).toBe(0);
    expect(await page.locator('qp-comparison-table tbody tr').count()).toBeGreaterThan(5);
    // Grouped and labelled: one summary line per run, the tolerance once, names and units as in the tabs.
    expect(await page.locator('.run-panel [data-testid="run-summary"]').first().textContent()).toMatch(/Motion\s+·\s+same digest\s+·\s+every number agrees/);
    expect(await page.locator('.run-panel qp-comparison-table .tolerance').count()).toBe(1);
    const labels = await page.locator('qp-comparison-table tbody th').allTextContents();
    expect(labels.map((l) => l.trim())).toContain('Largest slow deviation from upright');
    expect(labels.join(' ')).not.toMatch(/maxDeviation|slowFrequencyHz|finalTheta/);
    expect(await page.locator('qp-comparison-table tbody td').allTextContents()).toContainEqual(expect.stringMatching(/\d°$/));
    await page.getByLabel('Comment').fill('Reran motion here: identical digest.');
    // The server's own rerun decides whether Confirm is open; the page looks again until it has verified the run.
    await page.locator('.server-run.ok').waitFor({ timeout: 90_000 });
    await screenshot(page, 'recheck-desktop');
    await page.getByRole('button', { name: 'Confirm' }).click();
    await page.waitForURL(new RegExp(`/cases/${caseId}/r/2/history$`));
    await expect.poll(() => page.locator('.card-head qp-recheck-chip').first().textContent()).toContain('Confirmed');
  }, 180_000);

  it('delivered both notices to the local mail sink', async () => {
    const owner = await tokenOf('owner');
    const reviewer = demoAccount('reviewer').email;
    const analyst = demoAccount('analyst').email;
    type Mail = { to: string[] | string; subject: string };
    const received = async () => {
      const { body } = await api<{ items: Mail[] } | Mail[]>('/api/admin/mails', { token: owner });
      const mails = Array.isArray(body) ? body : body.items;
      return mails.map((m) => `${Array.isArray(m.to) ? m.to.join(',') : m.to} | ${m.subject}`);
    };
    await expect
      .poll(received, { timeout: 30_000, interval: 1000 })
      .toEqual(
        expect.arrayContaining([
          `${reviewer} | Recheck requested: ${CASE_TITLE} r2`,
          `${analyst} | Recheck confirmed: ${CASE_TITLE} r2`,
        ]),
      );

    const page = await browser.newPage(DESKTOP);
    await signInAs(page, 'owner', '/admin/mail');
    await expect.poll(() => page.locator('.mail').count(), { timeout: 20_000 }).toBeGreaterThanOrEqual(2);
    await screenshot(page, 'admin-mail-desktop');
    await page.setViewportSize(NARROW);
    await page.waitForTimeout(300);
    await screenshot(page, 'admin-mail-phone');
    await noSideScroll(page);
  }, 60_000);

  it('shows a visitor the case read-only through a case link, with reruns but no way to save', async () => {
    const analystPage = await browser.newPage(DESKTOP);
    await signInAs(analystPage, 'analyst', `/cases/${caseId}/r/2/history`);
    await analystPage.getByRole('button', { name: 'Case links' }).click();
    await analystPage.getByLabel('Expires after').fill('7');
    await analystPage.getByRole('button', { name: /Create link to r2/ }).click();
    visitorUrl = ((await analystPage.locator('.created .url').textContent()) ?? '').trim();
    expect(visitorUrl).toMatch(/\/links\/[A-Za-z0-9_-]{20,}$/);

    const visitor = await browser.newPage(DESKTOP);
    await visitor.goto(visitorUrl);
    await visitor.getByRole('heading', { name: `${CASE_TITLE} · r2` }).waitFor();
    expect(await visitor.getByText(`Shared by ${DEMO_LAB_NAME}`).count()).toBe(1);
    expect(await visitor.getByRole('button', { name: 'Save' }).count()).toBe(0);
    expect(await visitor.locator('qp-stored-runs-table .kind').allTextContents()).toEqual(['Motion']);
    // The stored outcome and the rig by name in user units, no internal keys.
    await visitor.locator('qp-outcome-card').waitFor();
    expect(await visitor.locator('qp-rig-schematic svg').count()).toBe(1);
    const visitorText = (await visitor.locator('main').textContent()) ?? '';
    expect(visitorText).toMatch(/holds upright|settles tilted|falls|tumbles|irregular/);
    expect(visitorText).toContain('Drive amplitude');
    expect(visitorText).not.toMatch(/start\.rate|damping\.viscousRatio|schemaVersion/);
    const reportHref = await visitor.getByTestId('visitor-report').getAttribute('href');
    const report = await fetch(`${server.baseUrl}${reportHref}`);
    expect(report.status).toBe(200);
    expect(report.headers.get('content-type')).toBe('application/pdf');
    expect(pdfText(Buffer.from(await report.arrayBuffer()))).toContain(CASE_TITLE);
    await visitor.locator('.rerun-button').click();
    await expect.poll(() => visitor.locator('.run-state').allTextContents().then((t) => t.map((s) => s.trim())), { timeout: 90_000 }).toEqual(['same numbers, same digest']);
    await screenshot(visitor, 'visitor-desktop');

    // Nothing the visitor holds lets them write: the token is no credential for the API.
    const token = visitorUrl.split('/links/')[1];
    const write = await api(`/api/cases/${caseId}/revisions`, { token, body: { baseRevision: 2, params: demoRigCase('shaker-tall-rod') } });
    expect(write.status).toBe(401);
  }, 180_000);

  it('fits phone screens: library, history, recheck and visitor pages', async () => {
    const analyst = await browser.newPage(NARROW);
    await signInAs(analyst, 'analyst', '/library');
    await analyst.getByRole('link', { name: CASE_TITLE }).waitFor();
    await screenshot(analyst, 'library-phone');
    await noSideScroll(analyst);
    await analyst.goto(`${server.baseUrl}/cases/${caseId}/r/2/history`);
    await analyst.locator('.diff-table tr.changed').first().waitFor();
    await screenshot(analyst, 'history-phone');
    await noSideScroll(analyst);
    await analyst.goto(`${server.baseUrl}/cases/${caseId}/r/2/bench`);
    await analyst.locator('.trace-label', { hasText: 'free-swing' }).waitFor();
    await screenshot(analyst, 'bench-phone');
    await noSideScroll(analyst);

    const reviewer = await browser.newPage(NARROW);
    await signInAs(reviewer, 'reviewer', `/cases/${caseId}/r/2/recheck`);
    await reviewer.locator('.rerun-button').click();
    await expect.poll(() => reviewer.locator('.run-state').allTextContents().then((t) => t.map((s) => s.trim())), { timeout: 90_000 }).toEqual(['same numbers, same digest']);
    await screenshot(reviewer, 'recheck-phone');
    await noSideScroll(reviewer);

    const visitor = await browser.newPage(NARROW);
    await visitor.goto(visitorUrl);
    await visitor.getByRole('heading', { name: `${CASE_TITLE} · r2` }).waitFor();
    await screenshot(visitor, 'visitor-phone');
    await noSideScroll(visitor);
  }, 240_000);

  it('shows a viewer no New case and the case view only, its fields at full contrast', async () => {
    for (const [name, size] of [['desktop', DESKTOP], ['phone', NARROW]] as const) {
      const page = await browser.newPage(size);
      await signInAs(page, 'viewer', '/library');
      await page.getByRole('link', { name: CASE_TITLE }).waitFor();
      expect(await page.getByRole('button', { name: 'New case' }).count()).toBe(0);
      if (name === 'phone') await page.getByRole('button', { name: 'Open navigation' }).click();
      const nav = page.getByRole('navigation', { name: 'Main' });
      await nav.getByRole('link', { name: 'Case library' }).waitFor();
      expect(await nav.getByRole('link', { name: 'New case' }).count()).toBe(0);
      await screenshot(page, `library-viewer-${name}`);

      await page.goto(`${server.baseUrl}/cases/${caseId}/r/2/rig`);
      const amplitude = page.locator('input[data-field="drive.amplitude"]');
      await expect.poll(() => amplitude.inputValue()).toBe('9');
      expect(await amplitude.isDisabled()).toBe(true);
      expect(await page.getByRole('button', { name: 'Save' }).count()).toBe(0);
      expect(await page.getByRole('button', { name: 'Load file' }).count()).toBe(0);
      expect(await page.getByTestId('preset-select').count()).toBe(0);
      await page.getByTestId('view-only').waitFor();
      // WCAG AA asks 4.5:1 for text; Material's disabled text (38 % opacity) measured 2.4:1.
      for (const selector of ['input[data-field="drive.amplitude"]', '[data-testid=body-kind] .mat-mdc-select-value-text']) {
        const { color, background } = await textAndBackground(page, selector);
        expect(contrastRatio(color, background), `${selector}: ${color} on ${background}`).toBeGreaterThanOrEqual(4.5);
      }
      await screenshot(page, `case-viewer-${name}`);

      await page.goto(`${server.baseUrl}/cases/new`);
      await page.getByTestId('cannot-create').waitFor();
      expect(await page.locator('input[data-field]').count()).toBe(0);
      await screenshot(page, `new-case-viewer-${name}`);
    }
  }, 120_000);

  it('shows a forged run as unreproduced in History and on the recheck page, in words', async () => {
    const analyst = await tokenOf('analyst');
    const params = demoRigCase('shaker-tall-rod');
    if (!params) throw new Error('demo rig missing');
    params.run.duration = 2;
    const saved = await api<{ number: number }>(`/api/cases/${caseId}/revisions`, { token: analyst, body: { baseRevision: 2, params, note: 'forged run' } });
    expect(saved.status).toBe(201);
    const rev = saved.body.number;
    const honest = engineRun(params, { kind: 'motion' });
    const forged = { ...honest, summary: { ...honest.summary, maxDeviation: (honest.summary['maxDeviation'] as number) * 2 } };
    expect((await api(`/api/cases/${caseId}/revisions/${rev}/runs`, { token: analyst, body: forged })).status).toBe(201);

    const page = await browser.newPage(DESKTOP);
    await signInAs(page, 'analyst', `/cases/${caseId}/r/${rev}/history`);
    const check = page.locator('qp-stored-runs-table td.check');
    await expect.poll(async () => { await page.reload(); await check.first().waitFor(); return (await check.first().textContent())?.trim(); }, { timeout: 60_000, interval: 2_000 })
      .toBe('Unreproduced: 1 number differs');
    await screenshot(page, 'history-unreproduced-desktop');

    await page.goto(`${server.baseUrl}/cases/${caseId}/r/${rev}/recheck`);
    await page.locator('.server-run.bad').waitFor();
    const labels = await page.locator('.server-run qp-comparison-table tbody th').allTextContents();
    expect(labels.map((l) => l.trim())).toEqual(['Largest slow deviation from upright']);
    await screenshot(page, 'recheck-unreproduced-desktop');
  }, 120_000);

  it('tells a visitor when a link was revoked, and when it never existed', async () => {
    const analyst = await tokenOf('analyst');
    const { body } = await api<{ items: { id: string; state: string }[] }>(`/api/cases/${caseId}/links`, { token: analyst });
    const active = body.items.find((l) => l.state === 'active');
    if (!active) throw new Error('no active link');
    expect((await api(`/api/cases/${caseId}/links/${active.id}`, { token: analyst, method: 'DELETE' })).status).toBeLessThan(300);

    const visitor = await browser.newPage(DESKTOP);
    await visitor.goto(visitorUrl);
    await visitor.getByText('This case link has expired or was revoked.').waitFor();
    await screenshot(visitor, 'visitor-revoked-desktop');
    await visitor.goto(`${server.baseUrl}/links/not-a-real-token-at-all-0123456789`);
    await visitor.getByText('This case link does not exist.').waitFor();
  }, 60_000);
});
