import { provideHttpClient } from '@angular/common/http';
import { provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { firstValueFrom } from 'rxjs';

import { templateCase } from '../../../../shared/case/templates';
import type { RunKind } from '../../../../shared/engine/run-record';
import { ENGINE_POOL } from '../../core/compute/engine-pool';
import { CASE_REPOSITORY } from './case-repository';
import { CaseWorkspace, type Computed } from './case-workspace';
import { FakeCaseRepository } from './fake-case-repository';
import { StoredMark, storedMarkText } from './stored-mark';

describe('storedMarkText', () => {
  const mark = {
    runId: 'r',
    kind: 'sweep' as const,
    revision: 4,
    computedAt: '2026-12-02T14:05:00.000Z',
    authorName: 'Ada Analyst',
    verification: { state: 'verified' as const, verifiedAt: null, engineVersion: null, failure: null, claimed: null, differences: [], resultBytes: null },
  };

  it('names the revision, the kind as the tabs do, when and by whom', () => {
    expect(storedMarkText(mark, 'en-US')).toMatch(/^Stored r4 · Sweep, computed 2 Dec 2026 \d\d:\d\d by Ada Analyst$/);
  });

  it('names a former member when the author is gone', () => {
    expect(storedMarkText({ ...mark, kind: 'margins', authorName: null }, 'en-US')).toMatch(/^Stored r4 · Floquet margins, computed .* by a former member$/);
  });
});

describe('StoredMark', () => {
  const verified = { state: 'verified' as const, verifiedAt: '2026-12-02T14:06:00.000Z', engineVersion: 'v', failure: null, claimed: null, differences: [], resultBytes: null };

  beforeEach(() => {
    TestBed.configureTestingModule({
      providers: [
        provideHttpClient(),
        provideHttpClientTesting(),
        CaseWorkspace,
        { provide: CASE_REPOSITORY, useExisting: FakeCaseRepository },
        { provide: ENGINE_POOL, useValue: null },
      ],
    });
  });

  function render(result: Computed<unknown> | null, kind: RunKind): HTMLElement {
    const fixture = TestBed.createComponent(StoredMark);
    fixture.componentRef.setInput('result', result);
    fixture.componentRef.setInput('kind', kind);
    fixture.detectChanges();
    return fixture.nativeElement as HTMLElement;
  }

  it('marks a stored result with its origin and the server check in History\'s words', () => {
    const params = templateCase();
    const stored = { runId: 'r', kind: 'motion' as const, revision: 2, computedAt: '2026-12-02T14:05:00.000Z', authorName: 'Ada Analyst', verification: verified };
    const host = render({ value: {}, params, paramsDigest: 'd', settings: { kind: 'motion' }, stored }, 'motion');
    expect(host.querySelector('[data-testid="stored-mark"]')?.textContent).toMatch(/Stored r2 · Motion, computed 2 Dec 2026 \d\d:\d\d by Ada Analyst/);
    expect(host.querySelector('[data-testid="stored-verification"]')?.textContent?.trim()).toBe('Verified by the server');
  });

  it('says nothing over a result computed on this page, and nothing when no stored run waits', () => {
    const host = render({ value: {}, params: templateCase(), paramsDigest: 'd', settings: { kind: 'motion' } }, 'motion');
    expect(host.textContent?.trim()).toBe('');
    expect(render(null, 'sweep').textContent?.trim()).toBe('');
  });

  it('says why a stored run of the opened revision is not shown yet', async () => {
    const repository = TestBed.inject(FakeCaseRepository);
    const params = templateCase();
    const created = await firstValueFrom(repository.create({ labId: null, title: 'Rig', tags: [], params, note: '' }));
    const record = { kind: 'sweep' as const, params, settings: { kind: 'sweep' as const, spec: { field: 'drive.amplitude', from: 0.001, to: 0.002, steps: 2 } }, summary: {}, resultDigest: 'x', engineVersion: 'v' };
    await firstValueFrom(repository.saveRun(created.caseId, 1, record));
    await firstValueFrom(TestBed.inject(CaseWorkspace).open(created.caseId, 1));
    const note = render(null, 'sweep').querySelector('[data-testid="stored-note"]');
    expect(note?.textContent).toContain('Sweep stored with r1: the server is still checking it');
  });
});
