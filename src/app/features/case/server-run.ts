import { DatePipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, computed, inject, input } from '@angular/core';
import { MatButtonModule } from '@angular/material/button';
import { MatIconModule } from '@angular/material/icon';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { RouterLink } from '@angular/router';

import type { JobView } from '../../../../shared/api/jobs';
import type { RunKind, RunSettings } from '../../../../shared/engine/run-record';
import { chunks, isActive, JOB_STATE_WORDS, JOB_TIME_FORMAT, jobKindLabel, jobProgressText, jobResultLink, jobSettingsText } from '../jobs/job-words';
import { CaseServerJobs, jobsToShow } from './case-server-jobs';
import { CaseWorkspace } from './case-workspace';

/**
 * "Run on the server" beside a tab's run strip: the same settings as on screen, computed by the server's workers for
 * the saved revision and stored with it. Lists the tab's jobs with live progress, Cancel, the error in words, and
 * where the stored run shows.
 */
@Component({
  selector: 'qp-server-run',
  imports: [DatePipe, MatButtonModule, MatIconModule, MatProgressBarModule, RouterLink],
  template: `
    <div class="server-bar">
      <button
        matButton="outlined"
        type="button"
        (click)="submit()"
        [disabled]="refusal() !== null || jobs.submitting() === kind()"
        [attr.aria-describedby]="refusal() ? testId() + '-why' : null"
        [attr.data-testid]="testId()"
      >
        <mat-icon>cloud_upload</mat-icon> {{ jobs.submitting() === kind() ? 'Starting…' : 'Run on the server' }}
      </button>
      @if (refusal(); as why) {
        <span class="why" [id]="testId() + '-why'" [attr.data-testid]="testId() + '-why'">{{ why }}</span>
      } @else {
        <span class="why">Runs on, and is stored with r{{ revision() }}, even when you close this page.</span>
      }
      @if (jobs.labJobsLink(); as link) {
        <a matButton [routerLink]="link">All server jobs</a>
      }
    </div>
    @if (jobs.submitError(); as e) {
      @if (e.kind === kind()) {
        <p class="error" role="alert">{{ e.message }}</p>
      }
    }
    @for (job of shown(); track job.id) {
      <div class="job" [class.active]="active(job)" [attr.data-testid]="testId() + '-job'" [attr.data-state]="job.state">
        <div class="head">
          <mat-icon aria-hidden="true">{{ icon(job) }}</mat-icon>
          <span class="title">Server job, {{ label(job) }} of r{{ job.revision }}@if (size(job); as n) {, {{ n }}}</span>
          <span class="state" [attr.data-testid]="testId() + '-state'">{{ words[job.state] }}</span>
          <span class="when">submitted {{ job.createdAt | date: timeFormat }}{{ job.submittedBy ? ' by ' + job.submittedBy.name : '' }}</span>
        </div>
        @if (active(job)) {
          <div class="progress">
            <mat-progress-bar
              [mode]="job.chunksTotal === 0 ? 'indeterminate' : 'determinate'"
              [value]="job.progress * 100"
              [attr.aria-label]="'Server job, ' + label(job) + ': progress'"
            />
            <span class="count" [attr.data-testid]="testId() + '-progress'">{{ progress(job) }}</span>
            @if (jobs.canAct()) {
              <button matButton type="button" (click)="jobs.cancel(job)" [attr.data-testid]="testId() + '-cancel'">Cancel</button>
            }
          </div>
        } @else if (job.state === 'succeeded') {
          <p class="note">
            Done: {{ chunkCount(job.chunksTotal) }}, stored with r{{ job.revision }}{{ job.finishedAt ? ' at ' + (job.finishedAt | date: timeFormat) : '' }}.
            @if (job.revision === revision()) {
              It shows here as the stored {{ label(job).toLowerCase() }}.
            } @else {
              <a [routerLink]="link(job)">Open r{{ job.revision }}</a>
            }
          </p>
        } @else if (job.state === 'failed') {
          <p class="error" role="alert">Failed: {{ job.error ?? 'the server gave no reason.' }}</p>
        } @else {
          <p class="note">
            Cancelled{{ job.cancelledBy ? ' by ' + job.cancelledBy.name : '' }} after {{ job.chunksDone }} of {{ job.chunksTotal }} chunks; nothing was stored.
          </p>
        }
        @if (jobs.jobErrors()[job.id]; as problem) {
          <p class="error" role="alert">{{ problem }}</p>
        }
      </div>
    }
  `,
  styles: `
    :host { display: grid; gap: 8px; min-width: 0; }
    .server-bar { display: flex; flex-wrap: wrap; align-items: center; gap: 8px 12px; }
    .why, .when, .note { color: var(--mat-sys-on-surface-variant); margin: 0; }
    .why { flex: 1 1 240px; }
    .job { display: grid; gap: 6px; padding: 8px 12px; border-radius: 8px; border: 1px solid var(--mat-sys-outline-variant); }
    .job.active { border-color: var(--mat-sys-primary); }
    .head { display: flex; flex-wrap: wrap; align-items: center; gap: 4px 10px; }
    .title { font-weight: 500; }
    .state { font-weight: 500; }
    .progress { display: flex; flex-wrap: wrap; align-items: center; gap: 8px 12px; }
    .progress mat-progress-bar { flex: 1 1 160px; max-width: 480px; }
    .count { font-variant-numeric: tabular-nums; }
    .error { margin: 0; padding: 6px 10px; border-radius: 8px; background: var(--mat-sys-error-container); color: var(--mat-sys-on-error-container); }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class ServerRun {
  protected readonly jobs = inject(CaseServerJobs);
  private readonly workspace = inject(CaseWorkspace);

  readonly kind = input.required<RunKind>();
  /** The settings on screen, or null when the tab cannot run them (then `blocked` says why). */
  readonly settings = input.required<RunSettings | null>();
  readonly blocked = input<string | null>(null);
  readonly testId = input.required<string>();

  protected readonly words = JOB_STATE_WORDS;
  protected readonly timeFormat = JOB_TIME_FORMAT;
  protected readonly chunkCount = chunks;
  protected readonly revision = computed(() => this.workspace.opened()?.revision ?? null);
  protected readonly refusal = computed(() => this.jobs.refusal(this.blocked() ?? (this.settings() === null ? 'These settings cannot run.' : null)));
  protected readonly shown = computed(() => jobsToShow(this.jobs.jobs(), this.kind(), Date.now()));

  protected submit(): void {
    const settings = this.settings();
    if (settings && this.refusal() === null) this.jobs.submit(settings);
  }

  protected active(job: JobView): boolean {
    return isActive(job);
  }

  protected size(job: JobView): string {
    return jobSettingsText(job.settings);
  }

  protected label(job: JobView): string {
    return jobKindLabel(job.kind);
  }

  protected progress(job: JobView): string {
    return job.state === 'queued' && job.chunksTotal === 0 ? 'Queued: waiting for a worker' : jobProgressText(job);
  }

  protected link(job: JobView): unknown[] {
    return jobResultLink(job);
  }

  protected icon(job: JobView): string {
    switch (job.state) {
      case 'succeeded':
        return 'cloud_done';
      case 'failed':
        return 'error';
      case 'cancelled':
        return 'cancel';
      default:
        return 'cloud_sync';
    }
  }
}
