import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { caseDigest, demoRigCase, type CaseParams } from '../../shared/case';
import { MAX_SWEEP_STEPS } from '../../shared/engine/run-kinds';
import { AuditEvent, CaseRecord, Revision, Run } from '../../server/db/models';
import { errorOf, startApi, type TestApi } from './support';
import { client, createCaseVia, labWithEveryRole, motionRun, quickCase, type LabFixture } from './library-support';

let api: TestApi;
let fx: LabFixture;
const as = (who: keyof LabFixture['tokens']) => client(api.app, fx.tokens[who]);

beforeAll(async () => {
  api = startApi();
  fx = await labWithEveryRole(api, 'cases');
});
afterAll(() => api.close());

describe('creating and reading cases', () => {
  it('creates a case with revision 1 holding the canonical parameters and their digest', async () => {
    const params = quickCase();
    const res = await as('analyst').post(`/api/labs/${fx.lab.id}/cases`, { title: 'Crank rig A', tags: ['Crank', 'bench', 'crank'], params, note: 'first cut' });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({
      title: 'Crank rig A',
      tags: ['bench', 'crank'],
      lab: { id: fx.lab.id, name: fx.lab.name },
      archived: false,
      latestRevision: 1,
      recheckState: 'draft',
      myRole: 'analyst',
      author: { id: fx.people.analyst.id, name: fx.people.analyst.name },
    });
    expect(res.body.revisions).toEqual([
      expect.objectContaining({ number: 1, paramsDigest: caseDigest(params), note: 'first cut', recheckState: 'draft' }),
    ]);
    const rev = await as('viewer').get(`/api/cases/${res.body.id}/revisions/1`);
    expect(rev.status).toBe(200);
    expect(rev.body).toMatchObject({ caseId: res.body.id, caseTitle: 'Crank rig A', number: 1, schemaVersion: 1, paramsDigest: caseDigest(params) });
    expect(rev.body.params).toEqual(params);
    expect(rev.body).toMatchObject({ runs: [], rechecks: [], comments: [], recheckRequest: null });
  });

  it('refuses invalid parameters with 422 naming the field, and writes nothing', async () => {
    const before = await CaseRecord.count({ where: { labId: fx.lab.id } });
    const params = quickCase((p) => {
      p.drive.frequency = -5;
    });
    const res = await as('owner').post(`/api/labs/${fx.lab.id}/cases`, { title: 'Bad', params });
    expect(res.status).toBe(422);
    expect(errorOf(res)).toMatchObject({ code: 'invalid_params', field: 'params.drive.frequency' });
    const crank = quickCase((p) => {
      p.drive.waveform = { kind: 'crank-slider', connectingRod: 0.005 };
    });
    const rod = await as('owner').post(`/api/labs/${fx.lab.id}/cases`, { title: 'Bad rod', params: crank });
    expect(errorOf(rod)).toMatchObject({ code: 'invalid_params', field: 'params.drive.waveform.connectingRod' });
    expect(await CaseRecord.count({ where: { labId: fx.lab.id } })).toBe(before);
  });

  it('names a missing title with 400', async () => {
    const res = await as('owner').post(`/api/labs/${fx.lab.id}/cases`, { params: quickCase() });
    expect(res.status).toBe(400);
    expect(errorOf(res)).toMatchObject({ code: 'missing_field', field: 'title' });
  });

  it('answers 404 for an unknown or malformed case id', async () => {
    const unknown = await as('owner').get('/api/cases/00000000-0000-4000-8000-000000000000');
    expect(unknown.status).toBe(404);
    expect(errorOf(unknown).code).toBe('case_not_found');
    const bad = await as('owner').get('/api/cases/nope');
    expect(bad.status).toBe(404);
    const noRev = await as('owner').get(`/api/cases/${await createCaseVia(api.app, fx.tokens.owner, fx.lab.id, { title: 'One rev' })}/revisions/7`);
    expect(noRev.status).toBe(404);
    expect(errorOf(noRev).code).toBe('revision_not_found');
  });
});

describe('listing cases', () => {
  let lab: LabFixture;
  beforeAll(async () => {
    lab = await labWithEveryRole(api, 'list');
    const titles = ['Alpha shaker', 'Bravo crank', 'Charlie arm', 'Delta shaker', 'Echo crank'];
    for (const [i, title] of titles.entries()) {
      const who = i % 2 === 0 ? 'analyst' : 'owner';
      await createCaseVia(api.app, lab.tokens[who], lab.lab.id, { title, tags: i < 2 ? ['demo', `t${i}`] : [`t${i}`] });
    }
  });
  const list = (query: string) => client(api.app, lab.tokens.viewer).get(`/api/labs/${lab.lab.id}/cases${query}`);
  const titlesOf = (body: { items: Array<{ title: string }> }) => body.items.map((c) => c.title);

  it('pages on the server, newest change first by default', async () => {
    const first = await list('?pageSize=2');
    expect(first.status).toBe(200);
    expect(first.body).toMatchObject({ total: 5, page: 1, pageSize: 2 });
    expect(titlesOf(first.body)).toEqual(['Echo crank', 'Delta shaker']);
    const third = await list('?pageSize=2&page=3');
    expect(titlesOf(third.body)).toEqual(['Alpha shaker']);
    expect(third.body.items[0]).toMatchObject({ labId: lab.lab.id, latestRevision: 1, recheckState: 'draft', archived: false });
    const past = await list('?pageSize=2&page=9&search=a');
    expect(past.body).toEqual({ items: [], total: 5, page: 9, pageSize: 2 });
  });

  it('sorts by title both ways and by oldest change', async () => {
    expect(titlesOf((await list('?sort=title')).body)).toEqual(['Alpha shaker', 'Bravo crank', 'Charlie arm', 'Delta shaker', 'Echo crank']);
    expect(titlesOf((await list('?sort=-title&pageSize=2')).body)).toEqual(['Echo crank', 'Delta shaker']);
    expect(titlesOf((await list('?sort=updated&pageSize=1')).body)).toEqual(['Alpha shaker']);
  });

  it('searches titles and tags case-insensitively, and filters by tag and author', async () => {
    expect(titlesOf((await list('?search=SHAKER&sort=title')).body)).toEqual(['Alpha shaker', 'Delta shaker']);
    expect(titlesOf((await list('?search=t3')).body)).toEqual(['Delta shaker']);
    expect(titlesOf((await list('?search=100%25')).body)).toEqual([]);
    expect(titlesOf((await list('?tag=demo&sort=title')).body)).toEqual(['Alpha shaker', 'Bravo crank']);
    const byOwner = await list(`?author=${lab.people.owner.id}&sort=title`);
    expect(titlesOf(byOwner.body)).toEqual(['Bravo crank', 'Delta shaker']);
    expect(byOwner.body.items[0].author).toEqual({ id: lab.people.owner.id, name: lab.people.owner.name });
  });

  it('hides archived cases unless asked, and a save moves a case to the top', async () => {
    const all = await list('?sort=title');
    const charlie = all.body.items.find((c: { title: string }) => c.title === 'Charlie arm');
    const archived = await client(api.app, lab.tokens.analyst).patch(`/api/cases/${charlie.id}`, { archived: true });
    expect(archived.status).toBe(200);
    expect(archived.body.archived).toBe(true);
    expect(titlesOf((await list('?sort=title')).body)).not.toContain('Charlie arm');
    expect(titlesOf((await list('?archived=true')).body)).toEqual(['Charlie arm']);
    const refused = await client(api.app, lab.tokens.analyst).post(`/api/cases/${charlie.id}/revisions`, { baseRevision: 1, params: quickCase() });
    expect(refused.status).toBe(409);
    expect(errorOf(refused).code).toBe('case_archived');
    await client(api.app, lab.tokens.analyst).patch(`/api/cases/${charlie.id}`, { archived: false });
    const saved = await client(api.app, lab.tokens.analyst).post(`/api/cases/${charlie.id}/revisions`, { baseRevision: 1, params: quickCase((p) => (p.drive.amplitude = 0.012)) });
    expect(saved.status).toBe(201);
    expect(titlesOf((await list('?pageSize=1')).body)).toEqual(['Charlie arm']);
  });

  it('filters by recheck state and refuses unknown filter values with 400', async () => {
    expect((await list('?recheck=confirmed')).body.total).toBe(0);
    expect((await list('?recheck=draft')).body.total).toBe(5);
    const bad = await list('?recheck=approved');
    expect(bad.status).toBe(400);
    expect(errorOf(bad)).toMatchObject({ code: 'invalid_field', field: 'recheck' });
    const badSort = await list('?sort=size');
    expect(errorOf(badSort).field).toBe('sort');
    const badPage = await list('?pageSize=0');
    expect(errorOf(badPage).field).toBe('pageSize');
  });
});

describe('revisions', () => {
  it('saves r2 on top of r1 and refuses a stale base with 409, writing nothing', async () => {
    const id = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: 'Stale check' });
    const p2 = quickCase((p) => (p.drive.amplitude = 0.015));
    const r2 = await as('analyst').post(`/api/cases/${id}/revisions`, { baseRevision: 1, params: p2, note: 'stronger drive' });
    expect(r2.status).toBe(201);
    expect(r2.body).toMatchObject({ number: 2, note: 'stronger drive', paramsDigest: caseDigest(p2), recheckState: 'draft' });
    const stale = await as('owner').post(`/api/cases/${id}/revisions`, { baseRevision: 1, params: quickCase((p) => (p.drive.amplitude = 0.02)) });
    expect(stale.status).toBe(409);
    expect(errorOf(stale)).toMatchObject({ code: 'stale_revision', message: expect.stringMatching(/latest is r2/) });
    expect(await Revision.count({ where: { caseId: id } })).toBe(2);
    const detail = await as('viewer').get(`/api/cases/${id}`);
    expect(detail.body.latestRevision).toBe(2);
    expect(detail.body.revisions.map((r: { number: number }) => r.number)).toEqual([2, 1]);
  });

  it('lets exactly one of two simultaneous saves win', async () => {
    const id = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: 'Race' });
    const save = (amplitude: number) =>
      as('analyst').post(`/api/cases/${id}/revisions`, { baseRevision: 1, params: quickCase((p) => (p.drive.amplitude = amplitude)) });
    const results = await Promise.all([save(0.011), save(0.013)]);
    expect(results.map((r) => r.status).sort()).toEqual([201, 409]);
    expect(errorOf(results.find((r) => r.status === 409) ?? results[0]).code).toBe('stale_revision');
    expect(await Revision.count({ where: { caseId: id } })).toBe(2);
    const winner = results.find((r) => r.status === 201);
    const stored = await Revision.findOne({ where: { caseId: id, number: 2 } });
    expect(stored?.paramsDigest).toBe(winner?.body.paramsDigest);
  });

  it('refuses invalid parameters in a new revision with 422 naming the field', async () => {
    const id = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: 'Bad save' });
    const res = await as('analyst').post(`/api/cases/${id}/revisions`, { baseRevision: 1, params: quickCase((p) => (p.body = { kind: 'point-mass', length: 0, mass: 1 })) });
    expect(res.status).toBe(422);
    expect(errorOf(res)).toMatchObject({ code: 'invalid_params', field: 'params.body.length' });
    expect(await Revision.count({ where: { caseId: id } })).toBe(1);
  });

  it('keeps revisions and runs append-only in the database itself', async () => {
    const id = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: 'Frozen' });
    const params = quickCase();
    const stored = await as('analyst').post(`/api/cases/${id}/revisions/1/runs`, motionRun(params));
    expect(stored.status).toBe(201);
    const sql = api.sequelize;
    await expect(sql.query(`UPDATE revisions SET note = 'changed' WHERE case_id = '${id}'`)).rejects.toThrow(/append-only/);
    await expect(sql.query(`DELETE FROM revisions WHERE case_id = '${id}'`)).rejects.toThrow(/append-only/);
    await expect(sql.query(`UPDATE runs SET result_digest = 'x' WHERE id = '${stored.body.id}'`)).rejects.toThrow(/append-only/);
    await expect(sql.query(`DELETE FROM runs WHERE id = '${stored.body.id}'`)).rejects.toThrow(/append-only/);
    const run = await Run.findByPk(stored.body.id);
    await expect(run?.destroy()).rejects.toThrow(/append-only/);
    const revision = await Revision.findOne({ where: { caseId: id, number: 1 } });
    await expect(revision?.update({ note: 'rewritten' })).rejects.toThrow(/append-only/);
    expect((await Revision.findOne({ where: { caseId: id, number: 1 } }))?.note).toBe('');
  });
});

describe('runs', () => {
  it('stores a run computed by the engine, with its summary and digest, under the revision', async () => {
    const params = quickCase();
    const id = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: 'Runs', params });
    const record = motionRun(params);
    const res = await as('analyst').post(`/api/cases/${id}/revisions/1/runs`, record);
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({
      kind: 'motion',
      settings: { kind: 'motion' },
      resultDigest: record.resultDigest,
      engineVersion: record.engineVersion,
      author: { id: fx.people.analyst.id },
    });
    expect(res.body.summary.outcome).toBe(record.summary['outcome']);
    expect(res.body.summary.maxDeviation).toBeCloseTo(Number(record.summary['maxDeviation']), 12);
    const rev = await as('viewer').get(`/api/cases/${id}/revisions/1`);
    expect(rev.body.runs.map((r: { id: string }) => r.id)).toEqual([res.body.id]);
  });

  it('refuses a run computed for other parameters with 422', async () => {
    const id = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: 'Mismatch' });
    const other = motionRun(quickCase((p) => (p.start.angle = 0.2)));
    const res = await as('analyst').post(`/api/cases/${id}/revisions/1/runs`, other);
    expect(res.status).toBe(422);
    expect(errorOf(res)).toMatchObject({ code: 'params_mismatch', field: 'params' });
    const lying = { ...motionRun(quickCase()), caseDigest: 'a'.repeat(64) };
    const res2 = await as('analyst').post(`/api/cases/${id}/revisions/1/runs`, lying);
    expect(errorOf(res2)).toMatchObject({ code: 'params_mismatch', field: 'caseDigest' });
    const revision = await Revision.findOne({ where: { caseId: id, number: 1 } });
    expect(await Run.count({ where: { revisionId: revision?.id ?? '' } })).toBe(0);
  });

  it('checks the run record shape and names the field', async () => {
    const id = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: 'Shape' });
    const record = motionRun(quickCase());
    const badKind = await as('analyst').post(`/api/cases/${id}/revisions/1/runs`, { ...record, kind: 'teleport' });
    expect(badKind.status).toBe(400);
    expect(errorOf(badKind).field).toBe('kind');
    const badDigest = await as('analyst').post(`/api/cases/${id}/revisions/1/runs`, { ...record, resultDigest: 'xyz' });
    expect(errorOf(badDigest).field).toBe('resultDigest');
    const badSummary = await as('analyst').post(`/api/cases/${id}/revisions/1/runs`, { ...record, summary: { outcome: { nested: true } } });
    expect(errorOf(badSummary).field).toBe('summary.outcome');
    const kindClash = await as('analyst').post(`/api/cases/${id}/revisions/1/runs`, { ...record, kind: 'sweep' });
    expect(kindClash.status).toBe(422);
    expect(errorOf(kindClash)).toMatchObject({ code: 'settings_kind_mismatch', field: 'settings.kind' });
    const noRev = await as('analyst').post(`/api/cases/${id}/revisions/5/runs`, record);
    expect(noRev.status).toBe(404);
  });

  it('refuses run settings the run registry does not accept, naming the field and the reason, and stores nothing', async () => {
    const params = quickCase();
    const id = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: 'Settings', params });
    const record = motionRun(params);
    const sweep = (spec: Record<string, unknown>) => ({
      ...record, kind: 'sweep', settings: { kind: 'sweep', spec: { field: 'drive.amplitude', from: 0.001, to: 0.01, steps: 5, ...spec } },
    });
    const post = (body: unknown) => as('analyst').post(`/api/cases/${id}/revisions/1/runs`, body);
    const unknownKey = await post({ ...record, settings: { kind: 'motion', depth: [[[]]] } });
    expect(unknownKey.status).toBe(400);
    expect(errorOf(unknownKey)).toMatchObject({ code: 'invalid_field', field: 'settings' });
    expect(errorOf(unknownKey).message).toMatch(/depth/);
    const huge = await post(sweep({ steps: 1_000_000 }));
    expect(huge.status).toBe(400);
    expect(errorOf(huge)).toMatchObject({ code: 'invalid_field', field: 'settings.spec.steps' });
    expect(errorOf(huge).message).toContain(`at most ${MAX_SWEEP_STEPS}`);
    const nested = await post(sweep({ extra: true }));
    expect(errorOf(nested).field).toBe('settings.spec');
    const absent = await post(sweep({ field: 'body.rodLength', from: 0.1, to: 0.2 }));
    expect(absent.status).toBe(422);
    expect(errorOf(absent)).toMatchObject({ code: 'settings_not_for_case', field: 'settings.spec.field' });
    expect(errorOf(absent).message).toMatch(/no field body\.rodLength/);
    const revision = await Revision.findOne({ where: { caseId: id, number: 1 } });
    expect(await Run.count({ where: { revisionId: revision?.id ?? '' } })).toBe(0);
  });
});

describe('duplicate, rename, comments and audit', () => {
  it('duplicates a chosen revision into a new case with its own history', async () => {
    const p1 = quickCase();
    const id = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: 'Original', tags: ['x'], params: p1 });
    await as('analyst').post(`/api/cases/${id}/revisions`, { baseRevision: 1, params: quickCase((p) => (p.drive.frequency = 45)) });
    const dup = await as('owner').post(`/api/cases/${id}/duplicate`, { revision: 1 });
    expect(dup.status).toBe(201);
    expect(dup.body).toMatchObject({ title: 'Copy of Original', tags: ['x'], latestRevision: 1, author: { id: fx.people.owner.id } });
    expect(dup.body.id).not.toBe(id);
    expect(dup.body.revisions[0]).toMatchObject({ number: 1, paramsDigest: caseDigest(p1), note: 'Duplicated from "Original" r1.' });
    const named = await as('analyst').post(`/api/cases/${id}/duplicate`, { title: 'Variant' });
    expect(named.body.title).toBe('Variant');
    expect(named.body.revisions[0].note).toMatch(/r2\.$/);
  });

  it('renames and retags a case and records each change in the audit trail', async () => {
    const id = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: 'Before' });
    const res = await as('analyst').patch(`/api/cases/${id}`, { title: 'After', tags: ['b', 'a'] });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ title: 'After', tags: ['a', 'b'] });
    await as('analyst').post(`/api/cases/${id}/revisions`, { baseRevision: 1, params: quickCase((p) => (p.drive.frequency = 50)) });
    const comment = await as('reviewer').post(`/api/cases/${id}/revisions/2/comments`, { body: 'Why 50 Hz?' });
    expect(comment.status).toBe(201);
    expect(comment.body).toMatchObject({ body: 'Why 50 Hz?', author: { id: fx.people.reviewer.id, name: fx.people.reviewer.name } });
    const comments = await as('viewer').get(`/api/cases/${id}/revisions/2/comments`);
    expect(comments.body.items.map((c: { body: string }) => c.body)).toEqual(['Why 50 Hz?']);
    const empty = await as('owner').post(`/api/cases/${id}/revisions/2/comments`, { body: '   ' });
    expect(empty.status).toBe(400);

    const auditRes = await as('viewer').get(`/api/cases/${id}/audit?pageSize=2`);
    expect(auditRes.status).toBe(200);
    expect(auditRes.body).toMatchObject({ total: 4, page: 1, pageSize: 2 });
    expect(auditRes.body.items.map((e: { action: string }) => e.action)).toEqual(['comment.added', 'revision.saved']);
    const page2 = await as('viewer').get(`/api/cases/${id}/audit?pageSize=2&page=2`);
    expect(page2.body.items.map((e: { action: string }) => e.action)).toEqual(['case.updated', 'case.created']);
    expect(page2.body.items[0]).toMatchObject({ actor: { id: fx.people.analyst.id }, details: { caseId: id, changes: { title: { from: 'Before', to: 'After' } } } });
    expect(await AuditEvent.count({ where: { labId: fx.lab.id, action: 'case.updated' } })).toBeGreaterThanOrEqual(1);
  });
});

describe('chains', () => {
  function twoLink(): CaseParams {
    const demo = demoRigCase('two-link-shaker');
    if (!demo) throw new Error('two-link demo missing');
    return { ...demo, run: { ...demo.run, duration: 0.5, outputPoints: 200 } };
  }

  it('stores a two-link case with every link and its motion run with both joints', async () => {
    const params = twoLink();
    const id = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: 'Two links', params });
    const rev = await as('viewer').get(`/api/cases/${id}/revisions/1`);
    expect(rev.body.params.body).toEqual(params.body);
    const record = motionRun(params);
    const res = await as('analyst').post(`/api/cases/${id}/revisions/1/runs`, record);
    expect(res.status).toBe(201);
    expect(res.body.summary.outcome).toBe('holds-upright');
  });

  it('refuses a massless link and a tilted drive with 422 naming the field', async () => {
    const params = twoLink();
    const massless = { ...params, body: { kind: 'chain', links: [params.body.kind === 'chain' ? params.body.links[0] : null, { kind: 'rod-bob', rodLength: 0.1, rodMass: 0, bobMass: 0, bobRadius: 0, bobDistance: 0, jointDamping: 0 }] } };
    const res = await as('analyst').post(`/api/labs/${fx.lab.id}/cases`, { title: 'No mass', params: massless });
    expect(res.status).toBe(422);
    expect(errorOf(res)).toMatchObject({ code: 'invalid_params', field: 'params.body.links.1.bobMass' });
    const tilted = await as('analyst').post(`/api/labs/${fx.lab.id}/cases`, { title: 'Tilted', params: { ...params, drive: { ...params.drive, direction: 0.2 } } });
    expect(errorOf(tilted)).toMatchObject({ code: 'invalid_params', field: 'params.drive.direction' });
  });
});
