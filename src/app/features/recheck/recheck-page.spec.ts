import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { ComponentFixture, TestBed } from '@angular/core/testing';
import { provideRouter } from '@angular/router';

import { templateCase } from '../../../../shared/case';
import { handleEngineRequest } from '../../../../shared/compute/handle-request';
import { WorkerPool, type WorkerLike } from '../../../../shared/compute/worker-pool';
import { computeRun, makeRunRecord } from '../../../../shared/engine/run-record';
import { ENGINE_POOL } from '../../core/compute/engine-pool';
import { RecheckPage } from './recheck-page';

/** The real pool and engine, with the worker boundary replaced by a task on this thread. */
function inThreadWorker(): WorkerLike {
  const worker: WorkerLike = {
    onmessage: null,
    onerror: null,
    postMessage: (message) => setTimeout(() => handleEngineRequest(message, (response) => worker.onmessage?.({ data: response }))),
    terminate: () => undefined,
  };
  return worker;
}

const PARAMS = (() => {
  const p = templateCase();
  return { ...p, run: { ...p.run, duration: 2, outputPoints: 400 } };
})();

function storedRuns(): object[] {
  const record = makeRunRecord(PARAMS, { kind: 'motion' }, computeRun(PARAMS, { kind: 'motion' }));
  const view = (id: string, summary: object) => ({
    id,
    kind: 'motion',
    settings: record.settings,
    summary,
    resultDigest: record.resultDigest,
    engineVersion: record.engineVersion,
    author: { id: 'u2', name: 'Ada Analyst' },
    createdAt: '2026-11-30T10:00:00.000Z',
  });
  const maxDeviation = Number(record.summary['maxDeviation']);
  return [view('run-good', record.summary), view('run-edited', { ...record.summary, maxDeviation: maxDeviation * 1.01 })];
}

describe('RecheckPage', () => {
  let fixture: ComponentFixture<RecheckPage>;
  let backend: HttpTestingController;
  let host: HTMLElement;

  beforeEach(async () => {
    TestBed.configureTestingModule({
      imports: [RecheckPage],
      providers: [
        provideRouter([{ path: 'cases/:caseId/r/:rev/history', children: [] }]),
        provideHttpClient(),
        provideHttpClientTesting(),
        { provide: ENGINE_POOL, useFactory: () => new WorkerPool(inThreadWorker, 1) },
      ],
    });
    backend = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(RecheckPage);
    fixture.componentRef.setInput('caseId', 'c1');
    fixture.componentRef.setInput('rev', '2');
    host = fixture.nativeElement as HTMLElement;
    fixture.detectChanges();
    backend.expectOne('/api/cases/c1').flush({
      id: 'c1', title: 'Bench rod', tags: [], lab: { id: 'lab-1', name: 'Shaker Lab' }, archived: false, latestRevision: 2,
      myRole: 'reviewer', revisions: [],
    });
    backend.expectOne('/api/cases/c1/revisions/2').flush({
      caseId: 'c1', caseTitle: 'Bench rod', number: 2, params: PARAMS, schemaVersion: 1, paramsDigest: 'd'.repeat(64), note: '',
      author: { id: 'u2', name: 'Ada Analyst' }, createdAt: '2026-11-30T10:00:00.000Z', recheckState: 'awaiting-recheck',
      recheckRequest: { requestedBy: { id: 'u2', name: 'Ada Analyst' }, reviewer: { id: 'u3', name: 'Rui Reviewer' }, message: 'Please check r2', requestedAt: '2026-11-30T10:05:00.000Z' },
      runs: storedRuns(), rechecks: [],
    });
    fixture.detectChanges();
    await fixture.whenStable();
  });

  afterEach(() => backend.verify());

  function panelStates(): string[] {
    return Array.from(host.querySelectorAll('.run-state'), (e) => e.textContent?.trim() ?? '');
  }

  it('reruns every stored run, shows each comparison and posts a dispute with them', async () => {
    expect(host.textContent).toContain('Please check r2');
    host.querySelector<HTMLButtonElement>('.rerun-button')?.click();
    await vi.waitFor(
      () => {
        fixture.detectChanges();
        expect(host.querySelectorAll('qp-comparison-table').length).toBe(2);
      },
      { timeout: 20_000, interval: 50 },
    );
    expect(panelStates()).toEqual(['same numbers, same digest', '1 number outside tolerance']);
    const mismatched = Array.from(host.querySelectorAll('tr.mismatch th'), (e) => e.textContent?.trim());
    expect(mismatched).toEqual(['maxDeviation']);
    expect(host.querySelector('.summary')?.textContent).toContain('Some reruns do not match');

    host.querySelector<HTMLButtonElement>('.dispute')?.click();
    fixture.detectChanges();
    expect(host.querySelector('[role="alert"]')?.textContent).toContain('Say why you dispute');

    const comment = host.querySelector<HTMLTextAreaElement>('.comment textarea');
    if (!comment) throw new Error('no comment box');
    comment.value = 'maxDeviation moved by 1 %';
    comment.dispatchEvent(new Event('input'));
    fixture.detectChanges();
    host.querySelector<HTMLButtonElement>('.dispute')?.click();
    const posted = backend.expectOne('/api/cases/c1/revisions/2/rechecks');
    const body = posted.request.body as { verdict: string; comment: string; comparisons: { runId: string; digestMatch: boolean; numbers: { name: string; match: boolean }[] }[] };
    expect(body.verdict).toBe('disputed');
    expect(body.comment).toBe('maxDeviation moved by 1 %');
    expect(body.comparisons.map((c) => [c.runId, c.digestMatch])).toEqual([['run-good', true], ['run-edited', true]]);
    expect(body.comparisons[1].numbers.filter((n) => !n.match).map((n) => n.name)).toEqual(['maxDeviation']);
    posted.flush({ id: 'rc1', reviewer: { id: 'u3', name: 'Rui Reviewer' }, state: 'disputed', digestMatch: true, comparisons: [], comment: '', createdAt: '' });
  }, 30_000);
});
