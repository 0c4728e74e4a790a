import { DatePipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, computed, effect, inject, input, signal } from '@angular/core';
import { rxResource } from '@angular/core/rxjs-interop';
import { FormsModule } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSnackBar } from '@angular/material/snack-bar';
import { Router, RouterLink } from '@angular/router';
import { forkJoin } from 'rxjs';

import { describeError } from '../../core/error-message';
import { CaseApi } from '../library/case-api';
import type { RecheckVerdict } from '../library/library-types';
import { RecheckChip } from './recheck-chip';
import { ComparisonTable } from './comparison-table';
import { runKindWords, sweptFieldOf } from './comparison-groups';
import { RerunPanel } from './rerun-panel';

const PENDING_POLL_MS = 2000;

/**
 * The reviewer's view of one revision: the server's own rerun of every stored run (verified or unreproduced, with
 * the numbers that differ), an optional rerun in this browser, then a verdict and a comment. The server decides the
 * comparison; the page sends only the verdict and the comment.
 */
@Component({
  selector: 'qp-recheck-page',
  imports: [
    DatePipe,
    FormsModule,
    RouterLink,
    MatButtonModule,
    MatFormFieldModule,
    MatIconModule,
    MatInputModule,
    MatProgressBarModule,
    ComparisonTable,
    RecheckChip,
    RerunPanel,
  ],
  templateUrl: './recheck-page.html',
  styleUrl: './recheck-page.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class RecheckPage {
  private readonly api = inject(CaseApi);
  private readonly snackBar = inject(MatSnackBar);
  private readonly router = inject(Router);

  /** Bound from the route. */
  readonly caseId = input.required<string>();
  readonly rev = input.required<string>();

  protected readonly revision = computed(() => Number(this.rev()));
  protected readonly loaded = rxResource({
    params: () => ({ caseId: this.caseId(), revision: this.revision() }),
    stream: ({ params }) =>
      forkJoin({ detail: this.api.getCase(params.caseId), revision: this.api.getRevision(params.caseId, params.revision) }),
  });
  protected readonly detail = computed(() => (this.loaded.hasValue() ? this.loaded.value().detail : null));
  protected readonly revisionDetail = computed(() => (this.loaded.hasValue() ? this.loaded.value().revision : null));
  protected readonly loadError = computed(() => {
    const error = this.loaded.error();
    return error ? describeError(error.cause ?? error) : null;
  });
  protected readonly canJudge = computed(() => {
    const role = this.detail()?.myRole;
    return role === 'reviewer' || role === 'owner';
  });

  protected readonly runs = computed(() => this.revisionDetail()?.runs ?? []);
  protected readonly pending = computed(() => this.runs().filter((r) => r.verification.state === 'pending').length);
  protected readonly allVerified = computed(() => this.runs().length > 0 && this.runs().every((r) => r.verification.state === 'verified'));
  protected readonly awaiting = computed(() => this.revisionDetail()?.recheckState === 'awaiting-recheck');
  protected readonly comment = signal('');
  protected readonly submitting = signal(false);
  protected readonly submitError = signal<string | null>(null);

  protected readonly kindWords = runKindWords;
  protected readonly sweptField = sweptFieldOf;

  protected historyLink(): string[] {
    return ['/cases', this.caseId(), 'r', String(this.revision()), 'history'];
  }

  constructor() {
    // While the server is still rerunning a stored run, look again every few seconds.
    effect((onCleanup) => {
      if (this.pending() === 0 || this.loaded.isLoading()) return;
      const timer = setTimeout(() => this.loaded.reload(), PENDING_POLL_MS);
      onCleanup(() => clearTimeout(timer));
    });
  }

  protected submit(verdict: RecheckVerdict): void {
    const comment = this.comment().trim();
    if (verdict === 'disputed' && comment === '') {
      this.submitError.set('Say why you dispute the numbers: the analyst reads your comment.');
      return;
    }
    this.submitting.set(true);
    this.submitError.set(null);
    this.api
      .submitRecheck(this.caseId(), this.revision(), { verdict, comment })
      .subscribe({
        next: () => {
          this.submitting.set(false);
          this.snackBar.open(
            verdict === 'confirmed' ? `r${this.revision()} confirmed. The analyst is told by e-mail.` : `r${this.revision()} disputed. The analyst is told by e-mail.`,
            'OK',
            { duration: 6000 },
          );
          void this.router.navigate(this.historyLink());
        },
        error: (error: unknown) => {
          this.submitting.set(false);
          this.submitError.set(describeError(error));
        },
      });
  }
}
