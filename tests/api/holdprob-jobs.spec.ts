/**
 * A hold probability as a server job: its blocks of samples go through the queue as chunks, stage by stage (the
 * early stop decided between blocks as in this process), and the stored run is verified with the digest of the same
 * run computed here.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { JobView } from '../../shared/api';
import type { CaseParams } from '../../shared/case';
import { computeRun, makeRunRecord, type RunSettings } from '../../shared/engine/run-record';
import { defaultHoldProbSettings } from '../../shared/engine/run-kinds';
import { startJobsApi, type JobsApi } from './jobs-support';
import { client, createCaseVia, labWithEveryRole, quickCase, type LabFixture } from './library-support';

let api: JobsApi;
let fx: LabFixture;
const as = (who: keyof LabFixture['tokens']) => client(api.app, fx.tokens[who]);
// σ 0.5 mm on the amplitude: every sample holds, so the interval is under 10 points after the first block of 64.
const params: CaseParams = { ...quickCase(), tolerances: [{ field: 'drive.amplitude', distribution: 'normal', sigma: 5e-4 }] };
let caseId: string;

beforeAll(async () => {
  api = await startJobsApi();
  fx = await labWithEveryRole(api, 'holdprob-jobs');
  caseId = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: 'Hold probability job', params });
}, 60_000);
afterAll(() => api?.close());

describe('hold probability as a server job', () => {
  it('runs its sample chunks on the queue, stops early between blocks, and stores a verified run with the in-process digest', { timeout: 240_000 }, async () => {
    const settings: RunSettings = { ...defaultHoldProbSettings(params), samples: 256, targetWidth: 0.1, relTolerance: 1e-3 };
    const res = await as('analyst').post(`/api/cases/${caseId}/revisions/1/jobs`, { settings });
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const until = Date.now() + 220_000;
    let job = res.body as JobView;
    while (!['succeeded', 'failed', 'cancelled'].includes(job.state)) {
      if (Date.now() > until) throw new Error(`job still ${job.state}`);
      await new Promise((r) => setTimeout(r, 250));
      job = (await as('viewer').get(`/api/cases/${caseId}/jobs/${job.id}`)).body as JobView;
    }
    expect(job.state, job.error ?? '').toBe('succeeded');
    const local = computeRun(params, settings);
    if (local.kind !== 'holdprob') throw new Error('kind');
    expect(local.value.samplesUsed).toBe(64);
    const rev = await as('viewer').get(`/api/cases/${caseId}/revisions/1`);
    const run = (rev.body.runs as Array<{ id: string; resultDigest: string; summary: Record<string, unknown>; verification: { state: string } | null }>)
      .find((r) => r.id === job.runId);
    expect(run?.resultDigest).toBe(makeRunRecord(params, settings, local).resultDigest);
    expect(run?.summary).toMatchObject({ samplesUsed: 64, stoppedEarly: true, probability: 1 });
    expect(run?.verification?.state).toBe('verified');
  });
});
