import { createHash } from 'node:crypto';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { caseDigest } from '../../shared/case';
import { decodeRunResult } from '../../shared/engine/result-codec';
import { CaseLink } from '../../server/db/models';
import { errorOf, startApi, type TestApi } from './support';
import { client, createCaseVia, labWithEveryRole, motionRun, quickCase, type LabFixture } from './library-support';

let api: TestApi;
let fx: LabFixture;
let caseId: string;
const p1 = quickCase();
const p2 = quickCase((p) => (p.drive.frequency = 44));
const as = (who: keyof LabFixture['tokens']) => client(api.app, fx.tokens[who]);

beforeAll(async () => {
  api = startApi();
  fx = await labWithEveryRole(api, 'links');
  caseId = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: 'Shared rig', params: p1 });
  await as('analyst').post(`/api/cases/${caseId}/revisions/1/runs`, motionRun(p1));
  await as('reviewer').post(`/api/cases/${caseId}/revisions/1/comments`, { body: 'internal remark' });
  await as('analyst').post(`/api/cases/${caseId}/revisions`, { baseRevision: 1, params: p2 });
});
afterAll(() => api.close());

async function makeLink(revision = 1, expiresInDays = 7): Promise<{ id: string; token: string; url: string; expiresAt: string }> {
  const res = await as('analyst').post(`/api/cases/${caseId}/links`, { revision, expiresInDays });
  expect(res.status).toBe(201);
  return res.body;
}

describe('case links', () => {
  it('gives a random token once, stores only its SHA-256, and lists links without tokens', async () => {
    const before = Date.now();
    const link = await makeLink(1, 7);
    expect(link.token).toMatch(/^[A-Za-z0-9_-]{43}$/);
    expect(link.url).toBe(`${api.config.publicUrl}/links/${link.token}`);
    const days = (Date.parse(link.expiresAt) - before) / 86_400_000;
    expect(days).toBeGreaterThan(6.99);
    expect(days).toBeLessThan(7.01);
    const stored = await CaseLink.findByPk(link.id);
    expect(stored?.tokenHash).toBe(createHash('sha256').update(link.token).digest('hex'));
    const list = await as('viewer').get(`/api/cases/${caseId}/links`);
    expect(list.status).toBe(200);
    const item = list.body.items.find((l: { id: string }) => l.id === link.id);
    expect(item).toMatchObject({ revision: 1, state: 'active', revokedAt: null, createdBy: { id: fx.people.analyst.id } });
    expect(JSON.stringify(list.body)).not.toContain(link.token);
  });

  it('shows the exact revision to anyone with the token, without comments and without signing in', async () => {
    const link = await makeLink(1);
    const res = await request(api.app).get(`/api/links/${link.token}`);
    expect(res.status).toBe(200);
    expect(res.headers['cache-control']).toBe('no-store');
    expect(res.body).toMatchObject({ caseTitle: 'Shared rig', labName: fx.lab.name, expiresAt: link.expiresAt });
    expect(res.body.revision).toMatchObject({ number: 1, paramsDigest: caseDigest(p1), params: p1 });
    expect(res.body.revision.runs).toHaveLength(1);
    expect(res.body.revision.comments).toBeUndefined();
    expect(JSON.stringify(res.body)).not.toContain('internal remark');
    const second = await makeLink(2);
    const r2 = await request(api.app).get(`/api/links/${second.token}`);
    expect(r2.body.revision).toMatchObject({ number: 2, paramsDigest: caseDigest(p2) });
  });

  it('answers 404 for an unknown token and 410 once expired', async () => {
    const unknown = await request(api.app).get(`/api/links/${'x'.repeat(43)}`);
    expect(unknown.status).toBe(404);
    expect(errorOf(unknown).code).toBe('link_not_found');
    const garbage = await request(api.app).get('/api/links/%2E%2E');
    expect(garbage.status).toBe(404);
    const link = await makeLink(1);
    await CaseLink.update({ expiresAt: new Date(Date.now() - 60_000) }, { where: { id: link.id } });
    const expired = await request(api.app).get(`/api/links/${link.token}`);
    expect(expired.status).toBe(410);
    expect(errorOf(expired)).toMatchObject({ code: 'link_expired', message: expect.stringMatching(/expired/) });
    const list = await as('owner').get(`/api/cases/${caseId}/links?pageSize=200`);
    expect(list.body.items.find((l: { id: string }) => l.id === link.id).state).toBe('expired');
  });

  it('serves a stored run\'s result through the token, signed out, under the link\'s 404 and 410 rules', async () => {
    const link = await makeLink(1);
    const shared = await request(api.app).get(`/api/links/${link.token}`);
    const runId = shared.body.revision.runs[0].id as string;
    // The server reruns the run off the request path; its result appears once verified.
    let res = await request(api.app).get(`/api/links/${link.token}/runs/${runId}/result`).buffer(true);
    for (let i = 0; res.status === 409 && i < 600; i++) {
      await new Promise((resolve) => setTimeout(resolve, 100));
      res = await request(api.app).get(`/api/links/${link.token}/runs/${runId}/result`).buffer(true);
    }
    expect(res.status).toBe(200);
    expect(res.headers['content-encoding']).toBe('gzip');
    expect(res.headers['cache-control']).toBe('no-store');
    expect(res.headers['x-verification']).toBe('verified');
    expect(decodeRunResult(res.text).kind).toBe('motion');

    const otherRun = await request(api.app).get(`/api/links/${link.token}/runs/00000000-0000-4000-8000-000000000000/result`);
    expect(otherRun.status).toBe(404);
    expect(errorOf(otherRun).code).toBe('stored_run_not_found');
    const badRun = await request(api.app).get(`/api/links/${link.token}/runs/not-a-uuid/result`);
    expect(badRun.status).toBe(400);
    const unknown = await request(api.app).get(`/api/links/${'x'.repeat(43)}/runs/${runId}/result`);
    expect(unknown.status).toBe(404);
    expect(errorOf(unknown).code).toBe('link_not_found');
    // A run of another revision is not reachable through this revision's link.
    const second = await makeLink(2);
    const elsewhere = await request(api.app).get(`/api/links/${second.token}/runs/${runId}/result`);
    expect(elsewhere.status).toBe(404);
    await as('analyst').delete(`/api/cases/${caseId}/links/${link.id}`);
    const revoked = await request(api.app).get(`/api/links/${link.token}/runs/${runId}/result`);
    expect(revoked.status).toBe(410);
    expect(errorOf(revoked).code).toBe('link_revoked');
  });

  it('stops working once revoked (410), and revoking twice is harmless', async () => {
    const link = await makeLink(1);
    expect((await request(api.app).get(`/api/links/${link.token}`)).status).toBe(200);
    const revoked = await as('owner').delete(`/api/cases/${caseId}/links/${link.id}`);
    expect(revoked.status).toBe(200);
    expect(revoked.body).toMatchObject({ id: link.id, state: 'revoked' });
    expect(Date.parse(revoked.body.revokedAt)).toBeLessThanOrEqual(Date.now());
    const gone = await request(api.app).get(`/api/links/${link.token}`);
    expect(gone.status).toBe(410);
    expect(errorOf(gone).code).toBe('link_revoked');
    const again = await as('owner').delete(`/api/cases/${caseId}/links/${link.id}`);
    expect(again.status).toBe(200);
    expect(again.body.revokedAt).toBe(revoked.body.revokedAt);
    const otherCase = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: 'Elsewhere' });
    const wrongCase = await as('owner').delete(`/api/cases/${otherCase}/links/${link.id}`);
    expect(wrongCase.status).toBe(404);
    expect(errorOf(wrongCase).code).toBe('link_not_found');
  });

  it('is read-only: no route accepts a link token for writing', async () => {
    const link = await makeLink(1);
    for (const method of ['post', 'put', 'patch', 'delete'] as const) {
      const res = await request(api.app)[method](`/api/links/${link.token}`).send({ title: 'hijack' });
      expect(res.status, method).toBe(404);
      expect(errorOf(res).code).toBe('not_found');
    }
    const asBearer = await request(api.app)
      .post(`/api/cases/${caseId}/revisions`)
      .set('Authorization', `Bearer ${link.token}`)
      .send({ baseRevision: 2, params: p1 });
    expect(asBearer.status).toBe(401);
    const comment = await request(api.app)
      .post(`/api/cases/${caseId}/revisions/1/comments`)
      .set('Authorization', `Bearer ${link.token}`)
      .send({ body: 'from outside' });
    expect(comment.status).toBe(401);
    expect((await as('owner').get(`/api/cases/${caseId}`)).body.latestRevision).toBe(2);
  });

  it('refuses a link to a revision that does not exist and a bad expiry', async () => {
    const noRev = await as('analyst').post(`/api/cases/${caseId}/links`, { revision: 9, expiresInDays: 3 });
    expect(noRev.status).toBe(404);
    expect(errorOf(noRev).code).toBe('revision_not_found');
    const tooLong = await as('analyst').post(`/api/cases/${caseId}/links`, { revision: 1, expiresInDays: 1000 });
    expect(tooLong.status).toBe(400);
    expect(errorOf(tooLong).field).toBe('expiresInDays');
  });
});
