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
import { caseDetailReply, revisionReply } from '../library/reply-fixtures';
import type { RunView } from '../library/library-types';

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

const RUN_GOOD = '00000000-0000-4000-8000-0000000000e1';
const RUN_EDITED = '00000000-0000-4000-8000-0000000000e2';
const ANALYST = { id: '00000000-0000-4000-8000-0000000000a1', name: 'Ada Analyst' };
const REVIEWER = { id: '00000000-0000-4000-8000-0000000000b1', name: 'Rui Reviewer' };

function storedRuns(): object[] {
  const record = makeRunRecord(PARAMS, { kind: 'motion' }, computeRun(PARAMS, { kind: 'motion' }));
  const maxDeviation = Number(record.summary['maxDeviation']);
  const view = (id: string, summary: object, verification: object) => ({
    id,
    kind: 'motion',
    settings: record.settings,
    summary,
    resultDigest: record.resultDigest,
    engineVersion: record.engineVersion,
    verification,
    author: ANALYST,
    createdAt: '2026-11-30T10:00:00.000Z',
  });
  const verified = { state: 'verified', verifiedAt: '2026-11-30T10:00:05.000Z', engineVersion: record.engineVersion, failure: null, claimed: null, differences: [], resultBytes: { raw: 9000, compressed: 4000 } };
  const unreproduced = {
    ...verified,
    state: 'unreproduced',
    differences: [{ name: 'maxDeviation', stored: maxDeviation * 1.01, rerun: maxDeviation, difference: maxDeviation * 0.01, tolerance: maxDeviation * 1e-6, match: false }],
  };
  return [view(RUN_GOOD, record.summary, verified), view(RUN_EDITED, { ...record.summary, maxDeviation: maxDeviation * 1.01 }, unreproduced)];
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
    backend.expectOne('/api/cases/c1').flush(caseDetailReply({ title: 'Bench rod', latestRevision: 2, myRole: 'reviewer' }));
    backend.expectOne('/api/cases/c1/revisions/2').flush(
      revisionReply(2, PARAMS, {
        caseTitle: 'Bench rod',
        recheckState: 'awaiting-recheck',
        recheckRequest: { requestedBy: ANALYST, reviewer: REVIEWER, message: 'Please check r2', requestedAt: '2026-11-30T10:05:00.000Z' },
        runs: storedRuns() as RunView[],
      }),
    );
    fixture.detectChanges();
    await fixture.whenStable();
  });

  afterEach(() => backend.verify());

  function panelStates(): string[] {
    return Array.from(host.querySelectorAll('.run-state'), (e) => e.textContent?.trim() ?? '');
  }

  it('shows the server\'s verdict on each run, refuses a confirm it could not reproduce, and posts only verdict and comment', () => {
    expect(host.textContent).toContain('Please check r2');
    const states = Array.from(host.querySelectorAll('.server-run .state'), (e) => e.textContent?.replace(/\s+/g, ' ').trim() ?? '');
    expect(states[0]).toContain('Verified');
    expect(states[1]).toContain('Unreproduced: 1 number(s) differ.');
    expect(Array.from(host.querySelectorAll('.server-run tr.mismatch th'), (e) => e.textContent?.trim())).toEqual(['Largest slow deviation from upright']);
    expect(host.querySelector('.summary')?.textContent).toContain('did not reproduce every stored run');
    expect(host.querySelector<HTMLButtonElement>('.confirm')?.disabled).toBe(true);

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
    expect(posted.request.body).toEqual({ verdict: 'disputed', comment: 'maxDeviation moved by 1 %' });
    posted.flush({ id: '00000000-0000-4000-8000-0000000000f1', reviewer: REVIEWER, state: 'disputed', digestMatch: true, comparisons: [], comment: 'maxDeviation moved by 1 %', createdAt: '2026-11-30T10:10:00.000Z' });
  });

  it('still reruns every stored run in this browser on request and shows each comparison', async () => {
    host.querySelector<HTMLButtonElement>('.rerun-button')?.click();
    await vi.waitFor(
      () => {
        fixture.detectChanges();
        expect(host.querySelectorAll('qp-rerun-panel qp-comparison-table').length).toBe(2);
      },
      { timeout: 20_000, interval: 50 },
    );
    expect(panelStates()).toEqual(['same numbers, same digest', '1 number outside tolerance']);
  }, 30_000);
});
