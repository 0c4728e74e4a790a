/**
 * The recheck flow, with the reviewer's side done for real: the stored runs are rerun by the engine and compared
 * (shared/engine/run-record.ts recheckRun), exactly as a reviewer's browser would.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { recheckRun, type RunRecord } from '../../shared/engine/run-record';
import { AuditEvent, OutboxMail, Recheck, Revision } from '../../server/db/models';
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

interface StoredRun {
  id: string;
  kind: string;
  settings: RunRecord['settings'];
  summary: RunRecord['summary'];
  resultDigest: string;
  engineVersion: string;
}

/** What a reviewer's client sends after rerunning every stored run of a revision. */
async function rerunComparisons(caseId: string, rev: number) {
  const detail = await as('reviewer').get(`/api/cases/${caseId}/revisions/${rev}`);
  return (detail.body.runs as StoredRun[]).map((run) => {
    const report = recheckRun({ ...run, kind: run.kind as RunRecord['kind'], params: detail.body.params });
    return {
      runId: run.id,
      digestMatch: report.digestMatches,
      numbers: report.compared.map((c) => ({ name: c.key, stored: c.stored, rerun: c.rerun, tolerance: report.relTolerance, match: c.ok })),
    };
  });
}

async function caseWithRun(title: string): Promise<string> {
  const params = quickCase();
  const id = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title, params });
  const run = await as('analyst').post(`/api/cases/${id}/revisions/1/runs`, motionRun(params));
  expect(run.status).toBe(201);
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
  it('stores a confirmed recheck whose rerun matched, and tells the requester', async () => {
    const id = await caseWithRun('Confirm me');
    await as('analyst').post(`/api/cases/${id}/revisions/1/recheck-request`, { reviewerId: fx.people.reviewer.id });
    const comparisons = await rerunComparisons(id, 1);
    expect(comparisons[0]?.digestMatch).toBe(true);
    expect(comparisons[0]?.numbers.every((n) => n.match)).toBe(true);
    const res = await as('reviewer').post(`/api/cases/${id}/revisions/1/rechecks`, { verdict: 'confirmed', comment: 'Reran: identical.', comparisons });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ state: 'confirmed', digestMatch: true, comment: 'Reran: identical.', reviewer: { id: fx.people.reviewer.id } });
    expect(res.body.comparisons).toEqual(comparisons);
    const rev = await as('viewer').get(`/api/cases/${id}/revisions/1`);
    expect(rev.body.recheckState).toBe('confirmed');
    expect(rev.body.rechecks.map((r: { id: string }) => r.id)).toEqual([res.body.id]);
    const list = await as('viewer').get(`/api/labs/${fx.lab.id}/cases?recheck=confirmed`);
    expect(list.body.items.map((c: { id: string }) => c.id)).toEqual([id]);
    const mail = await OutboxMail.findOne({ where: { toAddress: fx.people.analyst.email }, order: [['id', 'DESC']] });
    expect(mail?.subject).toBe('Recheck confirmed: Confirm me r1');
    const events = await AuditEvent.findAll({ where: { details: { caseId: id } }, order: [['id', 'ASC']] });
    expect(events.map((e) => e.action)).toEqual(['case.created', 'run.stored', 'recheck.requested', 'recheck.confirmed']);
  });

  it('stores a disputed recheck with the mismatching numbers as sent', async () => {
    const id = await caseWithRun('Dispute me');
    await as('analyst').post(`/api/cases/${id}/revisions/1/recheck-request`, { reviewerId: fx.people.owner.id });
    const [real] = await rerunComparisons(id, 1);
    if (!real) throw new Error('no run to compare');
    // The reviewer reran on a patched engine: one number moved beyond the tolerance.
    const numbers = real.numbers.map((n) => (n.name === 'maxDeviation' && typeof n.stored === 'number' ? { ...n, rerun: n.stored * 1.01, match: false } : n));
    const comparisons = [{ runId: real.runId, digestMatch: false, numbers }];
    const refused = await as('owner').post(`/api/cases/${id}/revisions/1/rechecks`, { verdict: 'confirmed', comment: 'ok', comparisons });
    expect(refused.status).toBe(422);
    expect(errorOf(refused)).toMatchObject({ code: 'verdict_contradicts_numbers', field: expect.stringMatching(/^comparisons\.0\.numbers\.\d+\.match$/) });
    const silent = await as('owner').post(`/api/cases/${id}/revisions/1/rechecks`, { verdict: 'disputed', comment: '', comparisons });
    expect(silent.status).toBe(400);
    expect(errorOf(silent).field).toBe('comment');
    const res = await as('owner').post(`/api/cases/${id}/revisions/1/rechecks`, { verdict: 'disputed', comment: 'Max deviation off by 1 %.', comparisons });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ state: 'disputed', digestMatch: false });
    const stored = await Recheck.findByPk(res.body.id);
    const moved = (stored?.comparisons[0] as { numbers: Array<{ name: string; match: boolean }> }).numbers.find((n) => n.name === 'maxDeviation');
    expect(moved?.match).toBe(false);
    expect((await as('viewer').get(`/api/cases/${id}`)).body.recheckState).toBe('disputed');
  });

  it('refuses comparisons of runs that belong to another revision', async () => {
    const id = await caseWithRun('Foreign run');
    const other = await caseWithRun('Other case');
    const [foreign] = await rerunComparisons(other, 1);
    const res = await as('reviewer').post(`/api/cases/${id}/revisions/1/rechecks`, { verdict: 'disputed', comment: 'x', comparisons: [foreign] });
    expect(res.status).toBe(422);
    expect(errorOf(res)).toMatchObject({ code: 'run_not_found', field: 'comparisons.0.runId' });
    const revision = await Revision.findOne({ where: { caseId: id, number: 1 } });
    expect(revision).not.toBeNull();
    expect(await Recheck.count({ where: { revisionId: revision?.id ?? '' } })).toBe(0);
  });

  it('a new revision starts as draft again, and the case follows its latest revision', async () => {
    const id = await caseWithRun('Moves on');
    await as('analyst').post(`/api/cases/${id}/revisions/1/recheck-request`, { reviewerId: fx.people.reviewer.id });
    await as('reviewer').post(`/api/cases/${id}/revisions/1/rechecks`, { verdict: 'confirmed', comment: '', comparisons: await rerunComparisons(id, 1) });
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
