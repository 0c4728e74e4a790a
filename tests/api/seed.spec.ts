import request from 'supertest';
import type { Sequelize } from 'sequelize';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import { parseCase } from '../../shared/case';
import { computeRun, makeRunRecord, type RunSettings } from '../../shared/engine/run-record';
import { createApp } from '../../server/app';
import { BenchTrace, CaseLink, CaseRecord, OutboxMail, Recheck, Revision, Run } from '../../server/db/models';
import { DEMO_LAB_NAME } from '../../server/db/seed';
import { DEMO_LINK_TOKEN } from '../../server/db/seed-library';
import { createSequelize } from '../../server/db/sequelize';
import { prepareDatabase, recreateDatabase } from '../../server/scripts/db-tasks';
import { testConfig } from './support';

let url: string;
let sequelize: Sequelize;
let firstSeeded: number;
let secondSeeded: number;

beforeAll(async () => {
  url = await recreateDatabase(inject('databaseUrl'), 'quiverpoint_test_seed');
  firstSeeded = (await prepareDatabase(url, { seed: true })).seeded;
  secondSeeded = (await prepareDatabase(url, { seed: true })).seeded;
  sequelize = createSequelize(url, { poolMax: 2 });
}, 180_000);
afterAll(() => sequelize.close());

describe('demo seed of the case library', () => {
  it('is idempotent', async () => {
    expect(firstSeeded).toBeGreaterThan(0);
    expect(secondSeeded).toBe(0);
    expect(await CaseRecord.count()).toBe(5);
  });

  it('holds a two-link chain with both links and a stored motion run', async () => {
    const chain = await CaseRecord.findOne({ where: { title: 'Two hinged rods on a shaker' } });
    const revision = await Revision.findOne({ where: { caseId: chain?.id ?? '' } });
    const body = (revision?.params as { body?: { kind?: string; links?: unknown[] } } | undefined)?.body;
    expect(body?.kind).toBe('chain');
    expect(body?.links).toHaveLength(2);
    expect(await Run.count({ where: { revisionId: revision?.id ?? '' } })).toBeGreaterThan(0);
  });

  it('stores several revisions with runs whose digests the engine reproduces', async () => {
    const shaker = await CaseRecord.findOne({ where: { title: 'Tall rod on an electrodynamic shaker' } });
    expect(shaker?.latestRevision).toBe(3);
    const revisions = await Revision.findAll({ where: { caseId: shaker?.id ?? '' }, order: [['number', 'ASC']] });
    expect(revisions.map((r) => r.number)).toEqual([1, 2, 3]);
    const last = revisions[2];
    const run = await Run.findOne({ where: { revisionId: last?.id ?? '' } });
    const parsed = parseCase(last?.params);
    if (!parsed.ok || !run) throw new Error('seeded revision or run missing');
    const again = makeRunRecord(parsed.value, run.settings as RunSettings, computeRun(parsed.value, run.settings as RunSettings));
    expect(run.resultDigest).toBe(again.resultDigest);
    expect(run.summary['outcome']).toBe('holds-upright');
  });

  it('has a confirmed and a disputed recheck, with notices in the outbox', async () => {
    const rechecks = await Recheck.findAll({ order: [['state', 'ASC']] });
    expect(rechecks.map((r) => r.state)).toEqual(['confirmed', 'disputed']);
    expect(rechecks.every((r) => r.digestMatch)).toBe(true);
    const states = (await CaseRecord.findAll({ order: [['title', 'ASC']] })).map((c) => [c.title, c.recheckState]);
    expect(states).toContainEqual(['Bench rig: motor and crank', 'confirmed']);
    expect(states).toContainEqual(['Tall rod on an electrodynamic shaker', 'disputed']);
    expect(await OutboxMail.count({ where: { toAddress: 'reviewer@quiverpoint.test' } })).toBe(2);
  });

  it('has a synthetic decaying swing as a bench trace', async () => {
    const trace = await BenchTrace.findOne({ where: { label: 'Bench 3 free swing (synthetic)' } });
    expect(trace).toMatchObject({ rows: 601, columns: ['time', 'angle'], angleUnit: 'deg' });
    expect(trace?.duration).toBeCloseTo(6, 9);
    const angle = trace?.series.angle ?? [];
    const swing = (from: number, to: number) => Math.max(...angle.slice(from, to).map((a) => Math.abs(a - Math.PI)));
    expect(swing(0, 100)).toBeGreaterThan(0.2);
    expect(swing(500, 601)).toBeLessThan(swing(0, 100));
  });

  it('has a free swing and a driven trace on the teaching rod, with the swing\'s fit applied in r2', async () => {
    const teaching = await CaseRecord.findOne({ where: { title: 'Teaching rod: point mass on a sine drive' } });
    const traces = await BenchTrace.findAll({ where: { caseId: teaching?.id ?? '' }, order: [['label', 'ASC']] });
    expect(traces.map((t) => [t.label, t.columns])).toEqual([
      ['Driven at 40 Hz (synthetic)', ['time', 'angle', 'pivot']],
      ['Free swing (synthetic)', ['time', 'angle']],
    ]);
    const revisions = await Revision.findAll({ where: { caseId: teaching?.id ?? '' }, order: [['number', 'ASC']] });
    expect(revisions).toHaveLength(2);
    expect(revisions[1]?.note).toContain('"Free swing (synthetic)"');
    const params = parseCase(revisions[1]?.params);
    if (!params.ok || params.value.body.kind !== 'point-mass') throw new Error('fitted revision missing');
    // the synthetic swing was made with a 21.2 cm rod and zeta 0.008
    expect(Math.abs(params.value.body.length / 0.212 - 1)).toBeLessThan(2e-3);
    expect(Math.abs(params.value.damping.viscousRatio / 0.008 - 1)).toBeLessThan(0.05);
  });

  it('has one active case link that opens with the demo token', async () => {
    expect(await CaseLink.count()).toBe(1);
    const app = createApp({ config: testConfig({ DATABASE_URL: url }), sequelize, serveClient: false, checkResponses: true });
    const res = await request(app).get(`/api/links/${DEMO_LINK_TOKEN}`);
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ caseTitle: 'Bench rig: motor and crank', labName: DEMO_LAB_NAME, revision: { number: 2, recheckState: 'confirmed' } });
  });
});
