import { provideHttpClient } from '@angular/common/http';
import { provideHttpClientTesting } from '@angular/common/http/testing';
import { Component, input } from '@angular/core';
import { ComponentFixture, TestBed } from '@angular/core/testing';
import { provideRouter } from '@angular/router';
import { TestbedHarnessEnvironment } from '@angular/cdk/testing/testbed';
import { MatSelectHarness } from '@angular/material/select/testing';
import { firstValueFrom } from 'rxjs';

import { handleEngineRequest } from '../../../../../shared/compute/handle-request';
import type { EngineRequest, EngineResponse } from '../../../../../shared/compute/protocol';
import { WorkerPool, type WorkerLike } from '../../../../../shared/compute/worker-pool';
import { templateCase } from '../../../../../shared/case/templates';
import { computeRun, makeRunRecord, type RunSettings } from '../../../../../shared/engine/run-record';
import { ENGINE_POOL } from '../../../core/compute/engine-pool';
import { CASE_REPOSITORY } from '../case-repository';
import { CaseServerJobs } from '../case-server-jobs';
import { CaseWorkspace } from '../case-workspace';
import { FakeCaseRepository } from '../fake-case-repository';
import { Plot, type PlotCsv, type PlotSpec } from '../../../ui/plot/plot';
import { OutcomeMapPanel } from './outcome-map-panel';

/** Plotly cannot draw in jsdom (no canvas): the plot's title, first trace and CSV rows stand in for it. */
@Component({
  selector: 'qp-plot',
  template: `<figure><span class="plot-title">{{ title() }}</span><span class="csv-rows">{{ csv()?.rows?.length }}</span></figure>`,
})
class PlotStandIn {
  readonly data = input.required<readonly PlotSpec[]>();
  readonly layout = input<PlotSpec>({});
  readonly title = input.required<string>();
  readonly csv = input<PlotCsv | null>(null);
  readonly height = input(320);
}

/** The real engine behind the pool, answering on the next task. */
class InProcessWorker implements WorkerLike {
  onmessage: ((event: { data: EngineResponse }) => void) | null = null;
  onerror: ((event: { message?: string }) => void) | null = null;
  postMessage(message: EngineRequest): void {
    setTimeout(() => handleEngineRequest(message, (response) => this.onmessage?.({ data: response })), 0);
  }
  terminate(): void {
    this.onmessage = null;
  }
}

describe('OutcomeMapPanel', { timeout: 60_000 }, () => {
  let fixture: ComponentFixture<OutcomeMapPanel>;
  let host: HTMLElement;
  let workspace: CaseWorkspace;

  beforeEach(() => {
    TestBed.configureTestingModule({
      imports: [OutcomeMapPanel],
      providers: [
        provideHttpClient(),
        provideHttpClientTesting(),
        provideRouter([]),
        CaseWorkspace,
        CaseServerJobs,
        { provide: CASE_REPOSITORY, useExisting: FakeCaseRepository },
        { provide: ENGINE_POOL, useFactory: () => new WorkerPool(() => new InProcessWorker(), 1) },
      ],
    });
    TestBed.overrideComponent(OutcomeMapPanel, { remove: { imports: [Plot] }, add: { imports: [PlotStandIn] } });
    workspace = TestBed.inject(CaseWorkspace);
    workspace.startNew(null);
    workspace.form.group.controls.run.controls.duration.setValue(1);
  });

  async function render(): Promise<void> {
    fixture = TestBed.createComponent(OutcomeMapPanel);
    host = fixture.nativeElement as HTMLElement;
    fixture.detectChanges();
    await fixture.whenStable();
  }

  const fieldText = (axis: 'x' | 'y') =>
    TestbedHarnessEnvironment.loader(fixture).getHarness(MatSelectHarness.with({ selector: `[data-testid=outcome-map-${axis}-field]` })).then((h) => h.getValueText());

  const byTest = (id: string) => host.querySelector<HTMLElement>(`[data-testid="${id}"]`);

  async function type(id: string, value: string): Promise<void> {
    const input = byTest(id) as HTMLInputElement;
    input.value = value;
    input.dispatchEvent(new Event('input'));
    fixture.detectChanges();
    await fixture.whenStable();
  }

  it('offers drive frequency by drive amplitude in Hz and mm, and says in words why a form cannot run', async () => {
    await render();
    expect(await fieldText('x')).toBe('Drive frequency');
    expect(byTest('outcome-map-x')?.textContent).toContain('Hz');
    expect(await fieldText('y')).toBe('Drive amplitude');
    expect(byTest('outcome-map-y')?.textContent).toContain('mm');
    expect((byTest('outcome-map-x-from') as HTMLInputElement).value).toBe(String(workspace.draft().drive.frequency / 2));
    expect(byTest('outcome-map-size')?.textContent).toContain('81 cells, each a motion run of 1 s.');
    expect(host.textContent).not.toMatch(/drive\.amplitude|drive\.frequency/);

    await type('outcome-map-y-count', '500');
    expect(byTest('run-refusal')?.textContent).toContain('Vertical axis: cells must be a whole number from 2 to 200.');
    expect((byTest('run-outcome-map') as HTMLButtonElement).disabled).toBe(true);
    await type('outcome-map-y-count', '200');
    await type('outcome-map-x-count', '200');
    expect(byTest('run-refusal')).toBeNull();
    expect(byTest('outcome-map-size')?.textContent).toContain('Run on the server keeps going when you close the page');
  });

  it('computes a small map in the workers and shows the heatmap with the count of each outcome', async () => {
    await render();
    await type('outcome-map-x-count', '3');
    await type('outcome-map-y-count', '2');
    (byTest('run-outcome-map') as HTMLButtonElement).click();
    await vi.waitFor(() => expect(workspace.outcomeMap()).not.toBeNull(), { timeout: 30_000 });
    fixture.detectChanges();
    await fixture.whenStable();
    const rows = [...(byTest('outcome-map-counts')?.querySelectorAll('tbody tr') ?? [])].map((r) =>
      [...r.querySelectorAll('td')].map((td) => td.textContent?.trim()),
    );
    expect(rows.map((r) => r[0])).toEqual(['holds upright', 'settles tilted', 'falls', 'tumbles', 'irregular']);
    expect(rows.reduce((sum, r) => sum + Number(r[1]), 0)).toBe(6);
    for (const r of rows) expect(r[2]).toMatch(/^\d+(\.\d+)? %$/);
    const total = workspace.outcomeMap()?.value.cells.length;
    expect(total).toBe(6);
    expect(byTest('outcome-map-computed')?.textContent?.trim()).toBe('6 cells.');
    expect(host.querySelector('qp-plot')?.getAttribute('data-testid')).toBe('outcome-map-plot');
    expect(host.querySelector('qp-plot .plot-title')?.textContent).toBe('Outcome map: Drive frequency by Drive amplitude');
    expect(host.querySelector('qp-plot .csv-rows')?.textContent).toBe('6');
  });

  it('shows a stored map of the opened revision with its mark, and puts its settings in the form', async () => {
    const repository = TestBed.inject(FakeCaseRepository);
    const params = { ...templateCase(), run: { ...templateCase().run, duration: 1, outputPoints: 200 } };
    const created = await firstValueFrom(repository.create({ labId: null, title: 'Stored map', tags: [], params, note: '' }));
    const f = params.drive.frequency;
    const a = params.drive.amplitude;
    const settings: RunSettings = {
      kind: 'map',
      grid: { x: { field: 'drive.amplitude', from: a / 2, to: a, count: 2 }, y: { field: 'drive.frequency', from: f / 2, to: f, count: 3, scale: 'log' } },
    };
    const result = computeRun(params, settings);
    const stored = await firstValueFrom(repository.saveRun(created.caseId, 1, makeRunRecord(params, settings, result)));
    repository.settleRun(created.caseId, 1, stored.id, result);
    await firstValueFrom(workspace.open(created.caseId, 1));
    await render();
    await vi.waitFor(() => expect(workspace.outcomeMap()?.stored).toBeDefined());
    fixture.detectChanges();
    await fixture.whenStable();
    expect(byTest('stored-mark')?.textContent).toMatch(/Stored r1 · Outcome map, computed/);
    expect(await fieldText('x')).toBe('Drive amplitude');
    expect(await fieldText('y')).toBe('Drive frequency');
    expect(await TestbedHarnessEnvironment.loader(fixture).getHarness(MatSelectHarness.with({ selector: '[data-testid=outcome-map-y-scale]' })).then((h) => h.getValueText())).toBe('logarithmic');
    expect((byTest('outcome-map-y-count') as HTMLInputElement).value).toBe('3');
    expect(byTest('outcome-map-computed')?.textContent?.trim()).toBe('6 cells.');
  });
});
