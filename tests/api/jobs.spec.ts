/**
 * Server jobs through the API: long runs of a saved revision computed by a worker off the request path, stored as
 * a verified run whose digest equals the same run computed in this process; roles, bad settings, cancel, the lab's
 * list, live progress as server-sent events, a poison chunk, and a rerun of a stored run.
 */
import { serialize } from 'node:v8';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import type { JobView } from '../../shared/api';
import { computeRun, defaultRunSettings, makeRunRecord, type RunSettings } from '../../shared/engine/run-record';
import { startJobsApi, type JobsApi } from './jobs-support';
import { client, createCaseVia, labWithEveryRole, quickCase, type LabFixture } from './library-support';
import { errorOf } from './support';
import { OutboxMail } from '../../server/db/models';

let api: JobsApi;
let fx: LabFixture;
const as = (who: keyof LabFixture['tokens']) => client(api.app, fx.tokens[who]);
const params = quickCase();
let caseId: string;

beforeAll(async () => {
  api = await startJobsApi();
  fx = await labWithEveryRole(api, 'jobs');
  caseId = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: 'Server jobs', params });
}, 60_000);
afterAll(() => api?.close());

function sweepSettings(steps = 12): RunSettings {
  const d = defaultRunSettings('sweep', params);
  return { ...d, spec: { ...d.spec, steps } };
}

function mapSettings(count: number): RunSettings {
  const d = defaultRunSettings('map', params);
  return { ...d, grid: { x: { ...d.grid.x, count }, y: { ...d.grid.y, count } } };
}

function chartSettings(count: number): RunSettings {
  const d = defaultRunSettings('chart', params);
  return { ...d, grid: { x: { ...d.grid.x, count }, y: { ...d.grid.y, count } } };
}

async function submit(settings: RunSettings, who: keyof LabFixture['tokens'] = 'analyst'): Promise<JobView> {
  const res = await as(who).post(`/api/cases/${caseId}/revisions/1/jobs`, { settings });
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  return res.body as JobView;
}

async function settled(jobId: string, timeoutMs = 150_000): Promise<JobView> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const res = await as('viewer').get(`/api/cases/${caseId}/jobs/${jobId}`);
    expect(res.status).toBe(200);
    const job = res.body as JobView;
    if (['succeeded', 'failed', 'cancelled'].includes(job.state)) return job;
    if (Date.now() > until) throw new Error(`job ${jobId} still ${job.state} at ${job.progress}`);
    await new Promise((r) => setTimeout(r, 250));
  }
}

async function storedRun(runId: string): Promise<{ resultDigest: string; verification: { state: string } | null; author: { id: string } | null }> {
  const rev = await as('viewer').get(`/api/cases/${caseId}/revisions/1`);
  const run = (rev.body.runs as Array<{ id: string; resultDigest: string; verification: { state: string } | null; author: { id: string } | null }>).find((r) => r.id === runId);
  if (!run) throw new Error(`run ${runId} not stored with r1`);
  return run;
}

describe('server jobs', () => {
  it('computes a sweep, an outcome map and a stability chart into verified runs with the in-process digests', { timeout: 240_000 }, async () => {
    const kinds = [sweepSettings(12), mapSettings(5), chartSettings(6)];
    const jobs = await Promise.all(kinds.map((s) => submit(s)));
    for (const job of jobs) {
      expect(job.state).toBe('queued');
      expect(job.caseTitle).toBe('Server jobs');
      expect(job.submittedBy?.id).toBe(fx.people.analyst.id);
      expect(job.chunksTotal).toBeGreaterThan(0);
    }
    for (const [i, job] of jobs.entries()) {
      const done = await settled(job.id);
      expect(done.state, done.error ?? '').toBe('succeeded');
      expect(done.progress).toBe(1);
      expect(done.runId).not.toBeNull();
      // Chunks count over every stage: the sweep's 6 point chunks and its threshold chunks.
      expect(done.chunksDone).toBe(done.chunksTotal);
      if (i === 0) expect(done.chunksTotal).toBeGreaterThan(6);
      const settings = kinds[i];
      const expected = makeRunRecord(params, settings, computeRun(params, settings));
      const run = await storedRun(done.runId!);
      expect(run.resultDigest).toBe(expected.resultDigest);
      expect(run.verification?.state).toBe('verified');
      expect(run.author?.id).toBe(fx.people.analyst.id);
    }
    // The submitter gets a mail per finished job, in words, with the revision's link.
    const mails = await OutboxMail.findAll({ where: { toAddress: fx.people.analyst.email } });
    const subjects = mails.map((m) => m.subject);
    expect(subjects.filter((t) => t === 'Server job finished: Server jobs r1').length).toBeGreaterThanOrEqual(3);
    const mapMail = mails.find((m) => m.textBody.startsWith('Outcome map of "Server jobs" r1 finished on the server'));
    expect(mapMail?.textBody).toContain(`http://quiverpoint.example/cases/${caseId}/r/1/history`);
    expect(mapMail?.textBody).toMatch(/after \d+ s \(5 chunks\)/);
    // Nothing of a finished job is left in the chunk table.
    const left = await api.sequelize.query('SELECT 1 FROM job_chunks WHERE job_id = ANY($1::uuid[])', {
      bind: [jobs.map((j) => j.id)], type: QueryTypes.SELECT,
    });
    expect(left).toHaveLength(0);
  });

  it('takes jobs from owners and analysts only, and shows them to every member', async () => {
    for (const who of ['viewer', 'reviewer'] as const) {
      const res = await as(who).post(`/api/cases/${caseId}/revisions/1/jobs`, { settings: sweepSettings() });
      expect(res.status).toBe(403);
      expect(errorOf(res).code).toBe('role_too_low');
    }
    const outsider = await as('outsider').post(`/api/cases/${caseId}/revisions/1/jobs`, { settings: sweepSettings() });
    expect(outsider.status).toBe(404);
    expect((await as('outsider').get(`/api/labs/${fx.lab.id}/jobs`)).status).toBe(403);
    const list = await as('viewer').get(`/api/labs/${fx.lab.id}/jobs?state=finished`);
    expect(list.status).toBe(200);
    expect((list.body.items as JobView[]).every((j) => !['queued', 'running'].includes(j.state))).toBe(true);
    expect((list.body.items as JobView[]).length).toBeGreaterThan(0);
  });

  it('refuses bad settings with the field and the reason, and stores nothing', async () => {
    const before = await api.sequelize.query('SELECT count(*)::int AS n FROM jobs', { type: QueryTypes.SELECT });
    const huge = mapSettings(5) as Extract<RunSettings, { kind: 'map' }>;
    const tooBig = await as('analyst').post(`/api/cases/${caseId}/revisions/1/jobs`, {
      settings: { ...huge, grid: { ...huge.grid, x: { ...huge.grid.x, count: 5000 } } },
    });
    expect(tooBig.status).toBe(422);
    expect(errorOf(tooBig).field).toBe('settings.grid.x.count');
    const motion = await as('analyst').post(`/api/cases/${caseId}/revisions/1/jobs`, { settings: { kind: 'motion' } });
    expect(motion.status).toBe(422);
    expect(errorOf(motion).code).toBe('kind_not_for_jobs');
    expect(String(errorOf(motion).message)).toContain('Motion');
    const neither = await as('analyst').post(`/api/cases/${caseId}/revisions/1/jobs`, {});
    expect(neither.status).toBe(400);
    const noRevision = await as('analyst').post(`/api/cases/${caseId}/revisions/9/jobs`, { settings: sweepSettings() });
    expect(noRevision.status).toBe(404);
    const after = await api.sequelize.query('SELECT count(*)::int AS n FROM jobs', { type: QueryTypes.SELECT });
    expect(after).toEqual(before);
  });

  it('cancels a running job: no run is stored, and a second cancel says it is over', { timeout: 120_000 }, async () => {
    const job = await submit(mapSettings(40));
    const cancelled = await as('owner').post(`/api/cases/${caseId}/jobs/${job.id}/cancel`);
    expect(cancelled.status).toBe(200);
    expect(cancelled.body.state).toBe('cancelled');
    expect(cancelled.body.cancelledBy.id).toBe(fx.people.owner.id);
    const again = await as('analyst').post(`/api/cases/${caseId}/jobs/${job.id}/cancel`);
    expect(again.status).toBe(409);
    expect(errorOf(again).code).toBe('job_finished');
    expect((await as('viewer').post(`/api/cases/${caseId}/jobs/${job.id}/cancel`)).status).toBe(403);
    await new Promise((r) => setTimeout(r, 1500));
    const view = await as('viewer').get(`/api/cases/${caseId}/jobs/${job.id}`);
    expect(view.body.state).toBe('cancelled');
    expect(view.body.runId).toBeNull();
    const active = await as('viewer').get(`/api/labs/${fx.lab.id}/jobs?state=active`);
    expect((active.body.items as JobView[]).map((j) => j.id)).not.toContain(job.id);
  });

  it('streams progress as server-sent events until the job ends', { timeout: 120_000 }, async () => {
    const job = await submit(mapSettings(6));
    const res = await as('viewer').get(`/api/cases/${caseId}/jobs/${job.id}/events`).buffer(true).parse((r, done) => {
      let text = '';
      r.setEncoding('utf8');
      r.on('data', (chunk: string) => (text += chunk));
      r.on('end', () => done(null, text));
    });
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toContain('text/event-stream');
    const events = String(res.body).split('\n\n').filter((e) => e.startsWith('event: job'));
    const views = events.map((e) => JSON.parse(e.split('\n').find((l) => l.startsWith('data: '))!.slice(6)) as JobView);
    expect(views.length).toBeGreaterThan(1);
    expect(views.at(-1)?.state).toBe('succeeded');
    const progress = views.map((v) => v.progress);
    expect(progress).toEqual([...progress].sort((a, b) => a - b));
  });

  it('fails a job whose chunk the engine refuses, once, with the reason in words', { timeout: 120_000 }, async () => {
    await api.stopWorker();
    const job = await submit(sweepSettings(4));
    // A chunk no engine can compute (what a corrupted or foreign task looks like to a worker).
    await api.sequelize.query(`UPDATE job_chunks SET task = $2 WHERE job_id = $1 AND idx = 0`, {
      bind: [job.id, serialize({ shared: false, task: { type: 'no-such-task' } })],
    });
    await api.startWorker();
    const done = await settled(job.id);
    expect(done.state).toBe('failed');
    expect(done.error).toMatch(/^A chunk could not be computed: /);
    const mail = await OutboxMail.findOne({ where: { toAddress: fx.people.analyst.email, subject: 'Server job failed: Server jobs r1' } });
    expect(mail?.textBody).toMatch(/^Sweep of "Server jobs" r1 stopped on the server after \d+ s: A chunk could not be computed: .*Nothing was stored\./);
    const tries = await api.sequelize.query<{ retry_count: number; state: string }>(
      `SELECT retry_count, state FROM pgboss.job WHERE data->>'jobId' = $1 AND (data->>'idx')::int = 0`,
      { bind: [job.id], type: QueryTypes.SELECT },
    );
    expect(tries).toEqual([{ retry_count: 0, state: 'completed' }]);
  });

  it('reruns a stored run on the workers and says whether the digests match', { timeout: 120_000 }, async () => {
    const first = await settled((await submit(sweepSettings(6))).id);
    expect(first.state, first.error ?? '').toBe('succeeded');
    const res = await as('analyst').post(`/api/cases/${caseId}/revisions/1/jobs`, { rerunOf: first.runId });
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    expect(res.body.rerunOf).toBe(first.runId);
    const rerun = await settled(res.body.id as string);
    expect(rerun.state).toBe('succeeded');
    expect(rerun.runId).toBe(first.runId);
    expect(rerun.rerunMatches).toBe(true);
    const unknown = await as('analyst').post(`/api/cases/${caseId}/revisions/1/jobs`, { rerunOf: '00000000-0000-4000-8000-000000000000' });
    expect(unknown.status).toBe(404);
    expect(errorOf(unknown).field).toBe('rerunOf');
  });
});
