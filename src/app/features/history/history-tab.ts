import { Clipboard } from '@angular/cdk/clipboard';
import { DatePipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, ErrorHandler, computed, inject, linkedSignal, signal } from '@angular/core';
import { rxResource } from '@angular/core/rxjs-interop';
import { FormsModule } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatDialog } from '@angular/material/dialog';
import { MatExpansionModule } from '@angular/material/expansion';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSelectModule } from '@angular/material/select';
import { MatSlideToggleModule } from '@angular/material/slide-toggle';
import { MatSnackBar } from '@angular/material/snack-bar';
import { MatTooltipModule } from '@angular/material/tooltip';
import { RouterLink } from '@angular/router';

import { describeError } from '../../core/error-message';
import { CaseWorkspace } from '../case/case-workspace';
import { CaseLinksData, CaseLinksDialog } from '../case-links/case-links-dialog';
import { CaseApi } from '../library/case-api';
import { ComparisonTable } from '../recheck/comparison-table';
import { RecheckChip } from '../recheck/recheck-chip';
import { RecheckRequestData, RecheckRequestDialog } from '../recheck/recheck-request-dialog';
import { CaseReportDownload } from './case-report-download';
import { diffParams } from './params-diff';
import { resultsDiff } from './results-diff';
import { StoredRunsTable } from './stored-runs-table';
import { ScrollRegion } from '../../ui/scroll-region/scroll-region';

/** The URL of one revision, for lab members (it needs signing in). */
export function revisionUrl(caseId: string, revision: number, origin = globalThis.location?.origin ?? ''): string {
  return `${origin}/cases/${encodeURIComponent(caseId)}/r/${revision}`;
}

/**
 * The History tab: every revision of the case, the parameter difference of any two, and for the open revision its
 * stored runs, rechecks and comments. Also where a recheck is asked for and a case link is made.
 */
@Component({
  selector: 'qp-history-tab',
  imports: [
    ScrollRegion,
    DatePipe,
    FormsModule,
    RouterLink,
    MatButtonModule,
    MatExpansionModule,
    MatFormFieldModule,
    MatIconModule,
    MatInputModule,
    MatProgressBarModule,
    MatSelectModule,
    MatSlideToggleModule,
    MatTooltipModule,
    ComparisonTable,
    RecheckChip,
    StoredRunsTable,
  ],
  templateUrl: './history-tab.html',
  styleUrl: './history-tab.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class HistoryTab {
  private readonly api = inject(CaseApi);
  private readonly workspace = inject(CaseWorkspace);
  private readonly dialog = inject(MatDialog);
  private readonly snackBar = inject(MatSnackBar);
  private readonly clipboard = inject(Clipboard);
  private readonly errorHandler = inject(ErrorHandler);
  private readonly reports = inject(CaseReportDownload);

  protected readonly key = computed(() => {
    const opened = this.workspace.opened();
    return opened ? { caseId: opened.caseId, revision: opened.revision } : undefined;
  });
  protected readonly detail = rxResource({
    params: () => this.key()?.caseId,
    stream: ({ params }) => this.api.getCase(params),
  });
  protected readonly current = rxResource({
    params: () => this.key(),
    stream: ({ params }) => this.api.getRevision(params.caseId, params.revision),
  });
  protected readonly comments = rxResource({
    params: () => this.key(),
    stream: ({ params }) => this.api.listComments(params.caseId, params.revision),
  });

  protected readonly revisions = computed(() => (this.detail.hasValue() ? this.detail.value().revisions : []));
  protected readonly role = computed(() => (this.detail.hasValue() ? this.detail.value().myRole : null));
  protected readonly canAuthor = computed(() => this.role() === 'analyst' || this.role() === 'owner');
  protected readonly canReview = computed(() => this.role() === 'reviewer' || this.role() === 'owner');
  protected readonly canComment = computed(() => this.canAuthor() || this.canReview());
  protected readonly revision = computed(() => (this.current.hasValue() ? this.current.value() : null));
  protected readonly hasRuns = computed(() => (this.revision()?.runs.length ?? 0) > 0);

  /** The pair being compared: by default the open revision against the one before it. */
  protected readonly leftNumber = linkedSignal(() => {
    const r = this.key()?.revision ?? 1;
    return r > 1 ? r - 1 : r;
  });
  protected readonly rightNumber = linkedSignal(() => this.key()?.revision ?? 1);
  protected readonly onlyChanged = signal(true);
  private readonly left = rxResource({
    params: () => {
      const key = this.key();
      return key ? { caseId: key.caseId, revision: this.leftNumber() } : undefined;
    },
    stream: ({ params }) => this.api.getRevision(params.caseId, params.revision),
  });
  private readonly right = rxResource({
    params: () => {
      const key = this.key();
      return key ? { caseId: key.caseId, revision: this.rightNumber() } : undefined;
    },
    stream: ({ params }) => this.api.getRevision(params.caseId, params.revision),
  });
  protected readonly diffLoading = computed(() => this.left.isLoading() || this.right.isLoading());
  protected readonly diffRows = computed(() => {
    if (!this.left.hasValue() || !this.right.hasValue()) return [];
    return diffParams(this.left.value().rawParams, this.right.value().rawParams, this.workspace.units());
  });
  protected readonly changedCount = computed(() => this.diffRows().filter((r) => r.changed).length);
  protected readonly resultRows = computed(() => {
    if (!this.left.hasValue() || !this.right.hasValue()) return [];
    return resultsDiff(this.left.value().runs, this.right.value().runs);
  });
  protected readonly changedResults = computed(() => this.resultRows().filter((r) => r.changed).length);
  protected readonly shownDiffRows = computed(() =>
    this.onlyChanged() ? this.diffRows().filter((r) => r.changed) : this.diffRows(),
  );

  protected readonly loadError = computed(() => {
    const error = this.detail.error() ?? this.current.error();
    return error ? describeError(error.cause ?? error) : null;
  });

  protected readonly reportBusy = signal(false);
  protected readonly commentText = signal('');
  protected readonly posting = signal(false);

  /** A compared run by its kind ("Motion run"), or by the start of its id when it is no longer listed. */
  protected runName(runId: string): string {
    const kind = this.revision()?.runs.find((r) => r.id === runId)?.kind;
    return kind ? `${kind.charAt(0).toUpperCase()}${kind.slice(1)} run` : `Run ${runId.slice(0, 8)}`;
  }

  protected revisionLink(revision: number, tab = 'history'): string[] {
    return ['/cases', this.key()?.caseId ?? '', 'r', String(revision), tab];
  }

  protected recheckLink(): string[] {
    return ['/cases', this.key()?.caseId ?? '', 'r', String(this.key()?.revision ?? 1), 'recheck'];
  }

  protected copyRevisionLink(): void {
    const key = this.key();
    if (!key) return;
    const copied = this.clipboard.copy(revisionUrl(key.caseId, key.revision));
    this.snackBar.open(copied ? `Link to r${key.revision} copied. Lab members can open it after signing in.` : 'This browser refused to copy.', 'OK', {
      duration: 5000,
    });
  }

  protected downloadReport(): void {
    const key = this.key();
    if (!key) return;
    this.reportBusy.set(true);
    this.reports.download(key.caseId, key.revision).subscribe({
      next: () => this.reportBusy.set(false),
      error: (error: unknown) => {
        this.reportBusy.set(false);
        this.errorHandler.handleError(error);
      },
    });
  }

  protected askForRecheck(): void {
    const key = this.key();
    const labId = this.detail.hasValue() ? this.detail.value().lab.id : '';
    if (!key || !labId) return;
    this.dialog
      .open<RecheckRequestDialog, RecheckRequestData, boolean>(RecheckRequestDialog, {
        data: { caseId: key.caseId, revision: key.revision, labId },
      })
      .afterClosed()
      .subscribe((sent) => {
        if (!sent) return;
        this.snackBar.open(`Recheck of r${key.revision} requested; the reviewer gets an e-mail.`, 'OK', { duration: 6000 });
        this.current.reload();
        this.detail.reload();
      });
  }

  protected manageLinks(): void {
    const key = this.key();
    if (!key) return;
    this.dialog.open<CaseLinksDialog, CaseLinksData>(CaseLinksDialog, {
      data: { caseId: key.caseId, revision: key.revision, caseTitle: this.revision()?.caseTitle || this.workspace.title() },
      maxWidth: '95vw',
    });
  }

  protected postComment(): void {
    const key = this.key();
    const body = this.commentText().trim();
    if (!key || body === '') return;
    this.posting.set(true);
    this.api.addComment(key.caseId, key.revision, body).subscribe({
      next: () => {
        this.posting.set(false);
        this.commentText.set('');
        this.comments.reload();
      },
      error: (error: unknown) => {
        this.posting.set(false);
        this.errorHandler.handleError(error);
      },
    });
  }
}
