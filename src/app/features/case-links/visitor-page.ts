import { HttpErrorResponse } from '@angular/common/http';
import { DatePipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, computed, inject, input } from '@angular/core';
import { rxResource } from '@angular/core/rxjs-interop';
import { MatButtonModule } from '@angular/material/button';
import { MatIconModule } from '@angular/material/icon';
import { MatProgressBarModule } from '@angular/material/progress-bar';

import { describeError } from '../../core/error-message';
import { linkReportUrl } from '../history/case-report-download';
import { flattenParams } from '../history/params-diff';
import { StoredRunsTable } from '../history/stored-runs-table';
import { CaseLinkApi } from './case-link-api';
import { RerunPanel } from '../recheck/rerun-panel';

/** Why a link cannot be opened, in the visitor's words. */
export function linkProblem(error: unknown): string {
  if (error instanceof HttpErrorResponse && error.status === 410) {
    return 'This case link has expired or was revoked. Ask the person who sent it for a new one.';
  }
  if (error instanceof HttpErrorResponse && error.status === 404) {
    return 'This case link does not exist. Check that you copied the whole address.';
  }
  return describeError(error);
}

/**
 * What someone outside the lab sees through a case link: one revision, read-only, with its stored runs, which they
 * can rerun in their own browser to see the same numbers. There is no way to save anything from here.
 */
@Component({
  selector: 'qp-visitor-page',
  imports: [DatePipe, MatButtonModule, MatIconModule, MatProgressBarModule, RerunPanel, StoredRunsTable],
  templateUrl: './visitor-page.html',
  styleUrl: './visitor-page.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class VisitorPage {
  private readonly api = inject(CaseLinkApi);

  /** Bound from the route. */
  readonly token = input.required<string>();

  protected readonly link = rxResource({ params: () => this.token(), stream: ({ params }) => this.api.openPublicLink(params) });
  protected readonly shared = computed(() => (this.link.hasValue() ? this.link.value() : null));
  protected readonly problem = computed(() => {
    const error = this.link.error();
    return error ? linkProblem(error.cause ?? error) : null;
  });
  protected readonly reportUrl = computed(() => linkReportUrl(this.token()));
  protected readonly params = computed(() => flattenParams(this.shared()?.revision.rawParams ?? null));
}
