/**
 * Stored runs are reproduced by the server: every posted run is rerun on the server's engine threads and ends
 * `verified` (same digest, same numbers) or `unreproduced` (with the numbers that differ); the server's full result
 * is stored compressed and served as it was stored.
 */
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { decodeRunResult } from '../../shared/engine/result-codec';
import { computeRun, makeRunRecord, resultDigest, type RunRecord, type RunSettings } from '../../shared/engine/run-record';
import { createApp } from '../../server/app';
import { Run, RunVerification } from '../../server/db/models';
import { MAX_CHART_COUNT, MAX_SWEEP_STEPS } from '../../shared/engine/run-kinds';
import { errorOf, startApi, type TestApi } from './support';
import { client, createCaseVia, labWithEveryRole, motionRun, quickCase, type LabFixture } from './library-support';

let api: TestApi;
let fx: LabFixture;
const as = (who: keyof LabFixture['tokens']) => client(api.app, fx.tokens[who]);
const params = quickCase();

interface RunBody {
  id: string;
  summary: Record<string, unknown>;
  resultDigest: string;
  verification: {
    state: string;
    verifiedAt: string | null;
    claimed: { summary: Record<string, unknown>; resultDigest: string } | null;
    differences: Array<{ name: string; stored: unknown; rerun: unknown; match: boolean }>;
    resultBytes: { raw: number; compressed: number } | null;
  };
}

beforeAll(async () => {
  api = startApi();
  fx = await labWithEveryRole(api, 'results');
});
afterAll(() => api.close());

async function newCase(title: string): Promise<string> {
  return createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title, params });
}

/** Polls the revision until the run leaves `pending` (the server reruns it off the request path). */
async function settled(caseId: string, runId: string, timeoutMs = 60_000): Promise<RunBody> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const res = await as('viewer').get(`/api/cases/${caseId}/revisions/1`);
    const run = (res.body.runs as RunBody[]).find((r) => r.id === runId);
    if (!run) throw new Error('run not listed');
    if (run.verification.state !== 'pending') return run;
    if (Date.now() > until) throw new Error(`run ${runId} still pending after ${timeoutMs} ms`);
    await new Promise((resolve) => setTimeout(resolve, 100));
  }
}

async function post(caseId: string, record: RunRecord): Promise<RunBody> {
  const res = await as('analyst').post(`/api/cases/${caseId}/revisions/1/runs`, record);
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  return res.body as RunBody;
}

describe('the server reproduces every stored run', () => {
  it('marks an honest run verified and serves its full result as stored, compressed', async () => {
    const id = await newCase('Honest run');
    const record = motionRun(params);
    const posted = await post(id, record);
    expect(posted.verification.state).toBe('pending');
    const run = await settled(id, posted.id);
    expect(run.verification).toMatchObject({ state: 'verified', claimed: null, differences: [] });
    expect(run.resultDigest).toBe(record.resultDigest);
    expect(run.verification.resultBytes?.compressed).toBeGreaterThan(0);
    expect(run.verification.resultBytes?.compressed).toBeLessThan(run.verification.resultBytes?.raw ?? 0);

    const res = await as('viewer').get(`/api/cases/${id}/revisions/1/runs/${posted.id}/result`).buffer(true);
    expect(res.status).toBe(200);
    expect(res.headers['content-encoding']).toBe('gzip');
    expect(res.headers['x-verification']).toBe('verified');
    const result = decodeRunResult(res.text);
    expect(result.kind).toBe('motion');
    expect(resultDigest(result)).toBe(record.resultDigest);
  });

  it('ends a run with a forged summary unreproduced, naming the number that differs, and shows the server\'s numbers', async () => {
    const id = await newCase('Forged summary');
    const honest = motionRun(params);
    const maxDeviation = Number(honest.summary['maxDeviation']);
    const forged = { ...honest, summary: { ...honest.summary, maxDeviation: maxDeviation * 0.5 + 0.01 } };
    const run = await settled(id, (await post(id, forged)).id);
    expect(run.verification.state).toBe('unreproduced');
    expect(run.verification.differences.map((d) => d.name)).toEqual(['maxDeviation']);
    expect(run.summary['maxDeviation']).toBeCloseTo(maxDeviation, 12);
    expect(run.verification.claimed?.summary['maxDeviation']).toBe(forged.summary.maxDeviation);
  });

  it('ends a run with a forged digest unreproduced although every number agrees', async () => {
    const id = await newCase('Forged digest');
    const honest = motionRun(params);
    const run = await settled(id, (await post(id, { ...honest, resultDigest: 'f'.repeat(64) })).id);
    expect(run.verification).toMatchObject({ state: 'unreproduced', differences: [] });
    expect(run.verification.claimed?.resultDigest).toBe('f'.repeat(64));
    expect(run.resultDigest).toBe(honest.resultDigest);
    const stored = await RunVerification.findByPk(run.id);
    expect(stored?.comparison).toMatchObject({ digestMatch: false, numbersMatch: true, reproduced: false });
  });

  it('stores and verifies a 200-point sweep', { timeout: 180_000 }, async () => {
    const id = await newCase('Long sweep');
    const a = params.drive.amplitude;
    const settings: RunSettings = { kind: 'sweep', spec: { field: 'drive.amplitude', from: a / 4, to: a * 2, steps: 200 } };
    const record = makeRunRecord(params, settings, computeRun(params, settings));
    const run = await settled(id, (await post(id, record)).id, 170_000);
    expect(run.verification.state).toBe('verified');
    const res = await as('viewer').get(`/api/cases/${id}/revisions/1/runs/${run.id}/result`).buffer(true);
    const result = decodeRunResult(res.text);
    if (result.kind !== 'sweep') throw new Error(`a ${result.kind} came back`);
    expect(result.value.points).toHaveLength(200);
  });

  it('refuses settings beyond the run registry (the limits it stores and reruns), naming the field', async () => {
    const id = await newCase('Too big');
    const sweep = { ...motionRun(params), kind: 'sweep', settings: { kind: 'sweep', spec: { field: 'drive.amplitude', from: 0.001, to: 0.01, steps: MAX_SWEEP_STEPS + 1 } } };
    const res = await as('analyst').post(`/api/cases/${id}/revisions/1/runs`, sweep);
    expect(res.status).toBe(400);
    expect(errorOf(res)).toMatchObject({ code: 'invalid_field', field: 'settings.spec.steps' });
    expect(errorOf(res).message).toContain(`at most ${MAX_SWEEP_STEPS}`);
    const axis = { field: 'drive.frequency', from: 10, to: 50, count: MAX_CHART_COUNT + 1 };
    const chart = { ...motionRun(params), kind: 'chart', settings: { kind: 'chart', grid: { x: { ...axis, field: 'drive.amplitude', from: 0.001, to: 0.01, count: 10 }, y: axis } } };
    const res2 = await as('analyst').post(`/api/cases/${id}/revisions/1/runs`, chart);
    expect(res2.status).toBe(400);
    expect(errorOf(res2)).toMatchObject({ code: 'invalid_field', field: 'settings.grid.y.count' });
  });

  it('keeps a run pending while no server reruns it, answers 409 for its result, and verifies it on the next start', async () => {
    const id = await newCase('Left pending');
    const noVerifier = createApp({ config: api.config, sequelize: api.sequelize, serveClient: false });
    const posted = await client(noVerifier, fx.tokens.analyst).post(`/api/cases/${id}/revisions/1/runs`, motionRun(params));
    expect(posted.status).toBe(201);
    const early = await as('viewer').get(`/api/cases/${id}/revisions/1/runs/${posted.body.id}/result`);
    expect(early.status).toBe(409);
    expect(errorOf(early).code).toBe('result_pending');
    expect(await api.verifier.resumePending()).toBeGreaterThanOrEqual(1);
    expect((await settled(id, posted.body.id)).verification.state).toBe('verified');
  });

  it('answers 404 for a run of another case and refuses to change a verification', async () => {
    const id = await newCase('Own runs only');
    const other = await newCase('Other runs');
    const run = await settled(other, (await post(other, motionRun(params))).id);
    const res = await as('viewer').get(`/api/cases/${id}/revisions/1/runs/${run.id}/result`);
    expect(res.status).toBe(404);
    expect(errorOf(res).code).toBe('stored_run_not_found');
    await expect(api.sequelize.query(`UPDATE run_results SET state = 'verified' WHERE run_id = '${run.id}'`)).rejects.toThrow(/append-only/);
    await expect(api.sequelize.query(`DELETE FROM run_results WHERE run_id = '${run.id}'`)).rejects.toThrow(/append-only/);
    expect(await Run.count({ where: { id: run.id } })).toBe(1);
  });

  it('refuses the result route without a token', async () => {
    const id = await newCase('Signed out');
    const run = await post(id, motionRun(params));
    expect((await request(api.app).get(`/api/cases/${id}/revisions/1/runs/${run.id}/result`)).status).toBe(401);
  });
});
