import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { ComponentFixture, TestBed } from '@angular/core/testing';
import { provideRouter } from '@angular/router';

import { templateCase } from '../../../../shared/case';
import { handleEngineRequest } from '../../../../shared/compute/handle-request';
import { WorkerPool, type WorkerLike } from '../../../../shared/compute/worker-pool';
import { encodeRunResult } from '../../../../shared/engine/result-codec';
import { computeRun, makeRunRecord, type RunSettings } from '../../../../shared/engine/run-record';
import { ENGINE_POOL } from '../../core/compute/engine-pool';
import { revisionReply } from '../library/reply-fixtures';
import type { RunView } from '../library/library-types';
import { VisitorPage } from './visitor-page';

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
const TOKEN = 'T'.repeat(43);
const MOTION_ID = '00000000-0000-4000-8000-0000000000e1';
const MARGINS_ID = '00000000-0000-4000-8000-0000000000e2';

function stored(id: string, settings: RunSettings): { view: RunView; text: string } {
  const result = computeRun(PARAMS, settings);
  const record = makeRunRecord(PARAMS, settings, result);
  const view = {
    id,
    kind: settings.kind,
    settings: record.settings,
    summary: record.summary,
    resultDigest: record.resultDigest,
    engineVersion: record.engineVersion,
    verification: { state: 'verified', verifiedAt: '2026-11-30T10:00:05.000Z', engineVersion: record.engineVersion, failure: null, claimed: null, differences: [], resultBytes: { raw: 9000, compressed: 4000 } },
    author: null,
    createdAt: '2026-11-30T10:00:00.000Z',
  } as unknown as RunView;
  return { view, text: encodeRunResult(result) };
}

describe('VisitorPage', () => {
  let fixture: ComponentFixture<VisitorPage>;
  let backend: HttpTestingController;

  beforeEach(() => {
    TestBed.configureTestingModule({
      imports: [VisitorPage],
      providers: [provideRouter([]), provideHttpClient(), provideHttpClientTesting(), { provide: ENGINE_POOL, useFactory: () => new WorkerPool(inThreadWorker, 1) }],
    });
    backend = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(VisitorPage);
    fixture.componentRef.setInput('token', TOKEN);
  });
  afterEach(() => backend.verify());

  it('shows the rig in user units with its schematic, the stored outcome and the margins, and no raw keys', async () => {
    const motion = stored(MOTION_ID, { kind: 'motion' });
    const margins = stored(MARGINS_ID, { kind: 'margins', relTolerance: 1e-6 });
    fixture.detectChanges();
    const revision = revisionReply(1, PARAMS, { caseTitle: 'Teaching rod', runs: [motion.view, margins.view] });
    delete (revision as { comments?: unknown }).comments;
    backend.expectOne(`/api/links/${TOKEN}`).flush({ caseTitle: 'Teaching rod', labName: 'Pendulum lab', revision, expiresAt: '2026-12-30T10:00:00.000Z' });
    fixture.detectChanges();
    await new Promise((resolve) => setTimeout(resolve));
    fixture.detectChanges();
    backend.expectOne(`/api/links/${TOKEN}/runs/${MOTION_ID}/result`).flush(motion.text);
    backend.expectOne(`/api/links/${TOKEN}/runs/${MARGINS_ID}/result`).flush(margins.text);
    fixture.detectChanges();
    await fixture.whenStable();
    fixture.detectChanges();

    const host = fixture.nativeElement as HTMLElement;
    const text = host.textContent ?? '';
    expect(host.querySelector('qp-rig-schematic svg')).not.toBeNull();
    expect(host.querySelector('qp-outcome-card')).not.toBeNull();
    expect(host.querySelector('[data-testid="visitor-margins"] qp-margin-gauge')).not.toBeNull();
    expect(text).toContain('Drive amplitude');
    expect(text).toMatch(/\d mm/);
    expect(text).toMatch(/\d Hz/);
    expect(text).not.toMatch(/start\.rate|damping\.viscousRatio|schemaVersion|drive\.amplitude/);
  }, 60_000);
});
