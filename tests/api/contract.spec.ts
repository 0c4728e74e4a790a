/**
 * The reply contract: with `checkResponses` (on in every API test through startApi) a reply that does not parse
 * against its route's schema fails the request loudly; without it (production) the check never runs.
 */
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '../../server/app';
import { Revision, Run } from '../../server/db/models';
import { errorOf, startApi, type TestApi } from './support';
import { client, createCaseVia, labWithEveryRole, type LabFixture } from './library-support';

let api: TestApi;
let fx: LabFixture;
let caseId: string;

beforeAll(async () => {
  api = startApi();
  fx = await labWithEveryRole(api, 'contract');
  caseId = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: 'Contract' });
  // A run whose summary holds a nested object: the contract allows only scalars there.
  const revision = await Revision.findOne({ where: { caseId, number: 1 } });
  await Run.create({
    revisionId: revision?.id ?? '',
    kind: 'motion',
    settings: { kind: 'motion' },
    summary: { outcome: { nested: true } } as unknown as Record<string, number>,
    resultDigest: 'a'.repeat(64),
    engineVersion: 'test',
    authorId: fx.people.analyst.id,
  });
});
afterAll(() => api.close());

describe('reply contract', () => {
  it('fails a reply that does not match its route schema with 500 response_contract naming the path', async () => {
    const res = await client(api.app, fx.tokens.viewer).get(`/api/cases/${caseId}/revisions/1`);
    expect(res.status).toBe(500);
    expect(errorOf(res)).toMatchObject({ code: 'response_contract', message: expect.stringContaining('runs.0.summary.outcome') });
  });

  it('lets a matching reply of the same app through', async () => {
    const res = await client(api.app, fx.tokens.viewer).get(`/api/cases/${caseId}`);
    expect(res.status).toBe(200);
  });

  it('never checks without checkResponses (production)', async () => {
    const plain = createApp({ config: api.config, sequelize: api.sequelize, serveClient: false });
    const res = await request(plain).get(`/api/cases/${caseId}/revisions/1`).set('Authorization', `Bearer ${fx.tokens.viewer}`);
    expect(res.status).toBe(200);
    expect(res.body.runs[0].summary).toEqual({ outcome: { nested: true } });
  });
});
