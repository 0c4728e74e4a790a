import { formatDate } from '@angular/common';
import { ChangeDetectionStrategy, Component, LOCALE_ID, computed, inject, input } from '@angular/core';
import { MatIconModule } from '@angular/material/icon';

import { RUN_KIND_LABELS } from '../../../../shared/case/display';
import type { RunKind } from '../../../../shared/engine/run-record';
import { verificationWords } from '../library/verification-words';
import { CaseWorkspace, type Computed, type StoredOrigin } from './case-workspace';

/** "Stored r4 · Sweep, computed 2 Dec 2026 14:05 by Ada Analyst" (the time in the reader's zone). */
export function storedMarkText(mark: StoredOrigin, locale: string): string {
  const kind = RUN_KIND_LABELS[mark.kind] ?? mark.kind;
  const when = formatDate(mark.computedAt, 'd MMM y HH:mm', locale);
  return `Stored r${mark.revision} · ${kind}, computed ${when} by ${mark.authorName ?? 'a former member'}`;
}

/**
 * Says that a tab shows a stored run of the opened revision rather than one computed on this page: which revision,
 * when and by whom, and whether the server's own rerun verified it. Without a result it shows why the kind's
 * stored run is not shown (loading, still being rerun, not loaded).
 */
@Component({
  selector: 'qp-stored-mark',
  imports: [MatIconModule],
  template: `
    @if (mark(); as m) {
      <p class="mark" data-testid="stored-mark" [attr.data-kind]="kind()">
        <mat-icon aria-hidden="true">inventory_2</mat-icon>
        <span class="text">{{ text() }}</span>
        @if (check(); as c) {
          <span class="verification" [class.bad]="c.tone === 'bad'" data-testid="stored-verification">{{ c.text }}</span>
        }
      </p>
    } @else if (note(); as n) {
      <p class="note" role="status" data-testid="stored-note" [attr.data-kind]="kind()">{{ n }}</p>
    }
  `,
  styles: `
    :host { display: contents; }
    .mark {
      display: flex; flex-wrap: wrap; align-items: center; gap: 4px 10px; margin: 0; padding: 6px 10px; border-radius: 8px;
      background: var(--mat-sys-secondary-container); color: var(--mat-sys-on-secondary-container);
    }
    .mark mat-icon { width: 20px; height: 20px; font-size: 20px; }
    .text { flex: 0 1 auto; }
    .verification {
      padding: 1px 8px; border-radius: 10px; font: var(--mat-sys-label-medium);
      background: var(--mat-sys-surface-container-highest); color: var(--mat-sys-on-surface);
    }
    .verification.bad { background: var(--mat-sys-error-container); color: var(--mat-sys-on-error-container); }
    .note { margin: 0; color: var(--mat-sys-on-surface-variant); }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class StoredMark {
  private readonly workspace = inject(CaseWorkspace);
  private readonly locale = inject(LOCALE_ID);

  /** The tab's shown result (fresh or stored). */
  readonly result = input.required<Computed<unknown> | null>();
  /** The run kind of that result. */
  readonly kind = input.required<RunKind>();

  protected readonly mark = computed(() => this.result()?.stored ?? null);
  protected readonly text = computed(() => {
    const m = this.mark();
    return m ? storedMarkText(m, this.locale) : '';
  });
  /** The server's check in History's words. */
  protected readonly check = computed(() => {
    const m = this.mark();
    return m ? verificationWords(m.verification) : null;
  });
  protected readonly note = computed(() => (this.result() ? null : (this.workspace.storedNotes()[this.kind()] ?? null)));
}
