/**
 * The case report routes: the PDF of a revision for lab members (any role) and through a case link (no sign-in),
 * read back with pdftotext.
 */
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CAUTION_DEFERRAL, CAUTION_NOTES } from '../../shared/case/caution';
import { chainLinkWords, formatFrequency, formatLength, formatPercent } from '../../shared/case/display';
import { demoRigCase } from '../../shared/case/templates';
import { computeRun, makeRunRecord, type RunRecord } from '../../shared/engine/run-record';
import { pdfText } from '../support/pdf-text';
import { errorOf, startApi, type TestApi } from './support';
import { ROLES, client, createCaseVia, labWithEveryRole, motionRun, quickCase, type LabFixture } from './library-support';

let api: TestApi;
let fx: LabFixture;
let caseId: string;
let margins: RunRecord;
const params = quickCase();
const TITLE = 'Report rig: rod on a sine drive';
const as = (who: keyof LabFixture['tokens']) => client(api.app, fx.tokens[who]);

/** A GET whose body arrives as bytes whatever its type. */
const pdfGet = (url: string, token?: string) => {
  const req = request(api.app).get(url).buffer(true).responseType('blob');
  return token ? req.set('Authorization', `Bearer ${token}`) : req;
};

beforeAll(async () => {
  api = startApi();
  fx = await labWithEveryRole(api, 'report');
  caseId = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: TITLE, params });
  margins = makeRunRecord(params, { kind: 'margins', relTolerance: 1e-6 }, computeRun(params, { kind: 'margins', relTolerance: 1e-6 }));
  expect((await as('analyst').post(`/api/cases/${caseId}/revisions/1/runs`, motionRun(params))).status).toBe(201);
  expect((await as('analyst').post(`/api/cases/${caseId}/revisions/1/runs`, margins)).status).toBe(201);
});
afterAll(() => api.close());

describe('GET /api/cases/:caseId/revisions/:rev/report.pdf', () => {
  it('gives a PDF download holding the title, the margin, the limits in mm and Hz and the caution', async () => {
    const res = await pdfGet(`/api/cases/${caseId}/revisions/1/report.pdf`, fx.tokens.viewer);
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toBe('application/pdf');
    expect(res.headers['content-disposition']).toBe('attachment; filename=report-rig-rod-on-a-sine-drive-r1-report.pdf');
    expect(res.headers['cache-control']).toBe('private, no-store');
    const pdf = res.body as Buffer;
    expect(pdf.subarray(0, 5).toString()).toBe('%PDF-');
    const text = pdfText(pdf);
    expect(text).toContain(TITLE);
    expect(text).toContain(`Case report · ${fx.lab.name} · r1`);
    expect(text).toContain(`Margin of the upright ${formatPercent(margins.summary['marginPercent'] as number)}`);
    expect(text).toContain(`Lower amplitude limit ${formatLength(margins.summary['amplitudeLower'] as number, 6)}`);
    expect(text).toContain(`Lower frequency limit ${formatFrequency(margins.summary['frequencyLower'] as number, 6)}`);
    expect(text).toContain(margins.resultDigest);
    for (const line of [...CAUTION_NOTES, CAUTION_DEFERRAL]) expect(text).toContain(line);
  });

  it('describes a chain link by link, with its margin', async () => {
    const demo = demoRigCase('two-link-shaker');
    if (!demo || demo.body.kind !== 'chain') throw new Error('two-link demo missing');
    const chain = { ...demo, run: { ...demo.run, duration: 0.5, outputPoints: 200 } };
    const id = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: 'Report: two links', params: chain });
    const run = makeRunRecord(chain, { kind: 'margins', relTolerance: 1e-6 }, computeRun(chain, { kind: 'margins', relTolerance: 1e-6 }));
    expect((await as('analyst').post(`/api/cases/${id}/revisions/1/runs`, run)).status).toBe(201);
    const res = await pdfGet(`/api/cases/${id}/revisions/1/report.pdf`, fx.tokens.viewer);
    expect(res.status).toBe(200);
    const text = pdfText(res.body as Buffer).replace(/\s+/g, ' ');
    expect(text).toContain('Chain of 2 links, hinged end to end');
    for (const [i, link] of demo.body.links.entries()) expect(text).toContain(chainLinkWords(link, i).replace(/^Link \d+: /, ''));
    expect(text).toContain(`Margin of the upright ${formatPercent(run.summary['marginPercent'] as number)}`);
  });

  it.each(ROLES)('is open to a %s of the lab', async (who) => {
    const res = await pdfGet(`/api/cases/${caseId}/revisions/1/report.pdf`, fx.tokens[who]);
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toBe('application/pdf');
  });

  it('is 404 outside the lab, 401 without a token, 404 for a revision that does not exist', async () => {
    const outsider = await as('outsider').get(`/api/cases/${caseId}/revisions/1/report.pdf`);
    expect(outsider.status).toBe(404);
    expect(errorOf(outsider).code).toBe('case_not_found');
    expect((await request(api.app).get(`/api/cases/${caseId}/revisions/1/report.pdf`)).status).toBe(401);
    const missing = await as('viewer').get(`/api/cases/${caseId}/revisions/9/report.pdf`);
    expect(missing.status).toBe(404);
    expect(errorOf(missing).code).toBe('revision_not_found');
    const bad = await as('viewer').get(`/api/cases/${caseId}/revisions/zero/report.pdf`);
    expect(bad.status).toBe(400);
    expect(errorOf(bad).field).toBe('rev');
  });
});

describe('GET /api/links/:token/report.pdf', () => {
  it('gives the linked revision as a PDF without signing in; 410 once revoked, 404 for an unknown token', async () => {
    const link = await as('analyst').post(`/api/cases/${caseId}/links`, { revision: 1, expiresInDays: 3 });
    expect(link.status).toBe(201);
    const res = await pdfGet(`/api/links/${link.body.token}/report.pdf`);
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toBe('application/pdf');
    expect(res.headers['referrer-policy']).toBe('no-referrer');
    const text = pdfText(res.body as Buffer);
    expect(text).toContain(TITLE);
    expect(text).toContain(`Lower amplitude limit ${formatLength(margins.summary['amplitudeLower'] as number, 6)}`);
    expect(text).toContain(CAUTION_DEFERRAL);

    expect((await as('analyst').delete(`/api/cases/${caseId}/links/${link.body.id}`)).status).toBe(200);
    const revoked = await request(api.app).get(`/api/links/${link.body.token}/report.pdf`);
    expect(revoked.status).toBe(410);
    expect(errorOf(revoked).code).toBe('link_revoked');
    const unknown = await request(api.app).get(`/api/links/${'x'.repeat(43)}/report.pdf`);
    expect(unknown.status).toBe(404);
    expect(errorOf(unknown).code).toBe('link_not_found');
    const malformed = await request(api.app).get('/api/links/short/report.pdf');
    expect(malformed.status).toBe(404);
    expect(errorOf(malformed).code).toBe('link_not_found');
  });
});
