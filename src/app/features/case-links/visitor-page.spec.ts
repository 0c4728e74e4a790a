import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { Component, input } from '@angular/core';
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
import { Plot, type PlotSpec } from '../../ui/plot/plot';
import { VisitorPage } from './visitor-page';

/** Plotly cannot draw in jsdom (no canvas): the plot's place, title and trace count stand in for it. */
@Component({
  selector: 'qp-plot',
  template: `<figure><span class="plot-title">{{ title() }}</span><span class="traces">{{ data().length }}</span></figure>`,
})
class PlotStandIn {
  readonly data = input.required<readonly PlotSpec[]>();
  readonly layout = input<PlotSpec>({});
  readonly title = input.required<string>();
  readonly csv = input<unknown>(null);
  readonly height = input(320);
}

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
const SWEEP_ID = '00000000-0000-4000-8000-0000000000e3';
const CHART_ID = '00000000-0000-4000-8000-0000000000e4';
const PENDING_ID = '00000000-0000-4000-8000-0000000000e5';

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
    TestBed.overrideComponent(VisitorPage, { remove: { imports: [Plot] }, add: { imports: [PlotStandIn] } });
    backend = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(VisitorPage);
    fixture.componentRef.setInput('token', TOKEN);
  });
  afterEach(() => backend.verify());

  it('draws the stored motion, phase portrait, sweep and chart with the tabs\' plots, and asks nothing of a pending run', async () => {
    const a = PARAMS.drive.amplitude;
    const f = PARAMS.drive.frequency;
    const motion = stored(MOTION_ID, { kind: 'motion' });
    const sweep = stored(SWEEP_ID, { kind: 'sweep', spec: { field: 'drive.amplitude', from: a / 2, to: a * 1.5, steps: 3 } });
    const chart = stored(CHART_ID, {
      kind: 'chart',
      grid: { x: { field: 'drive.frequency', from: f / 2, to: f * 2, count: 4 }, y: { field: 'drive.amplitude', from: a / 4, to: a * 2, count: 4 } },
    });
    const later = stored(PENDING_ID, { kind: 'motion' });
    const pending = { ...later.view, createdAt: '2026-11-30T11:00:00.000Z', verification: { ...later.view.verification, state: 'pending', verifiedAt: null } } as RunView;
    fixture.detectChanges();
    const revision = revisionReply(1, PARAMS, { caseTitle: 'Teaching rod', runs: [motion.view, sweep.view, chart.view, pending] });
    delete (revision as { comments?: unknown }).comments;
    backend.expectOne(`/api/links/${TOKEN}`).flush({ caseTitle: 'Teaching rod', labName: 'Pendulum lab', revision, expiresAt: '2026-12-30T10:00:00.000Z' });
    fixture.detectChanges();
    await new Promise((resolve) => setTimeout(resolve));
    fixture.detectChanges();
    backend.expectOne(`/api/links/${TOKEN}/runs/${MOTION_ID}/result`).flush(motion.text);
    backend.expectOne(`/api/links/${TOKEN}/runs/${SWEEP_ID}/result`).flush(sweep.text);
    backend.expectOne(`/api/links/${TOKEN}/runs/${CHART_ID}/result`).flush(chart.text);
    backend.expectNone(`/api/links/${TOKEN}/runs/${PENDING_ID}/result`);
    fixture.detectChanges();
    await fixture.whenStable();
    fixture.detectChanges();

    const host = fixture.nativeElement as HTMLElement;
    for (const id of ['visitor-motion-plot', 'visitor-phase-plot', 'visitor-sweep-plot', 'visitor-chart-plot']) {
      expect(host.querySelector(`[data-testid="${id}"] figure`), id).not.toBeNull();
    }
    const titles = Array.from(host.querySelectorAll('qp-plot .plot-title'), (e) => e.textContent?.trim());
    expect(titles).toEqual(['Angle against time', 'Phase portrait', 'Sweep: outcome and slow frequency', 'Stability chart']);
    for (const count of host.querySelectorAll('qp-plot .traces')) expect(Number(count.textContent)).toBeGreaterThan(0);
    expect(host.querySelector('qp-outcome-card')).not.toBeNull();
    expect(host.querySelector('[data-testid="visitor-margins"]')).toBeNull();
    expect(host.textContent).toContain('Verified by the server');
    expect(host.textContent).toContain('Server check running');
  }, 60_000);

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
    // Settings read as the tabs show them: no file-format bookkeeping, degrees written against the number.
    const settings = Array.from(host.querySelectorAll('.params-table tbody tr'), (tr) => tr.textContent?.trim() ?? '');
    expect(settings.some((row) => row.startsWith('Case format version'))).toBe(false);
    expect(settings.find((row) => row.startsWith('Drive direction'))).toMatch(/\d°$/);
    expect(host.querySelector('.params-table [title]')).toBeNull();
  }, 60_000);
});
