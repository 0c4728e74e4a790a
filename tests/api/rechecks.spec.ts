/**
 * The recheck flow: a verdict carries only the reviewer's word and comment; the comparison is the server's own
 * (its rerun of every stored run, shared/engine/compare-runs.ts), and the rules on who may give which verdict when
 * are the server's.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RunRecord } from '../../shared/engine/run-record';
import { createApp } from '../../server/app';
import { AuditEvent, OutboxMail, Recheck } from '../../server/db/models';
import { errorOf, startApi, type TestApi } from './support';
import { client, createCaseVia, labWithEveryRole, motionRun, quickCase, type LabFixture } from './library-support';

let api: TestApi;
let fx: LabFixture;
const as = (who: keyof LabFixture['tokens']) => client(api.app, fx.tokens[who]);

beforeAll(async () => {
  api = startApi();
  fx = await labWithEveryRole(api, 'recheck');
});
afterAll(() => api.close());

/** A case whose r1 has a run stored by the analyst (forged when `change` alters the record), verified by the server. */
async function caseWithRun(title: string, change: (r: RunRecord) => RunRecord = (r) => r, author: 'analyst' | 'owner' = 'analyst'): Promise<string> {
  const params = quickCase();
  const id = await createCaseVia(api.app, fx.tokens[author], fx.lab.id, { title, params });
  const run = await as(author).post(`/api/cases/${id}/revisions/1/runs`, change(motionRun(params)));
  expect(run.status).toBe(201);
  await api.verifier.whenIdle();
  return id;
}

describe('asking for a recheck', () => {
  it('moves the revision to awaiting-recheck and writes the reviewer a mail in the outbox', async () => {
    const id = await caseWithRun('Needs a look');
    const res = await as('analyst').post(`/api/cases/${id}/revisions/1/recheck-request`, { reviewerId: fx.people.reviewer.id, message: 'Check the slow frequency' });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({
      number: 1,
      recheckState: 'awaiting-recheck',
      recheckRequest: { requestedBy: { id: fx.people.analyst.id }, reviewer: { id: fx.people.reviewer.id }, message: 'Check the slow frequency' },
    });
    const detail = await as('viewer').get(`/api/cases/${id}`);
    expect(detail.body.recheckState).toBe('awaiting-recheck');
    const mail = await OutboxMail.findOne({ where: { toAddress: fx.people.reviewer.email }, order: [['id', 'DESC']] });
    expect(mail?.subject).toBe('Recheck requested: Needs a look r1');
    expect(mail?.textBody).toContain('Check the slow frequency');
    expect(mail?.textBody).toContain(`/cases/${id}/r/1/history`);
    expect(mail?.htmlBody).toContain('<strong>Needs a look</strong>');
    expect(mail).toMatchObject({ attempts: 0, sentAt: null });
  });

  it('refuses a request for a revision with no stored run (409 no_stored_runs)', async () => {
    const id = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: 'Nothing stored', params: quickCase() });
    const res = await as('analyst').post(`/api/cases/${id}/revisions/1/recheck-request`, { reviewerId: fx.people.reviewer.id });
    expect(res.status).toBe(409);
    expect(errorOf(res).code).toBe('no_stored_runs');
  });

  it('refuses a reviewer who is not a reviewer or owner of the lab, writing nothing', async () => {
    const id = await caseWithRun('Wrong reviewer');
    const mails = await OutboxMail.count();
    for (const who of ['viewer', 'analyst', 'outsider'] as const) {
      const res = await as('owner').post(`/api/cases/${id}/revisions/1/recheck-request`, { reviewerId: fx.people[who].id });
      expect(res.status, who).toBe(422);
      expect(errorOf(res)).toMatchObject({ code: 'reviewer_not_eligible', field: 'reviewerId' });
    }
    expect(await OutboxMail.count()).toBe(mails);
    expect((await as('owner').get(`/api/cases/${id}/revisions/1`)).body.recheckState).toBe('draft');
  });
});

describe('recording a verdict', () => {
  it('stores a confirmed recheck with the server\'s comparison, and tells the requester', async () => {
    const id = await caseWithRun('Confirm me');
    await as('analyst').post(`/api/cases/${id}/revisions/1/recheck-request`, { reviewerId: fx.people.reviewer.id });
    const res = await as('reviewer').post(`/api/cases/${id}/revisions/1/rechecks`, { verdict: 'confirmed', comment: 'Reran: identical.' });
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    expect(res.body).toMatchObject({ state: 'confirmed', digestMatch: true, comment: 'Reran: identical.', reviewer: { id: fx.people.reviewer.id } });
    const rev = await as('viewer').get(`/api/cases/${id}/revisions/1`);
    const runId = rev.body.runs[0].id as string;
    expect(res.body.comparisons).toHaveLength(1);
    expect(res.body.comparisons[0]).toMatchObject({ runId, kind: 'motion', digestMatch: true, reproduced: true, numbersMatch: true });
    expect(res.body.comparisons[0].numbers.map((n: { name: string }) => n.name)).toContain('maxDeviation');
    expect(rev.body.recheckState).toBe('confirmed');
    expect(rev.body.rechecks.map((r: { id: string }) => r.id)).toEqual([res.body.id]);
    const list = await as('viewer').get(`/api/labs/${fx.lab.id}/cases?recheck=confirmed`);
    expect(list.body.items.map((c: { id: string }) => c.id)).toEqual([id]);
    const mail = await OutboxMail.findOne({ where: { toAddress: fx.people.analyst.email }, order: [['id', 'DESC']] });
    expect(mail?.subject).toBe('Recheck confirmed: Confirm me r1');
    const events = await AuditEvent.findAll({ where: { details: { caseId: id } }, order: [['id', 'ASC']] });
    expect(events.map((e) => e.action)).toEqual(['case.created', 'run.stored', 'recheck.requested', 'recheck.confirmed']);
  });

  it('refuses match flags or comparisons in the body with 422, naming the field', async () => {
    const id = await caseWithRun('Flags sent');
    await as('analyst').post(`/api/cases/${id}/revisions/1/recheck-request`, { reviewerId: fx.people.reviewer.id });
    for (const extra of [{ match: true }, { digestMatch: true }, { comparisons: [] }]) {
      const res = await as('reviewer').post(`/api/cases/${id}/revisions/1/rechecks`, { verdict: 'confirmed', comment: '', ...extra });
      expect(res.status).toBe(422);
      expect(errorOf(res)).toMatchObject({ code: 'unexpected_field', field: Object.keys(extra)[0] });
    }
    expect((await as('viewer').get(`/api/cases/${id}/revisions/1`)).body.recheckState).toBe('awaiting-recheck');
  });

  it('refuses to confirm a run the server could not reproduce, and keeps the server\'s differing numbers with a dispute', async () => {
    const id = await caseWithRun('Dispute me', (r) => ({ ...r, summary: { ...r.summary, maxDeviation: Number(r.summary['maxDeviation']) * 1.01 } }));
    await as('analyst').post(`/api/cases/${id}/revisions/1/recheck-request`, { reviewerId: fx.people.owner.id });
    const refused = await as('owner').post(`/api/cases/${id}/revisions/1/rechecks`, { verdict: 'confirmed', comment: 'ok' });
    expect(refused.status).toBe(409);
    expect(errorOf(refused)).toMatchObject({ code: 'comparison_differs', field: 'verdict' });
    const silent = await as('owner').post(`/api/cases/${id}/revisions/1/rechecks`, { verdict: 'disputed', comment: '' });
    expect(silent.status).toBe(400);
    expect(errorOf(silent).field).toBe('comment');
    const res = await as('owner').post(`/api/cases/${id}/revisions/1/rechecks`, { verdict: 'disputed', comment: 'Max deviation off by 1 %.' });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ state: 'disputed', digestMatch: true });
    const stored = await Recheck.findByPk(res.body.id);
    const comparison = stored?.comparisons[0] as { reproduced: boolean; numbers: Array<{ name: string; match: boolean }> };
    expect(comparison.reproduced).toBe(false);
    expect(comparison.numbers.filter((n) => !n.match).map((n) => n.name)).toEqual(['maxDeviation']);
    expect((await as('viewer').get(`/api/cases/${id}`)).body.recheckState).toBe('disputed');
  });

  it('refuses a verdict on a draft and a second verdict with 409 recheck_not_requested', async () => {
    const id = await caseWithRun('Still a draft');
    const draft = await as('reviewer').post(`/api/cases/${id}/revisions/1/rechecks`, { verdict: 'disputed', comment: 'x' });
    expect(draft.status).toBe(409);
    expect(errorOf(draft).code).toBe('recheck_not_requested');
    await as('analyst').post(`/api/cases/${id}/revisions/1/recheck-request`, { reviewerId: fx.people.reviewer.id });
    expect((await as('reviewer').post(`/api/cases/${id}/revisions/1/rechecks`, { verdict: 'confirmed', comment: '' })).status).toBe(201);
    const again = await as('reviewer').post(`/api/cases/${id}/revisions/1/rechecks`, { verdict: 'disputed', comment: 'changed my mind' });
    expect(again.status).toBe(409);
    expect(errorOf(again).code).toBe('recheck_not_requested');
  });

  it('refuses a verdict by the revision\'s author and by anyone but the named reviewer with 403', async () => {
    const id = await caseWithRun('Own work', (r) => r, 'owner');
    await as('owner').post(`/api/cases/${id}/revisions/1/recheck-request`, { reviewerId: fx.people.reviewer.id });
    const own = await as('owner').post(`/api/cases/${id}/revisions/1/rechecks`, { verdict: 'confirmed', comment: '' });
    expect(own.status).toBe(403);
    expect(errorOf(own).code).toBe('reviewer_is_author');
    const other = await caseWithRun('Someone else asked');
    await as('analyst').post(`/api/cases/${other}/revisions/1/recheck-request`, { reviewerId: fx.people.reviewer.id });
    const owner = await as('owner').post(`/api/cases/${other}/revisions/1/rechecks`, { verdict: 'confirmed', comment: '' });
    expect(owner.status).toBe(403);
    expect(errorOf(owner).code).toBe('not_requested_reviewer');
    expect(await Recheck.count({ where: { comment: '' , reviewerId: fx.people.owner.id } })).toBe(0);
  });

  it('refuses a verdict while the server is still rerunning a stored run (409 verification_pending)', async () => {
    const id = await caseWithRun('Not yet verified');
    const noVerifier = createApp({ config: api.config, sequelize: api.sequelize, serveClient: false });
    const detail = await as('viewer').get(`/api/cases/${id}/revisions/1`);
    await client(noVerifier, fx.tokens.analyst).post(`/api/cases/${id}/revisions/1/runs`, motionRun(detail.body.params));
    await as('analyst').post(`/api/cases/${id}/revisions/1/recheck-request`, { reviewerId: fx.people.reviewer.id });
    const res = await as('reviewer').post(`/api/cases/${id}/revisions/1/rechecks`, { verdict: 'confirmed', comment: '' });
    expect(res.status).toBe(409);
    expect(errorOf(res).code).toBe('verification_pending');
    await api.verifier.resumePending();
    await api.verifier.whenIdle();
    expect((await as('reviewer').post(`/api/cases/${id}/revisions/1/rechecks`, { verdict: 'confirmed', comment: '' })).status).toBe(201);
  });

  it('a new revision starts as draft again, and the case follows its latest revision', async () => {
    const id = await caseWithRun('Moves on');
    await as('analyst').post(`/api/cases/${id}/revisions/1/recheck-request`, { reviewerId: fx.people.reviewer.id });
    await as('reviewer').post(`/api/cases/${id}/revisions/1/rechecks`, { verdict: 'confirmed', comment: '' });
    const r2 = await as('analyst').post(`/api/cases/${id}/revisions`, { baseRevision: 1, params: quickCase((p) => (p.drive.frequency = 42)) });
    expect(r2.body.recheckState).toBe('draft');
    const detail = await as('viewer').get(`/api/cases/${id}`);
    expect(detail.body.recheckState).toBe('draft');
    expect(detail.body.revisions.map((r: { number: number; recheckState: string }) => [r.number, r.recheckState])).toEqual([
      [2, 'draft'],
      [1, 'confirmed'],
    ]);
  });
});
