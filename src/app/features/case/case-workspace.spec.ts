import { provideHttpClient } from '@angular/common/http';
import { provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { firstValueFrom } from 'rxjs';

import { handleEngineRequest } from '../../../../shared/compute/handle-request';
import type { EngineRequest, EngineResponse } from '../../../../shared/compute/protocol';
import { WorkerPool, type WorkerLike } from '../../../../shared/compute/worker-pool';
import { templateCase } from '../../../../shared/case/templates';
import { ENGINE_POOL } from '../../core/compute/engine-pool';
import { CASE_REPOSITORY } from './case-repository';
import { CaseWorkspace, messageOf } from './case-workspace';
import { FakeCaseRepository } from './fake-case-repository';

/** A worker that runs the real engine request handler on this thread, one macrotask later. */
class InProcessWorker implements WorkerLike {
  onmessage: ((event: { data: EngineResponse }) => void) | null = null;
  onerror: ((event: { message?: string }) => void) | null = null;
  private terminated = false;

  postMessage(message: EngineRequest): void {
    setTimeout(() => {
      if (this.terminated) return;
      handleEngineRequest(message, (response) => {
        if (!this.terminated) this.onmessage?.({ data: response });
      });
    }, 0);
  }

  terminate(): void {
    this.terminated = true;
  }
}

describe('CaseWorkspace', () => {
  let workspace: CaseWorkspace;

  beforeEach(() => {
    TestBed.configureTestingModule({
      providers: [
        provideHttpClient(),
        provideHttpClientTesting(),
        CaseWorkspace,
        { provide: CASE_REPOSITORY, useExisting: FakeCaseRepository },
        { provide: ENGINE_POOL, useFactory: () => new WorkerPool(() => new InProcessWorker(), 1) },
      ],
    });
    workspace = TestBed.inject(CaseWorkspace);
  });

  function shortenRun(seconds: number): void {
    workspace.form.group.controls.run.controls.duration.setValue(seconds);
    expect(workspace.draft().run.duration).toBe(seconds);
  }

  it('runs the motion through the pool and saves it with the first revision', async () => {
    workspace.startNew('shaker-tall-rod');
    shortenRun(2);
    workspace.runMotion();
    expect(workspace.motionJob.running()).toBe(true);
    await vi.waitFor(() => expect(workspace.motion()).not.toBeNull(), { timeout: 20_000 });
    expect(workspace.motion()?.value.outcome).toBe('holds-upright');
    expect(workspace.runs()).toHaveLength(1);
    expect(workspace.runs()[0].caseDigest).toBe(workspace.draftDigest());

    const saved = await firstValueFrom(workspace.save());
    expect(saved.saved.revision).toBe(1);
    expect(saved.runsStored).toBe(1);
    expect(workspace.runs()).toHaveLength(0);
    expect(workspace.dirty()).toBe(false);
    expect(workspace.storedRuns()).toHaveLength(1);
  });

  it('marks results of earlier inputs as stale and keeps their runs out of a save of other inputs', async () => {
    workspace.startNew(null);
    shortenRun(1);
    workspace.runMotion();
    await vi.waitFor(() => expect(workspace.motion()).not.toBeNull(), { timeout: 20_000 });
    expect(workspace.isStale(workspace.motion())).toBe(false);
    workspace.form.group.controls.drive.controls.amplitude.setValue(12);
    expect(workspace.isStale(workspace.motion())).toBe(true);
    const saved = await firstValueFrom(workspace.save());
    expect(saved.runsStored).toBe(0);
    expect(workspace.runs()).toHaveLength(1);
  });

  it('reports a save from a stale revision in words and keeps the edits', async () => {
    const repository = TestBed.inject(FakeCaseRepository);
    const created = await firstValueFrom(repository.create({ labId: null, title: 'Shared rig', tags: [], params: templateCase(), note: '' }));
    await firstValueFrom(workspace.open(created.caseId, 1));
    await firstValueFrom(repository.saveRevision(created.caseId, 1, templateCase(), 'a colleague'));
    workspace.form.group.controls.drive.controls.frequency.setValue(45);
    const error: unknown = await firstValueFrom(workspace.save()).catch((e: unknown) => e);
    expect(messageOf(error)).toMatch(/you edited r1, but r2 was saved since/);
    expect(workspace.draft().drive.frequency).toBe(45);
    expect(workspace.dirty()).toBe(true);
  });

  it('keeps an opened case unedited through a unit switch and a field put back as it was shown', async () => {
    const repository = TestBed.inject(FakeCaseRepository);
    const params = templateCase();
    params.start.angle = 0.15;
    params.drive.amplitude = 0.0123456789;
    const created = await firstValueFrom(repository.create({ labId: null, title: 'Exact rig', tags: [], params, note: '' }));
    await firstValueFrom(workspace.open(created.caseId, 1));
    const amplitude = workspace.form.group.controls.drive.controls.amplitude;
    workspace.setUnits({ length: 'cm', frequency: 'rpm', angle: 'rad' });
    const shown = amplitude.value;
    expect(String(shown)).toBe('1.23457');
    amplitude.setValue(2);
    expect(workspace.dirty()).toBe(true);
    amplitude.setValue(shown);
    expect(workspace.dirty()).toBe(false);
    expect(workspace.draftDigest()).toBe(created.paramsDigest);
    expect(workspace.draft().start.angle).toBe(0.15);
  });

  it('refuses to save while a field needs attention', async () => {
    workspace.startNew(null);
    workspace.form.group.controls.body.controls.length.setValue(-1);
    expect(workspace.valid()).toBe(false);
    const error: unknown = await firstValueFrom(workspace.save()).catch((e: unknown) => e);
    expect(messageOf(error)).toMatch(/Rig fields need attention/);
  });

  it('cancels a running sweep', async () => {
    workspace.startNew(null);
    workspace.runSweep({ field: 'drive.amplitude', from: 0.002, to: 0.02, steps: 40 });
    await vi.waitFor(() => expect(workspace.sweepPartial().length).toBeGreaterThan(0), { timeout: 20_000 });
    workspace.sweepJob.cancel();
    expect(workspace.sweepJob.running()).toBe(false);
    expect(workspace.sweepJob.cancelled()).toBe(true);
    expect(workspace.sweep()).toBeNull();
    expect(workspace.runs()).toHaveLength(0);
  });
});
