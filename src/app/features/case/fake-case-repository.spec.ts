import { TestBed } from '@angular/core/testing';
import { firstValueFrom } from 'rxjs';

import { caseDigest } from '../../../../shared/case/canonical';
import { templateCase } from '../../../../shared/case/templates';
import { computeRun, makeRunRecord } from '../../../../shared/engine/run-record';
import { CaseRepositoryError } from './case-repository-error';
import { FakeCaseRepository } from './fake-case-repository';

describe('FakeCaseRepository', () => {
  let repository: FakeCaseRepository;

  beforeEach(() => {
    repository = TestBed.inject(FakeCaseRepository);
  });

  it('creates r1, adds r2 on top of it, and opens either', async () => {
    const first = await firstValueFrom(repository.create({ labId: 'lab-1', title: 'Rig A', tags: [], params: templateCase(), note: '' }));
    expect(first.revision).toBe(1);
    const changed = templateCase();
    changed.drive.amplitude = 0.012;
    const second = await firstValueFrom(repository.saveRevision(first.caseId, 1, changed, 'more drive'));
    expect(second.revision).toBe(2);
    expect(second.paramsDigest).toBe(caseDigest(changed));
    const reopened = await firstValueFrom(repository.open(first.caseId, 1));
    expect(reopened.params.drive.amplitude).toBeCloseTo(0.01, 15);
    expect(reopened.latestRevision).toBe(2);
  });

  it('refuses a save from a stale revision with stale_revision, writing nothing', async () => {
    const first = await firstValueFrom(repository.create({ labId: null, title: 'Rig B', tags: [], params: templateCase(), note: '' }));
    await firstValueFrom(repository.saveRevision(first.caseId, 1, templateCase(), ''));
    const error: unknown = await firstValueFrom(repository.saveRevision(first.caseId, 1, templateCase(), '')).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(CaseRepositoryError);
    expect((error as CaseRepositoryError).code).toBe('stale_revision');
    expect((error as CaseRepositoryError).message).toMatch(/r2 was saved since/);
    expect((await firstValueFrom(repository.open(first.caseId))).latestRevision).toBe(2);
  });

  it('stores a run only with the revision of its own parameters', async () => {
    const params = templateCase();
    params.run.duration = 1;
    const saved = await firstValueFrom(repository.create({ labId: null, title: 'Rig C', tags: [], params, note: '' }));
    const settings = { kind: 'motion' } as const;
    const run = makeRunRecord(params, settings, computeRun(params, settings));
    const stored = await firstValueFrom(repository.saveRun(saved.caseId, 1, run));
    expect(stored.resultDigest).toBe(run.resultDigest);
    expect((await firstValueFrom(repository.open(saved.caseId, 1))).runs).toHaveLength(1);
    const other = templateCase();
    other.run.duration = 2;
    const foreign = { ...run, params: other };
    const error: unknown = await firstValueFrom(repository.saveRun(saved.caseId, 1, foreign)).catch((e: unknown) => e);
    expect((error as CaseRepositoryError).code).toBe('invalid');
  });
  it('renames a case for every revision without adding one, and replaces tags only when given', async () => {
    const first = await firstValueFrom(repository.create({ labId: null, title: 'Rig C', tags: ['teaching'], params: templateCase(), note: '' }));
    await firstValueFrom(repository.saveRevision(first.caseId, 1, templateCase(), ''));
    const label = await firstValueFrom(repository.rename(first.caseId, '  Rig C, long stroke '));
    expect(label).toEqual({ title: 'Rig C, long stroke', tags: ['teaching'] });
    const r1 = await firstValueFrom(repository.open(first.caseId, 1));
    expect(r1.title).toBe('Rig C, long stroke');
    expect(r1.latestRevision).toBe(2);
    expect((await firstValueFrom(repository.rename(first.caseId, 'Rig C', ['shaker', 'upright']))).tags).toEqual(['shaker', 'upright']);
    expect((await firstValueFrom(repository.open(first.caseId))).tags).toEqual(['shaker', 'upright']);
  });

  it('refuses an empty title and an unknown case', async () => {
    const first = await firstValueFrom(repository.create({ labId: null, title: 'Rig D', tags: [], params: templateCase(), note: '' }));
    const empty: unknown = await firstValueFrom(repository.rename(first.caseId, '   ')).catch((e: unknown) => e);
    expect(empty).toBeInstanceOf(CaseRepositoryError);
    expect((empty as CaseRepositoryError).code).toBe('invalid');
    expect((await firstValueFrom(repository.open(first.caseId))).title).toBe('Rig D');
    const missing: unknown = await firstValueFrom(repository.rename('case-nope', 'X')).catch((e: unknown) => e);
    expect((missing as CaseRepositoryError).code).toBe('not_found');
  });
});
