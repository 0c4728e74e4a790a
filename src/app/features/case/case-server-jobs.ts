import { DestroyRef, Injectable, computed, effect, inject, signal, untracked } from '@angular/core';
import { catchError, EMPTY, type Subscription } from 'rxjs';

import type { JobView } from '../../../../shared/api/jobs';
import type { RunSettings } from '../../../../shared/engine/run-record';
import { apiErrorOf, describeError } from '../../core/error-message';
import { CASE_WRITER_ROLES, Session } from '../../core/session';
import { JobApi } from '../jobs/job-api';
import { isActive } from '../jobs/job-words';
import { CaseWorkspace } from './case-workspace';

/** A finished job stays listed in its tab this long after it ended (the next morning's look at last night's jobs). */
export const FINISHED_JOB_SHOWN_MS = 24 * 3600 * 1000;
/** At most this many finished jobs per run kind in a tab; the lab's jobs page lists them all. */
export const FINISHED_JOBS_PER_KIND = 3;

/** The jobs of one run kind a tab lists: every active one, then the latest finished ones of the last day. */
export function jobsToShow(jobs: readonly JobView[], kind: string, now: number): JobView[] {
  const mine = jobs.filter((j) => j.kind === kind);
  const active = mine.filter(isActive);
  const finished = mine
    .filter((j) => !isActive(j) && now - Date.parse(j.finishedAt ?? j.createdAt) < FINISHED_JOB_SHOWN_MS)
    .slice(0, FINISHED_JOBS_PER_KIND);
  return [...active, ...finished];
}

/**
 * The server jobs of the opened case, for its tabs: submits the settings on screen for the saved revision, follows
 * every active job live (server-sent events) and shows a succeeded job's stored run in its tab. Leaving the page
 * only stops listening: the jobs go on running on the server, and opening the case again lists them.
 */
@Injectable()
export class CaseServerJobs {
  private readonly api = inject(JobApi);
  private readonly workspace = inject(CaseWorkspace);
  private readonly session = inject(Session);

  private readonly jobsState = signal<readonly JobView[]>([]);
  private readonly submittingState = signal<string | null>(null);
  private readonly submitErrorState = signal<{ kind: string; message: string } | null>(null);
  private readonly jobErrorsState = signal<Readonly<Record<string, string>>>({});
  private readonly follows = new Map<string, Subscription>();
  private list: Subscription | null = null;
  private caseId: string | null = null;

  /** The case's jobs, newest first. */
  readonly jobs = this.jobsState.asReadonly();
  /** The kind whose job is being submitted. */
  readonly submitting = this.submittingState.asReadonly();
  readonly submitError = this.submitErrorState.asReadonly();
  /** Per job id: why following or cancelling it failed. */
  readonly jobErrors = this.jobErrorsState.asReadonly();

  private readonly labId = computed(() => this.workspace.opened()?.labId ?? this.session.currentLab()?.id ?? null);
  /** Owners and analysts start and cancel jobs (the server decides; this only hides what would be refused). */
  readonly canAct = computed(() => {
    const labId = this.labId();
    const role = labId ? this.session.roleIn(labId) : null;
    return role !== null && CASE_WRITER_ROLES.includes(role);
  });
  readonly labJobsLink = computed(() => {
    const labId = this.labId();
    return labId ? ['/labs', labId, 'jobs'] : null;
  });

  /**
   * Why "Run on the server" is off, or null: a job computes a saved revision, so the inputs on screen must be one.
   * `blocked` is the tab's own reason (an invalid range).
   */
  refusal(blocked: string | null): string | null {
    if (this.workspace.isNew()) return 'Save the case first: server jobs run a saved revision.';
    if (!this.canAct()) return 'Server jobs are started by the lab’s owners and analysts; your role can follow them.';
    if (this.workspace.readOnly()) return 'This case is archived: it takes no new server jobs.';
    if (!this.workspace.valid() || this.workspace.dirty()) return 'Save the case first: server jobs run a saved revision, and these inputs are not saved.';
    return blocked;
  }

  constructor() {
    // A case opened (or another one): list its jobs and follow the active ones.
    effect(() => {
      const caseId = this.workspace.opened()?.caseId ?? null;
      untracked(() => this.load(caseId));
    });
    inject(DestroyRef).onDestroy(() => this.stopAll());
  }

  submit(settings: RunSettings): void {
    const opened = this.workspace.opened();
    if (!opened || this.refusal(null) !== null) return;
    this.submittingState.set(settings.kind);
    this.submitErrorState.set(null);
    this.api.submit(opened.caseId, opened.revision, settings).subscribe({
      next: (job) => {
        this.submittingState.set(null);
        this.upsert(job);
        this.follow(job);
      },
      error: (error: unknown) => {
        this.submittingState.set(null);
        this.submitErrorState.set({ kind: settings.kind, message: `Not started: ${describeError(error)}` });
      },
    });
  }

  cancel(job: JobView): void {
    this.setJobError(job.id, null);
    this.api.cancel(job.caseId, job.id).subscribe({
      next: (view) => this.upsert(view),
      error: (error: unknown) => {
        // Finished meanwhile: the stream brings (or brought) its final state.
        if (apiErrorOf(error)?.code !== 'job_finished') this.setJobError(job.id, describeError(error));
      },
    });
  }

  private load(caseId: string | null): void {
    if (caseId === this.caseId) return;
    this.stopAll();
    this.caseId = caseId;
    this.jobsState.set([]);
    this.submitErrorState.set(null);
    this.jobErrorsState.set({});
    if (!caseId) return;
    this.list = this.api
      .listForCase(caseId)
      .pipe(catchError(() => EMPTY))
      .subscribe((jobs) => {
        this.jobsState.set(jobs);
        for (const job of jobs) if (isActive(job)) this.follow(job);
      });
  }

  private follow(job: JobView): void {
    if (this.follows.has(job.id)) return;
    const subscription = this.api.follow(job.caseId, job.id).subscribe({
      next: (view) => {
        this.upsert(view);
        if (view.state === 'succeeded' && view.runId) this.showRun(view);
      },
      error: (error: unknown) => {
        this.follows.delete(job.id);
        this.setJobError(job.id, error instanceof Error && error.name === 'JobFollowError' ? error.message : describeError(error));
      },
      complete: () => this.follows.delete(job.id),
    });
    if (!subscription.closed) this.follows.set(job.id, subscription);
  }

  /** A job of the revision on screen finished: its stored run shows in its tab. */
  private showRun(job: JobView): void {
    const opened = this.workspace.opened();
    if (!job.runId || !opened || opened.caseId !== job.caseId || opened.revision !== job.revision) return;
    this.workspace.showJobRun(job.runId).subscribe({
      error: (error: unknown) => this.setJobError(job.id, `The run is stored, but it could not be shown: ${describeError(error)}`),
    });
  }

  private upsert(view: JobView): void {
    if (view.caseId !== this.caseId) return;
    this.jobsState.update((jobs) => {
      const at = jobs.findIndex((j) => j.id === view.id);
      if (at < 0) return [view, ...jobs];
      const next = [...jobs];
      next[at] = view;
      return next;
    });
  }

  private setJobError(jobId: string, message: string | null): void {
    this.jobErrorsState.update((errors) => {
      const next = { ...errors };
      if (message === null) delete next[jobId];
      else next[jobId] = message;
      return next;
    });
  }

  private stopAll(): void {
    this.list?.unsubscribe();
    this.list = null;
    for (const subscription of this.follows.values()) subscription.unsubscribe();
    this.follows.clear();
  }
}
