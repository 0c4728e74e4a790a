import { DatePipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, computed, inject, input, signal } from '@angular/core';
import { takeUntilDestroyed, toObservable } from '@angular/core/rxjs-interop';
import { MatButtonModule } from '@angular/material/button';
import { MatIconModule } from '@angular/material/icon';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { RouterLink } from '@angular/router';
import { catchError, EMPTY, exhaustMap, switchMap, tap, timer } from 'rxjs';

import type { JobView } from '../../../../shared/api/jobs';
import { apiErrorOf, describeError } from '../../core/error-message';
import { CASE_WRITER_ROLES, Session } from '../../core/session';
import { ScrollRegion } from '../../ui/scroll-region/scroll-region';
import { JobApi } from './job-api';
import { isActive, JOB_STATE_WORDS, JOB_TIME_FORMAT, jobKindLabel, jobProgressText, jobResultLink, jobSettingsText } from './job-words';

/** How often the list is read again while the page is open: one small query, so progress moves without a stream per job. */
export const JOBS_PAGE_POLL_MS = 3000;
/** The newest jobs of the lab the page lists. */
export const JOBS_PAGE_LIMIT = 100;

/**
 * The lab's server jobs: the running and queued ones with their progress and Cancel, then the finished ones with
 * their state, why a job failed, and a link to the run a job stored. Read again every few seconds.
 */
@Component({
  selector: 'qp-jobs-page',
  imports: [DatePipe, MatButtonModule, MatIconModule, MatProgressBarModule, RouterLink, ScrollRegion],
  templateUrl: './jobs-page.html',
  styleUrl: './jobs-page.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class JobsPage {
  private readonly api = inject(JobApi);
  private readonly session = inject(Session);

  /** Bound from the `:labId` route parameter. */
  readonly labId = input.required<string>();

  protected readonly words = JOB_STATE_WORDS;
  protected readonly timeFormat = JOB_TIME_FORMAT;
  protected readonly jobs = signal<readonly JobView[] | null>(null);
  protected readonly loadError = signal<string | null>(null);
  protected readonly cancelErrors = signal<Readonly<Record<string, string>>>({});
  protected readonly cancelling = signal<ReadonlySet<string>>(new Set());

  protected readonly labName = computed(
    () => this.session.memberships().find((m) => m.lab.id === this.labId())?.lab.name ?? 'this lab',
  );
  protected readonly canCancel = computed(() => {
    const role = this.session.roleIn(this.labId());
    return role !== null && CASE_WRITER_ROLES.includes(role);
  });
  protected readonly active = computed(() => (this.jobs() ?? []).filter(isActive));
  protected readonly finished = computed(() => (this.jobs() ?? []).filter((j) => !isActive(j)));

  constructor() {
    toObservable(this.labId)
      .pipe(
        tap(() => this.jobs.set(null)),
        switchMap((labId) =>
          timer(0, JOBS_PAGE_POLL_MS).pipe(
            exhaustMap(() =>
              this.api.listForLab(labId, 'all', JOBS_PAGE_LIMIT).pipe(
                catchError((error: unknown) => {
                  this.loadError.set(describeError(error));
                  return EMPTY;
                }),
              ),
            ),
          ),
        ),
        takeUntilDestroyed(),
      )
      .subscribe((jobs) => {
        this.loadError.set(null);
        this.jobs.set(jobs);
      });
  }

  protected cancel(job: JobView): void {
    this.cancelling.update((ids) => new Set([...ids, job.id]));
    this.setCancelError(job.id, null);
    this.api.cancel(job.caseId, job.id).subscribe({
      next: (view) => {
        this.done(job.id);
        this.jobs.update((jobs) => jobs?.map((j) => (j.id === view.id ? view : j)) ?? null);
      },
      error: (error: unknown) => {
        this.done(job.id);
        // Finished meanwhile: the next read shows how.
        if (apiErrorOf(error)?.code !== 'job_finished') this.setCancelError(job.id, describeError(error));
      },
    });
  }

  protected kind(job: JobView): string {
    return jobKindLabel(job.kind);
  }

  protected size(job: JobView): string {
    return jobSettingsText(job.settings);
  }

  protected progress(job: JobView): string {
    return jobProgressText(job);
  }

  protected link(job: JobView): unknown[] {
    return jobResultLink(job);
  }

  protected revisionLink(job: JobView): unknown[] {
    return ['/cases', job.caseId, 'r', job.revision];
  }

  /** How long a finished job ran, in words: "2 min 5 s". */
  protected duration(job: JobView): string {
    if (!job.startedAt || !job.finishedAt) return '';
    const seconds = Math.max(0, Math.round((Date.parse(job.finishedAt) - Date.parse(job.startedAt)) / 1000));
    if (seconds < 60) return `${seconds} s`;
    const minutes = Math.floor(seconds / 60);
    if (minutes < 60) return `${minutes} min ${seconds % 60} s`;
    return `${Math.floor(minutes / 60)} h ${minutes % 60} min`;
  }

  private done(jobId: string): void {
    this.cancelling.update((ids) => new Set([...ids].filter((id) => id !== jobId)));
  }

  private setCancelError(jobId: string, message: string | null): void {
    this.cancelErrors.update((errors) => {
      const next = { ...errors };
      if (message === null) delete next[jobId];
      else next[jobId] = message;
      return next;
    });
  }
}
