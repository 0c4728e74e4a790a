import { provideHttpClient } from '@angular/common/http';
import { provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { firstValueFrom, of } from 'rxjs';

import { handleEngineRequest } from '../../../../shared/compute/handle-request';
import type { EngineRequest, EngineResponse } from '../../../../shared/compute/protocol';
import { WorkerPool, type WorkerLike } from '../../../../shared/compute/worker-pool';
import { templateCase } from '../../../../shared/case/templates';
import { computeRun, makeRunRecord, type RunSettings } from '../../../../shared/engine/run-record';
import { ENGINE_POOL } from '../../core/compute/engine-pool';
import { CASE_REPOSITORY, type StoredRun } from './case-repository';
import { CaseWorkspace, STORED_PENDING_RECHECK_MS, messageOf, storedRunsToShow } from './case-workspace';
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

describe('storedRunsToShow', () => {
  const run = (id: string, kind: StoredRun['kind'], createdAt: string, state: StoredRun['verification']['state']): StoredRun =>
    ({ id, kind, createdAt, verification: { state }, settings: { kind }, summary: {}, resultDigest: 'x', engineVersion: 'v' }) as StoredRun;

  it('picks the latest settled run of each shown kind and lists kinds whose runs are all still pending', () => {
    const runs = [
      run('m1', 'motion', '2026-12-01T10:00:00Z', 'verified'),
      run('m2', 'motion', '2026-12-01T11:00:00Z', 'unreproduced'),
      run('m3', 'motion', '2026-12-01T12:00:00Z', 'pending'),
      run('s1', 'sweep', '2026-12-01T10:00:00Z', 'pending'),
      run('o1', 'map', '2026-12-01T10:00:00Z', 'verified'),
    ];
    const { show, pending } = storedRunsToShow(runs);
    expect(show.map((r) => r.id)).toEqual(['m2', 'o1']);
    expect(pending).toEqual(['sweep']);
  });
});

describe('CaseWorkspace', () => {
  let workspace: CaseWorkspace;
  /** Engine workers the pool has made: a stored result must be shown without any. */
  let workersMade = 0;

  beforeEach(() => {
    workersMade = 0;
    TestBed.configureTestingModule({
      providers: [
        provideHttpClient(),
        provideHttpClientTesting(),
        CaseWorkspace,
        { provide: CASE_REPOSITORY, useExisting: FakeCaseRepository },
        {
          provide: ENGINE_POOL,
          useFactory: () =>
            new WorkerPool(() => {
              workersMade++;
              return new InProcessWorker();
            }, 1),
        },
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

  it('runs an outcome map through the pool, its rows filling in as they finish, and records it for the next save', async () => {
    workspace.startNew('shaker-tall-rod');
    shortenRun(1);
    const f = workspace.draft().drive.frequency;
    const a = workspace.draft().drive.amplitude;
    const grid = {
      x: { field: 'drive.frequency', from: f / 2, to: f, count: 3 },
      y: { field: 'drive.amplitude', from: a / 2, to: a, count: 2 },
    };
    workspace.runOutcomeMap(grid);
    expect(workspace.outcomeMapJob.running()).toBe(true);
    expect(workspace.outcomeMapPartial()?.cells).toEqual([null, null, null, null, null, null]);
    await vi.waitFor(() => expect(workspace.outcomeMap()).not.toBeNull(), { timeout: 30_000 });
    const value = workspace.outcomeMap()?.value;
    expect(value?.cells).toHaveLength(6);
    expect(value?.cells.every((c) => c.outcome !== null)).toBe(true);
    expect(workspace.outcomeMap()?.settings).toEqual({ kind: 'map', grid });
    expect(workspace.outcomeMapPartial()).toBeNull();
    expect(workspace.runs().map((r) => r.kind)).toEqual(['map']);
  });

  it('cancels a running outcome map and records nothing', async () => {
    workspace.startNew(null);
    shortenRun(2);
    const a = workspace.draft().drive.amplitude;
    const f = workspace.draft().drive.frequency;
    workspace.runOutcomeMap({
      x: { field: 'drive.frequency', from: f / 2, to: f, count: 4 },
      y: { field: 'drive.amplitude', from: a / 2, to: a, count: 8 },
    });
    await vi.waitFor(() => expect(workspace.outcomeMapPartial()?.done).toBeGreaterThan(0), { timeout: 30_000 });
    workspace.outcomeMapJob.cancel();
    expect(workspace.outcomeMapJob.cancelled()).toBe(true);
    expect(workspace.outcomeMap()).toBeNull();
    expect(workspace.runs()).toHaveLength(0);
  });

  describe('stored runs of an opened revision', () => {
    const params = (() => {
      const p = templateCase();
      return { ...p, run: { ...p.run, duration: 1, outputPoints: 200 } };
    })();

    /** A revision with a motion run and a sweep run the server has settled (their full results stored). */
    async function storedRevision(): Promise<{ caseId: string; motionId: string }> {
      const repository = TestBed.inject(FakeCaseRepository);
      const created = await firstValueFrom(repository.create({ labId: null, title: 'Stored rig', tags: [], params, note: '' }));
      const a = params.drive.amplitude;
      const f = params.drive.frequency;
      const runs: RunSettings[] = [
        { kind: 'motion' },
        { kind: 'sweep', spec: { field: 'drive.amplitude', from: a / 2, to: a * 1.5, steps: 3 } },
        {
          kind: 'map',
          grid: { x: { field: 'drive.frequency', from: f / 2, to: f, count: 2 }, y: { field: 'drive.amplitude', from: a / 2, to: a, count: 2 } },
        },
      ];
      let motionId = '';
      for (const settings of runs) {
        const result = computeRun(params, settings);
        const stored = await firstValueFrom(repository.saveRun(created.caseId, 1, makeRunRecord(params, settings, result)));
        repository.settleRun(created.caseId, 1, stored.id, result);
        if (settings.kind === 'motion') motionId = stored.id;
      }
      return { caseId: created.caseId, motionId };
    }

    it('shows them marked with the revision and the server verdict, without starting a worker job', async () => {
      const { caseId, motionId } = await storedRevision();
      await firstValueFrom(workspace.open(caseId, 1));
      await vi.waitFor(() => expect(workspace.sweep()).not.toBeNull());
      expect(workspace.motion()?.stored).toMatchObject({ runId: motionId, kind: 'motion', revision: 1, verification: { state: 'verified' } });
      expect(workspace.motion()?.value.outcome).toBeTruthy();
      expect(workspace.sweep()?.value.points).toHaveLength(3);
      expect(workspace.sweep()?.stored?.kind).toBe('sweep');
      await vi.waitFor(() => expect(workspace.outcomeMap()).not.toBeNull());
      expect(workspace.outcomeMap()?.stored?.kind).toBe('map');
      expect(workspace.outcomeMap()?.value.cells).toHaveLength(4);
      expect(workspace.margins()).toBeNull();
      expect(workspace.isStale(workspace.motion())).toBe(false);
      expect(workspace.storedNotes()).toEqual({});
      expect(workspace.motionJob.running()).toBe(false);
      expect(workersMade).toBe(0);
    });

    it('turns a stored view stale on an edit, and a fresh run replaces it only when asked', async () => {
      const { caseId } = await storedRevision();
      await firstValueFrom(workspace.open(caseId, 1));
      await vi.waitFor(() => expect(workspace.motion()?.stored).toBeDefined());
      const amplitude = workspace.form.group.controls.drive.controls.amplitude;
      const shown = amplitude.value;
      amplitude.setValue(Number(shown) * 1.1);
      expect(workspace.isStale(workspace.motion())).toBe(true);
      expect(workspace.motion()?.stored).toBeDefined();
      amplitude.setValue(shown);
      expect(workspace.isStale(workspace.motion())).toBe(false);

      workspace.runMotion();
      expect(workspace.motion()?.stored).toBeDefined();
      await vi.waitFor(() => expect(workspace.motion()?.stored).toBeUndefined(), { timeout: 20_000 });
      expect(workersMade).toBeGreaterThan(0);
      expect(workspace.sweep()?.stored).toBeDefined();
    });

    it('drops a stale stored view when Run asks for the inputs on screen, and keeps the other tabs\' views', async () => {
      const { caseId } = await storedRevision();
      await firstValueFrom(workspace.open(caseId, 1));
      await vi.waitFor(() => expect(workspace.sweep()?.stored).toBeDefined());
      const amplitude = workspace.form.group.controls.drive.controls.amplitude;
      amplitude.setValue(Number(amplitude.value) * 1.1);
      workspace.runMotion();
      expect(workspace.motion()).toBeNull();
      expect(workspace.sweep()?.stored).toBeDefined();
      await vi.waitFor(() => expect(workspace.motion()).not.toBeNull(), { timeout: 20_000 });
      expect(workspace.motion()?.stored).toBeUndefined();
      expect(workspace.isStale(workspace.motion())).toBe(false);
    });

    it('shows none when the parameters read here have another digest than the one the runs were stored for', async () => {
      const { caseId } = await storedRevision();
      const repository = TestBed.inject(FakeCaseRepository);
      const opened = await firstValueFrom(repository.open(caseId, 1));
      vi.spyOn(repository, 'open').mockReturnValue(of({ ...opened, paramsDigest: 'f'.repeat(64) }));
      const runResult = vi.spyOn(repository, 'runResult');
      await firstValueFrom(workspace.open(caseId, 1));
      expect(runResult).not.toHaveBeenCalled();
      expect(workspace.motion()).toBeNull();
      expect(workspace.storedNotes().motion).toMatch(/Motion stored with r1: not shown/);
    });

    it('says which stored runs the server is still checking, and shows each once the server has settled it', async () => {
      vi.useFakeTimers();
      try {
        const repository = TestBed.inject(FakeCaseRepository);
        const created = await firstValueFrom(repository.create({ labId: null, title: 'Pending rig', tags: [], params, note: '' }));
        const settings: RunSettings = { kind: 'motion' };
        const result = computeRun(params, settings);
        const run = await firstValueFrom(repository.saveRun(created.caseId, 1, makeRunRecord(params, settings, result)));
        await firstValueFrom(workspace.open(created.caseId, 1));
        expect(workspace.motion()).toBeNull();
        expect(workspace.storedNotes().motion).toMatch(/Motion stored with r1: the server is still checking it/);

        await vi.advanceTimersByTimeAsync(STORED_PENDING_RECHECK_MS);
        expect(workspace.motion()).toBeNull();
        const reads = vi.spyOn(repository, 'open');
        repository.settleRun(created.caseId, 1, run.id, result);
        await vi.advanceTimersByTimeAsync(STORED_PENDING_RECHECK_MS);
        expect(workspace.motion()?.stored?.verification.state).toBe('verified');
        expect(workspace.storedNotes()).toEqual({});
        await vi.advanceTimersByTimeAsync(5 * STORED_PENDING_RECHECK_MS);
        expect(reads).toHaveBeenCalledTimes(1);
        expect(workersMade).toBe(0);
      } finally {
        vi.useRealTimers();
      }
    });
  });
});
