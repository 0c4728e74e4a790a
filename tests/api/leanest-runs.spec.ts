/**
 * Leanest-drive runs are stored with a revision, reproduced by the server like every run, and served back with the
 * optimum and the admissible region; bad envelopes are refused with the field and the reason.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { decodeRunResult } from '../../shared/engine/result-codec';
import { computeRun, makeRunRecord, resultDigest, type RunSettings } from '../../shared/engine/run-record';
import { defaultLeanestSettings } from '../../shared/engine/run-kinds';
import { errorOf, startApi, type TestApi } from './support';
import { client, createCaseVia, labWithEveryRole, motionRun, quickCase, type LabFixture } from './library-support';

let api: TestApi;
let fx: LabFixture;
const as = (who: keyof LabFixture['tokens']) => client(api.app, fx.tokens[who]);
const params = quickCase();

beforeAll(async () => {
  api = startApi();
  fx = await labWithEveryRole(api, 'leanest');
});
afterAll(() => api.close());

/** A small search with a shaker envelope (8 x 6 over 2..80 Hz, 1..200 mm). */
function smallSettings(): RunSettings {
  const d = defaultLeanestSettings(params);
  return {
    ...d,
    relTolerance: 1e-4,
    movingMass: 0.5,
    envelope: { kind: 'shaker', ratedForce: 100 },
    cost: 'stroke',
    grid: {
      x: { ...d.grid.x, from: 2, to: 80, count: 8 },
      y: { ...d.grid.y, from: 0.001, to: 0.2, count: 6 },
    },
  };
}

describe('leanest-drive runs', () => {
  it('stores a search, the server verifies it, and the stored result carries the optimum and the admissible cells', { timeout: 180_000 }, async () => {
    const id = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: 'Leanest drive', params });
    const settings = smallSettings();
    const record = makeRunRecord(params, settings, computeRun(params, settings));
    const posted = await as('analyst').post(`/api/cases/${id}/revisions/1/runs`, record);
    expect(posted.status, JSON.stringify(posted.body)).toBe(201);
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
    if (result.kind !== 'leanest') throw new Error(`a ${result.kind} came back`);
    expect(resultDigest(result)).toBe(record.resultDigest);
    expect(result.value.optimum?.binding).toContain('rated-force');
    expect(result.value.feasible).toHaveLength(48);
  });

  it('refuses an envelope whose range is upside down, naming the field in the settings', async () => {
    const id = await createCaseVia(api.app, fx.tokens.analyst, fx.lab.id, { title: 'Upside down', params });
    const settings = { ...smallSettings(), envelope: { kind: 'shaker', minFrequency: 50, maxFrequency: 20 } };
    const res = await as('analyst').post(`/api/cases/${id}/revisions/1/runs`, { ...motionRun(params), kind: 'leanest', settings });
    expect(res.status).toBe(400);
    expect(errorOf(res)).toMatchObject({ code: 'invalid_field', field: 'settings.envelope.maxFrequency' });
    expect(errorOf(res).message).toContain('must be above the lowest frequency');
  });
});
