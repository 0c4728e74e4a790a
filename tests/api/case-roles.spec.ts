/**
 * Every case-library route against every role: the allowed ones get their success status, a lab member below the
 * needed role gets 403, a person outside the lab gets 404 on case routes (403 on lab routes, as for members),
 * and no token gets 401.
 */
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { BenchTrace, CaseLink, type LabRole } from '../../server/db/models';
import { createUser, errorOf, startApi, tokenFor, type TestApi } from './support';
import { ROLES, client, createCaseVia, labWithEveryRole, motionRun, quickCase, type LabFixture, type Who } from './library-support';

let api: TestApi;
let fx: LabFixture;
let caseId: string;
let runId: string;
let adminToken: string;
const params = quickCase();

interface Call {
  method: 'get' | 'post' | 'patch' | 'delete';
  url: string;
  body?: object;
  upload?: boolean;
}

interface RouteRow {
  name: string;
  allowed: LabRole[];
  success: number;
  /** on lab routes a non-member gets the foundation's 403 */
  outsider: 403 | 404;
  call: (who: Who | 'nobody') => Promise<Call>;
}

async function latest(): Promise<number> {
  const res = await client(api.app, fx.tokens.owner).get(`/api/cases/${caseId}`);
  return res.body.latestRevision as number;
}

/** A new revision by the analyst with a verified run, awaiting a recheck by `reviewer`; returns its number. */
async function awaitingRecheck(reviewer: 'owner' | 'reviewer'): Promise<number> {
  const analyst = client(api.app, fx.tokens.analyst);
  const saved = await analyst.post(`/api/cases/${caseId}/revisions`, { baseRevision: await latest(), params });
  const rev = saved.body.number as number;
  await analyst.post(`/api/cases/${caseId}/revisions/${rev}/runs`, motionRun(params));
  await api.verifier.whenIdle();
  await analyst.post(`/api/cases/${caseId}/revisions/${rev}/recheck-request`, { reviewerId: fx.people[reviewer].id });
  return rev;
}

async function freshLink(): Promise<string> {
  const res = await client(api.app, fx.tokens.owner).post(`/api/cases/${caseId}/links`, { revision: 1, expiresInDays: 1 });
  return res.body.id as string;
}

async function freshTrace(): Promise<string> {
  const trace = await BenchTrace.create({
    caseId,
    label: 'matrix',
    fileName: 'matrix.csv',
    sizeBytes: 12,
    rows: 2,
    columns: ['time', 'angle'],
    angleUnit: 'deg',
    duration: 0.1,
    series: { time: [0, 0.1], angle: [0, 0.01] },
    csv: '0,0\n0.1,0.5\n',
    authorId: fx.people.owner.id,
  });
  return trace.id;
}

const ALL = ROLES;
const AUTHORS: LabRole[] = ['owner', 'analyst'];
const ROWS: RouteRow[] = [
  { name: 'GET lab cases', allowed: ALL, success: 200, outsider: 403, call: async () => ({ method: 'get', url: `/api/labs/${fx.lab.id}/cases` }) },
  {
    name: 'POST lab cases',
    allowed: AUTHORS,
    success: 201,
    outsider: 403,
    call: async () => ({ method: 'post', url: `/api/labs/${fx.lab.id}/cases`, body: { title: 'Matrix new', params } }),
  },
  { name: 'GET case', allowed: ALL, success: 200, outsider: 404, call: async () => ({ method: 'get', url: `/api/cases/${caseId}` }) },
  { name: 'PATCH case', allowed: AUTHORS, success: 200, outsider: 404, call: async () => ({ method: 'patch', url: `/api/cases/${caseId}`, body: { tags: ['matrix'] } }) },
  { name: 'POST duplicate', allowed: AUTHORS, success: 201, outsider: 404, call: async () => ({ method: 'post', url: `/api/cases/${caseId}/duplicate`, body: {} }) },
  { name: 'GET audit', allowed: ALL, success: 200, outsider: 404, call: async () => ({ method: 'get', url: `/api/cases/${caseId}/audit` }) },
  {
    name: 'POST revision',
    allowed: AUTHORS,
    success: 201,
    outsider: 404,
    call: async () => ({ method: 'post', url: `/api/cases/${caseId}/revisions`, body: { baseRevision: await latest(), params } }),
  },
  { name: 'GET revision', allowed: ALL, success: 200, outsider: 404, call: async () => ({ method: 'get', url: `/api/cases/${caseId}/revisions/1` }) },
  { name: 'GET case report', allowed: ALL, success: 200, outsider: 404, call: async () => ({ method: 'get', url: `/api/cases/${caseId}/revisions/1/report.pdf` }) },
  { name: 'POST run', allowed: AUTHORS, success: 201, outsider: 404, call: async () => ({ method: 'post', url: `/api/cases/${caseId}/revisions/1/runs`, body: motionRun(params) }) },
  { name: 'GET comments', allowed: ALL, success: 200, outsider: 404, call: async () => ({ method: 'get', url: `/api/cases/${caseId}/revisions/1/comments` }) },
  {
    name: 'POST comment',
    allowed: ['owner', 'analyst', 'reviewer'],
    success: 201,
    outsider: 404,
    call: async () => ({ method: 'post', url: `/api/cases/${caseId}/revisions/1/comments`, body: { body: 'matrix note' } }),
  },
  {
    name: 'POST recheck-request',
    allowed: AUTHORS,
    success: 200,
    outsider: 404,
    call: async () => ({ method: 'post', url: `/api/cases/${caseId}/revisions/1/recheck-request`, body: { reviewerId: fx.people.reviewer.id } }),
  },
  {
    name: 'POST recheck',
    allowed: ['owner', 'reviewer'],
    success: 201,
    outsider: 404,
    call: async (who) => ({
      method: 'post',
      url: `/api/cases/${caseId}/revisions/${await awaitingRecheck(who === 'owner' ? 'owner' : 'reviewer')}/rechecks`,
      body: { verdict: 'disputed', comment: 'matrix dispute' },
    }),
  },
  {
    name: 'GET run result',
    allowed: ALL,
    success: 200,
    outsider: 404,
    call: async () => ({ method: 'get', url: `/api/cases/${caseId}/revisions/1/runs/${runId}/result` }),
  },
  { name: 'GET links', allowed: ALL, success: 200, outsider: 404, call: async () => ({ method: 'get', url: `/api/cases/${caseId}/links` }) },
  { name: 'POST link', allowed: AUTHORS, success: 201, outsider: 404, call: async () => ({ method: 'post', url: `/api/cases/${caseId}/links`, body: { revision: 1, expiresInDays: 2 } }) },
  { name: 'DELETE link', allowed: AUTHORS, success: 200, outsider: 404, call: async () => ({ method: 'delete', url: `/api/cases/${caseId}/links/${await freshLink()}` }) },
  { name: 'GET bench traces', allowed: ALL, success: 200, outsider: 404, call: async () => ({ method: 'get', url: `/api/cases/${caseId}/bench-traces` }) },
  { name: 'POST bench trace', allowed: AUTHORS, success: 201, outsider: 404, call: async () => ({ method: 'post', url: `/api/cases/${caseId}/bench-traces`, upload: true }) },
  { name: 'GET bench trace', allowed: ALL, success: 200, outsider: 404, call: async () => ({ method: 'get', url: `/api/cases/${caseId}/bench-traces/${await freshTrace()}` }) },
  {
    name: 'GET bench trace download',
    allowed: ALL,
    success: 200,
    outsider: 404,
    call: async () => ({ method: 'get', url: `/api/cases/${caseId}/bench-traces/${await freshTrace()}/download` }),
  },
  { name: 'DELETE bench trace', allowed: AUTHORS, success: 204, outsider: 404, call: async () => ({ method: 'delete', url: `/api/cases/${caseId}/bench-traces/${await freshTrace()}` }) },
];

function send(token: string | undefined, call: Call) {
  let req = request(api.app)[call.method](call.url);
  if (token) req = req.set('Authorization', `Bearer ${token}`);
  if (call.upload) return req.attach('file', Buffer.from('time,angle\n0,1\n0.01,0.9\n'), { filename: 'm.csv', contentType: 'text/csv' });
  return call.body ? req.send(call.body) : req;
}

beforeAll(async () => {
  api = startApi();
  fx = await labWithEveryRole(api, 'matrix');
  caseId = await createCaseVia(api.app, fx.tokens.owner, fx.lab.id, { title: 'Matrix case', params });
  const run = await client(api.app, fx.tokens.owner).post(`/api/cases/${caseId}/revisions/1/runs`, motionRun(params));
  runId = run.body.id;
  await api.verifier.whenIdle();
  adminToken = await tokenFor(api.app, await createUser('site-admin', { isSiteAdmin: true }));
});
afterAll(() => api.close());

const cells = ROWS.flatMap((row) => [...ROLES, 'outsider' as const].map((who) => ({ row, who })));

describe('role matrix of the case library', () => {
  it.each(cells.map(({ row, who }) => [row.name, who, row] as const))('%s as %s', async (_name, who: Who, row) => {
    const res = await send(fx.tokens[who], await row.call(who));
    if (who !== 'outsider' && row.allowed.includes(who)) {
      expect(res.status, JSON.stringify(res.body)).toBe(row.success);
    } else if (who === 'outsider') {
      expect(res.status).toBe(row.outsider);
      expect(errorOf(res).code).toBe(row.outsider === 404 ? 'case_not_found' : 'not_a_member');
    } else {
      expect(res.status).toBe(403);
      expect(errorOf(res).code).toBe('role_too_low');
    }
  });

  it.each(ROWS.map((row) => [row.name, row] as const))('%s without a token is 401', async (_name, row) => {
    const res = await send(undefined, await row.call('nobody'));
    expect(res.status).toBe(401);
  });

  it('refused writes left no trace: only allowed roles appear in the audit trail', async () => {
    const res = await client(api.app, fx.tokens.owner).get(`/api/cases/${caseId}/audit?pageSize=200`);
    const actors = new Set(res.body.items.map((e: { actor: { id: string } | null }) => e.actor?.id));
    expect(actors.has(fx.people.viewer.id)).toBe(false);
    expect(actors.has(fx.people.outsider.id)).toBe(false);
    expect(await CaseLink.count({ where: { caseId, createdById: fx.people.viewer.id } })).toBe(0);
  });
});

describe('site admin routes', () => {
  it.each(['/api/admin/outbox', '/api/admin/mails'])('%s: site admin 200, lab owner 403, no token 401', async (url) => {
    expect((await client(api.app, adminToken).get(url)).status).toBe(200);
    const owner = await client(api.app, fx.tokens.owner).get(url);
    expect(owner.status).toBe(403);
    expect(errorOf(owner).code).toBe('not_site_admin');
    expect((await request(api.app).get(url)).status).toBe(401);
  });
});
