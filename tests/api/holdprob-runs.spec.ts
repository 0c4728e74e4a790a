/**
 * Hold-probability runs are stored with a revision and reproduced by the server like every run (the same seed, the
 * same samples); bad tolerances and noise are refused with the field and the reason, and a run needs the tolerances
 * or noise it samples.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { CaseParams } from '../../shared/case';
import { decodeRunResult } from '../../shared/engine/result-codec';
import { computeRun, makeRunRecord, resultDigest, type RunSettings } from '../../shared/engine/run-record';
import { defaultHoldProbSettings } from '../../shared/engine/run-kinds';
import { errorOf, startApi, type TestApi } from './support';
import { client, createCaseVia, labWithEveryRole, quickCase, type LabFixture } from './library-support';

let api: TestApi;
let fx: LabFixture;
const as = (who: keyof LabFixture['tokens']) => client(api.app, fx.tokens[who]);

// The template at 10 mm, 40 Hz with a 1 mm amplitude spread and a 2 mm length spread.
const params: CaseParams = {
  ...quickCase(),
  tolerances: [
    { field: 'drive.amplitude', distribution: 'normal', sigma: 1e-3 },
    { field: 'body.length', distribution: 'uniform', halfWidth: 2e-3 },
  ],
};

beforeAll(async () => {
  api = startApi();
  fx = await labWithEveryRole(api, 'holdprob');
});
afterAll(() => api.close());

function smallSettings(): RunSettings {
  return { ...defaultHoldProbSettings(params), samples: 16, targetWidth: 0, relTolerance: 1e-3 };
}

describe('hold-probability runs', () => {
  it('stores a run, the server verifies it, and the stored result carries the interval and the ranking', { timeout: 180_000 }, async () => {
    const id = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: 'Hold probability', params });
    const settings = smallSettings();
    const record = makeRunRecord(params, settings, computeRun(params, settings));
    const posted = await as('analyst').post(`/api/cases/${id}/revisions/1/runs`, record);
    expect(posted.status, JSON.stringify(posted.body)).toBe(201);
    expect(posted.body.summary).toMatchObject({ samplesUsed: 16, seed: 1927, mostInfluential: 'Drive amplitude' });
    const until = Date.now() + 170_000;
    let state = 'pending';
    while (state === 'pending' && Date.now() < until) {
      await new Promise((r) => setTimeout(r, 200));
      const rev = await as('viewer').get(`/api/cases/${id}/revisions/1`);
      state = (rev.body.runs as Array<{ id: string; verification: { state: string } }>).find((r) => r.id === posted.body.id)?.verification.state ?? 'missing';
    }
    expect(state).toBe('verified');
    const res = await as('viewer').get(`/api/cases/${id}/revisions/1/runs/${posted.body.id}/result`).buffer(true);
    expect(res.status).toBe(200);
    const result = decodeRunResult(res.text);
    if (result.kind !== 'holdprob') throw new Error(`a ${result.kind} came back`);
    expect(resultDigest(result)).toBe(record.resultDigest);
    expect(result.value.interval.lower).toBeLessThanOrEqual(result.value.probability);
    expect(result.value.ranking[0].field).toBe('drive.amplitude');
    expect(result.value.margin).toHaveLength(16);
  });

  it.each([
    ['a negative standard deviation', { tolerances: [{ field: 'drive.amplitude', distribution: 'normal', sigma: -1e-3 }] }, 'params.tolerances.0.sigma', /at least 0|>=\s*0|negative/],
    ['a tolerance on a field that cannot vary', { tolerances: [{ field: 'run.duration', distribution: 'normal', sigma: 1 }] }, 'params.tolerances.0.field', /must be one of/],
    ['a tolerance on a field this case lacks', { tolerances: [{ field: 'body.rodLength', distribution: 'uniform', halfWidth: 1e-3 }] }, 'params.tolerances.0.field', /this case has no field/],
    ['a field toleranced twice', { tolerances: [{ field: 'gravity', distribution: 'uniform', halfWidth: 0.1 }, { field: 'gravity', distribution: 'normal', sigma: 0.1 }] }, 'params.tolerances.1.field', /already has a tolerance/],
    ['a noise band far above the drive', { noise: { kind: 'phase-jitter', rms: 0.1, bandwidth: 5000, seed: 1 } }, 'params.noise.bandwidth', /20 times the drive frequency/],
  ])('refuses %s, naming the field', async (_name, change, field, reason) => {
    const res = await as('analyst').post(`/api/labs/${fx.lab.id}/cases`, { title: 'Bad tolerance', params: { ...quickCase(), ...change } });
    expect([400, 422]).toContain(res.status);
    expect(errorOf(res)).toMatchObject({ field });
    expect(errorOf(res).message).toMatch(reason);
  });

  it('refuses a hold probability of a case without tolerances, naming settings.parts', async () => {
    const bare = quickCase();
    const id = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: 'No tolerances', params: bare });
    const settings = { ...smallSettings(), parts: 'tolerances' };
    const record = { ...makeRunRecord(params, smallSettings(), computeRun(params, smallSettings())), params: bare, settings };
    const res = await as('analyst').post(`/api/cases/${id}/revisions/1/runs`, record);
    expect(res.status).toBe(422);
    expect(errorOf(res)).toMatchObject({ code: 'settings_not_for_case', field: 'settings.parts' });
    expect(errorOf(res).message).toContain('this case has no tolerances');
  });
});
