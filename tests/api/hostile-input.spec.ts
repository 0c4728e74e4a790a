import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CaseRecord } from '../../server/db/models';
import { MAX_JSON_DEPTH } from '../../server/middleware/json-body';
import { errorOf, startApi, type TestApi } from './support';
import { client, createCaseVia, labWithEveryRole, motionRun, quickCase, type LabFixture } from './library-support';

let api: TestApi;
let fx: LabFixture;
const as = (who: keyof LabFixture['tokens']) => client(api.app, fx.tokens[who]);

beforeAll(async () => {
  api = startApi();
  fx = await labWithEveryRole(api, 'hostile');
});
afterAll(() => api.close());

const NUL = '\u0000';
const LONE_HIGH = '\uD800';
const LONE_LOW = '\uDC00';

describe('text PostgreSQL cannot store', () => {
  it.each([
    ['a NUL in the title', { title: `Rig${NUL}A`, tags: [] }, 'title'],
    ['a NUL in a tag', { title: 'Rig', tags: ['ok', `cr${NUL}ank`] }, 'tags.1'],
    ['a lone high surrogate in a tag', { title: 'Rig', tags: [`x${LONE_HIGH}`] }, 'tags.0'],
    ['a lone low surrogate in the note', { title: 'Rig', tags: [], note: `${LONE_LOW}y` }, 'note'],
  ])('refuses %s on create with 422 invalid_text naming the field, and writes nothing', async (_what, body, field) => {
    const before = await CaseRecord.count({ where: { labId: fx.lab.id } });
    const res = await as('analyst').post(`/api/labs/${fx.lab.id}/cases`, { ...body, params: quickCase() });
    expect(res.status).toBe(422);
    expect(errorOf(res)).toMatchObject({ code: 'invalid_text', field });
    expect(await CaseRecord.count({ where: { labId: fx.lab.id } })).toBe(before);
  });

  it('keeps text with paired surrogates (emoji) and other control characters', async () => {
    const res = await as('analyst').post(`/api/labs/${fx.lab.id}/cases`, { title: 'Rig 🎯 A\u0001', tags: ['🎯'], params: quickCase() });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ title: 'Rig 🎯 A\u0001', tags: ['🎯'] });
  });

  it('refuses a NUL on rename and retag, and in a comment, with 422', async () => {
    const id = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: 'Rename me' });
    const rename = await as('analyst').patch(`/api/cases/${id}`, { title: `New${NUL}` });
    expect(rename.status).toBe(422);
    expect(errorOf(rename)).toMatchObject({ code: 'invalid_text', field: 'title' });
    const retag = await as('analyst').patch(`/api/cases/${id}`, { tags: [`${LONE_HIGH}`] });
    expect(errorOf(retag)).toMatchObject({ code: 'invalid_text', field: 'tags.0' });
    const comment = await as('reviewer').post(`/api/cases/${id}/revisions/1/comments`, { body: `see${NUL}` });
    expect(comment.status).toBe(422);
    expect(errorOf(comment).field).toBe('body');
    const after = await as('viewer').get(`/api/cases/${id}`);
    expect(after.body.title).toBe('Rename me');
  });

  it('refuses a NUL in an object key inside the case parameters or run settings', async () => {
    const id = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: 'Keys' });
    const record = motionRun(quickCase());
    const res = await as('analyst').post(`/api/cases/${id}/revisions/1/runs`, { ...record, settings: { ...record.settings, [`x${NUL}`]: 1 } });
    expect(res.status).toBe(422);
    expect(errorOf(res)).toMatchObject({ code: 'invalid_text', field: `settings.x${NUL}` });
  });

  it('refuses a NUL in a multipart text field (bench trace label) with 422', async () => {
    const id = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: 'Trace label' });
    const res = await request(api.app)
      .post(`/api/cases/${id}/bench-traces`)
      .set('Authorization', `Bearer ${fx.tokens.analyst}`)
      .field('label', `swing${NUL}`)
      .attach('file', Buffer.from('time_s,angle_deg\n0,1\n0.01,0.9\n'), { filename: 'swing.csv', contentType: 'text/csv' });
    expect(res.status).toBe(422);
    expect(errorOf(res)).toMatchObject({ code: 'invalid_text', field: 'label' });
  });

  it('refuses a NUL in a query string (search) with 422, not 500', async () => {
    const res = await as('viewer').get(`/api/labs/${fx.lab.id}/cases?search=a%00b`);
    expect(res.status).toBe(422);
    expect(errorOf(res)).toMatchObject({ code: 'invalid_text', field: 'search' });
  });
});

describe('deeply nested bodies', () => {
  it('refuses a 100 000-deep array in run settings with 400 too_deep', async () => {
    const id = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: 'Deep' });
    const record = JSON.stringify(motionRun(quickCase()));
    const depth = 100_000;
    const body = record.replace('"settings":{', `"settings":{"deep":${'['.repeat(depth)}${']'.repeat(depth)},`);
    const res = await request(api.app)
      .post(`/api/cases/${id}/revisions/1/runs`)
      .set('Authorization', `Bearer ${fx.tokens.analyst}`)
      .set('Content-Type', 'application/json')
      .send(body);
    expect(res.status).toBe(400);
    expect(errorOf(res).code).toBe('too_deep');
  });

  it(`accepts nesting up to ${MAX_JSON_DEPTH} levels and refuses one more`, async () => {
    const nested = (levels: number) => `${'['.repeat(levels)}${']'.repeat(levels)}`;
    const post = (body: string) =>
      request(api.app).post('/api/auth/sign-in').set('Content-Type', 'application/json').send(body);
    // The body object is level 1, so the array may add MAX_JSON_DEPTH - 1 levels.
    const atLimit = await post(`{"email":${nested(MAX_JSON_DEPTH - 1)}}`);
    expect(errorOf(atLimit)).toMatchObject({ code: 'invalid_field', field: 'email' });
    const over = await post(`{"email":${nested(MAX_JSON_DEPTH)}}`);
    expect(over.status).toBe(400);
    expect(errorOf(over).code).toBe('too_deep');
  });
});
