import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { firstValueFrom } from 'rxjs';

import { templateCase } from '../../../../shared/case';
import { CaseRepositoryError } from '../case/case-repository-error';
import { ReplyMismatchError } from '../../core/api-reply';
import { ApiCaseRepository } from './api-case-repository';
import { FIXTURE_IDS, caseDetailReply, revisionReply, runReply } from './reply-fixtures';

const DETAIL = caseDetailReply({ latestRevision: 3 });
const OTHER_RUN = '00000000-0000-4000-8000-0000000000e2';
const HUGE_SWEEP = '00000000-0000-4000-8000-0000000000e3';

function revision(number: number): object {
  return revisionReply(number, templateCase(), {
    runs: [
      runReply(),
      runReply({ id: OTHER_RUN, kind: 'teleport', settings: { kind: 'teleport' }, summary: {} }),
      runReply({
        id: HUGE_SWEEP,
        kind: 'sweep',
        settings: { kind: 'sweep', spec: { field: 'drive.amplitude', from: 0.001, to: 0.01, steps: 1e6 } },
        summary: {},
      }),
    ],
  });
}

describe('ApiCaseRepository', () => {
  let repository: ApiCaseRepository;
  let backend: HttpTestingController;

  beforeEach(() => {
    TestBed.configureTestingModule({ providers: [provideHttpClient(), provideHttpClientTesting()] });
    repository = TestBed.inject(ApiCaseRepository);
    backend = TestBed.inject(HttpTestingController);
  });

  afterEach(() => backend.verify());

  it('opens the latest revision with its runs, writable for an analyst', async () => {
    const opened = firstValueFrom(repository.open('c1'));
    backend.expectOne('/api/cases/c1').flush(DETAIL);
    backend.expectOne('/api/cases/c1/revisions/3').flush(revision(3));
    const value = await opened;
    expect(value).toMatchObject({ caseId: FIXTURE_IDS.case, revision: 3, latestRevision: 3, readOnly: false, labId: FIXTURE_IDS.lab });
    expect(value.params.drive.frequency).toBe(40);
    // A run kind this engine does not know, or settings its run registry refuses, is left out rather than offered
    // for a rerun it cannot do.
    expect(value.runs.map((r) => r.id)).toEqual([FIXTURE_IDS.run]);
  });

  it('opens read-only for a viewer and for an archived case', async () => {
    const asViewer = firstValueFrom(repository.open('c1', 2));
    backend.expectOne('/api/cases/c1').flush({ ...DETAIL, myRole: 'viewer' });
    backend.expectOne('/api/cases/c1/revisions/2').flush(revision(2));
    expect((await asViewer).readOnly).toBe(true);
    const archived = firstValueFrom(repository.open('c1', 2));
    backend.expectOne('/api/cases/c1').flush({ ...DETAIL, archived: true });
    backend.expectOne('/api/cases/c1/revisions/2').flush(revision(2));
    expect((await archived).readOnly).toBe(true);
  });

  it('refuses a reply that breaks the contract instead of filling in defaults', async () => {
    const opened = firstValueFrom(repository.open('c1')).catch((e: unknown) => e);
    const { myRole: _role, ...withoutRole } = DETAIL;
    backend.expectOne('/api/cases/c1').flush(withoutRole);
    const error = await opened;
    expect(error).toBeInstanceOf(ReplyMismatchError);
    expect((error as ReplyMismatchError).details).toContain('myRole');
  });

  it('turns a stale save (409) into a stale_revision error that says to open the latest revision', async () => {
    const saved = firstValueFrom(repository.saveRevision('c1', 2, templateCase(), 'tweak'));
    const request = backend.expectOne('/api/cases/c1/revisions');
    expect(request.request.body).toMatchObject({ baseRevision: 2, note: 'tweak' });
    request.flush({ error: { code: 'stale_revision', message: 'r3 exists' } }, { status: 409, statusText: 'Conflict' });
    const error: unknown = await saved.catch((e: unknown) => e);
    expect(error).toBeInstanceOf(CaseRepositoryError);
    expect((error as CaseRepositoryError).code).toBe('stale_revision');
    expect((error as CaseRepositoryError).message).toMatch(/since you opened r2.*Open the latest revision/);
  });

  it('turns a refused parameter (422) into an invalid error naming the field inside the case', async () => {
    const saved = firstValueFrom(repository.saveRevision('c1', 3, templateCase(), ''));
    backend.expectOne('/api/cases/c1/revisions').flush(
      { error: { code: 'invalid_params', message: 'params.drive.amplitude: must be at most 10', field: 'params.drive.amplitude' } },
      { status: 422, statusText: 'Unprocessable Entity' },
    );
    const error = (await saved.catch((e: unknown) => e)) as CaseRepositoryError;
    expect(error.code).toBe('invalid');
    expect(error.field).toBe('drive.amplitude');
    expect(error.message).toContain('must be at most 10');
  });

  it('refuses to create a case outside a lab without asking the server', async () => {
    const created = firstValueFrom(repository.create({ labId: null, title: 'x', tags: [], params: templateCase(), note: '' }));
    const error = (await created.catch((e: unknown) => e)) as CaseRepositoryError;
    expect(error.code).toBe('invalid');
    backend.expectNone(() => true);
  });
  it('renames with PATCH and answers with the stored title and tags', async () => {
    const renamed = firstValueFrom(repository.rename('c1', ' Teaching rod, long stroke '));
    const request = backend.expectOne('/api/cases/c1');
    expect(request.request.method).toBe('PATCH');
    expect(request.request.body).toEqual({ title: 'Teaching rod, long stroke' });
    request.flush({ ...DETAIL, title: 'Teaching rod, long stroke' });
    expect(await renamed).toEqual({ title: 'Teaching rod, long stroke', tags: ['teaching'] });

    const retagged = firstValueFrom(repository.rename('c1', 'Teaching rod', ['shaker']));
    const second = backend.expectOne('/api/cases/c1');
    expect(second.request.body).toEqual({ title: 'Teaching rod', tags: ['shaker'] });
    second.flush({ ...DETAIL, tags: ['shaker'] });
    expect((await retagged).tags).toEqual(['shaker']);
  });

  it('reports a rename refused for the role in words', async () => {
    const renamed = firstValueFrom(repository.rename('c1', 'New name')).catch((e: unknown) => e);
    backend
      .expectOne('/api/cases/c1')
      .flush({ error: { code: 'role_too_low', message: 'Your role in this lab cannot do that.' } }, { status: 403, statusText: 'Forbidden' });
    const error = await renamed;
    expect(error).toBeInstanceOf(CaseRepositoryError);
    expect((error as CaseRepositoryError).code).toBe('storage');
    expect((error as CaseRepositoryError).message).toMatch(/role/i);
  });
});
