import { Clipboard } from '@angular/cdk/clipboard';
import { DatePipe } from '@angular/common';
import { ChangeDetectionStrategy, Component, computed, inject, signal } from '@angular/core';
import { rxResource } from '@angular/core/rxjs-interop';
import { NonNullableFormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MAT_DIALOG_DATA, MatDialogModule } from '@angular/material/dialog';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatProgressBarModule } from '@angular/material/progress-bar';

import { describeError } from '../../core/error-message';
import { CaseLinkApi } from './case-link-api';
import type { CaseLinkCreated, CaseLinkView } from '../library/library-types';

export interface CaseLinksData {
  readonly caseId: string;
  readonly revision: number;
  readonly caseTitle: string;
}

/** The server's limit. */
export const MAX_LINK_DAYS = 365;

/** The visitor URL of a token, on this site. */
export function visitorUrl(token: string, origin = globalThis.location?.origin ?? ''): string {
  return `${origin}/links/${encodeURIComponent(token)}`;
}

/**
 * Read-only links to one revision, for people outside the lab: create one (the token is shown once, then only its
 * hash is kept), see which exist with their expiry, and revoke.
 */
@Component({
  selector: 'qp-case-links-dialog',
  imports: [DatePipe, ReactiveFormsModule, MatButtonModule, MatDialogModule, MatFormFieldModule, MatIconModule, MatInputModule, MatProgressBarModule],
  template: `
    <h2 mat-dialog-title>Case links for {{ data.caseTitle }}</h2>
    <mat-dialog-content class="content">
      <p class="lead">
        A case link shows r{{ data.revision }} read-only to anyone who has it, without signing in: its parameters and
        stored runs, which they can rerun in their own browser. Nothing can be saved through it.
      </p>
      <form class="create" [formGroup]="form" (ngSubmit)="create()" novalidate aria-label="Create a case link">
        <mat-form-field class="days">
          <mat-label>Expires after</mat-label>
          <input matInput type="number" formControlName="days" min="1" [max]="maxDays" required />
          <span matTextSuffix>days</span>
          <mat-error>Between 1 and {{ maxDays }} days.</mat-error>
        </mat-form-field>
        <button matButton="filled" type="submit" [disabled]="creating()"><mat-icon>add_link</mat-icon>Create link to r{{ data.revision }}</button>
      </form>
      @if (created(); as link) {
        <div class="created" role="status">
          <p><strong>Copy this link now</strong>: it is shown only once.</p>
          <div class="url-row">
            <code class="url">{{ urlOf(link) }}</code>
            <button matButton="tonal" type="button" (click)="copy(link)"><mat-icon>content_copy</mat-icon>{{ copied() ? 'Copied' : 'Copy' }}</button>
          </div>
          <p class="expiry">Expires {{ link.expiresAt | date: 'medium' }}.</p>
        </div>
      }
      @if (error(); as message) {
        <p class="form-error" role="alert">{{ message }}</p>
      }
      <h3 class="list-title">Links to this case</h3>
      @if (links.isLoading()) {
        <mat-progress-bar mode="indeterminate" aria-label="Loading links" />
      }
      <ul class="links">
        @for (link of linkList(); track link.id) {
          <li class="link" [class.inactive]="link.state !== 'active'">
            <span class="link-rev">r{{ link.revision }}</span>
            <span class="link-state">{{ stateText(link) }}</span>
            <span class="link-by">{{ link.createdBy?.name ?? '' }}</span>
            @if (link.state === 'active') {
              <button matButton type="button" (click)="revoke(link)" [attr.aria-label]="'Revoke the link to r' + link.revision + ' created ' + (link.createdAt | date: 'short')">Revoke</button>
            }
          </li>
        } @empty {
          @if (!links.isLoading()) {
            <li class="none">No links yet.</li>
          }
        }
      </ul>
    </mat-dialog-content>
    <mat-dialog-actions align="end">
      <button matButton type="button" mat-dialog-close>Close</button>
    </mat-dialog-actions>
  `,
  styles: `
    .content { display: flex; flex-direction: column; gap: 8px; min-width: min(560px, 84vw); }
    .lead { margin: 0; color: var(--mat-sys-on-surface-variant); }
    .create { display: flex; flex-wrap: wrap; align-items: flex-start; gap: 12px; }
    .days { width: 170px; }
    .create button { height: 56px; }
    .created { padding: 12px; border-radius: 8px; background: var(--mat-sys-primary-container); color: var(--mat-sys-on-primary-container); }
    .created p { margin: 0 0 6px; }
    .url-row { display: flex; flex-wrap: wrap; gap: 8px; align-items: center; }
    .url { overflow-wrap: anywhere; flex: 1 1 240px; }
    .list-title { margin: 8px 0 0; font: var(--mat-sys-title-small); }
    .links { list-style: none; margin: 0; padding: 0; }
    .link { display: flex; flex-wrap: wrap; align-items: center; gap: 12px; padding: 4px 0; border-bottom: 1px solid var(--mat-sys-outline-variant); }
    .link-rev { font-weight: 500; }
    .link-state { flex: 1 1 auto; }
    .link-by { color: var(--mat-sys-on-surface-variant); }
    .inactive { color: var(--mat-sys-on-surface-variant); text-decoration: none; }
    .none { color: var(--mat-sys-on-surface-variant); padding: 4px 0; }
    .form-error { color: var(--mat-sys-error); margin: 0; }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class CaseLinksDialog {
  private readonly api = inject(CaseLinkApi);
  private readonly clipboard = inject(Clipboard);
  private readonly datePipe = new DatePipe('en-US');
  protected readonly data = inject<CaseLinksData>(MAT_DIALOG_DATA);

  protected readonly maxDays = MAX_LINK_DAYS;
  protected readonly form = inject(NonNullableFormBuilder).group({
    days: [14, [Validators.required, Validators.min(1), Validators.max(MAX_LINK_DAYS)]],
  });
  protected readonly links = rxResource({ params: () => this.data.caseId, stream: ({ params }) => this.api.listLinks(params) });
  protected readonly linkList = computed(() => this.links.value() ?? []);
  protected readonly created = signal<CaseLinkCreated | null>(null);
  protected readonly creating = signal(false);
  protected readonly copied = signal(false);
  protected readonly error = signal<string | null>(null);

  protected urlOf(link: CaseLinkCreated): string {
    return visitorUrl(link.token);
  }

  protected stateText(link: CaseLinkView): string {
    const at = (iso: string | null) => (iso ? this.datePipe.transform(iso, 'medium') : '');
    if (link.state === 'revoked') return `revoked ${at(link.revokedAt)}`;
    if (link.state === 'expired') return `expired ${at(link.expiresAt)}`;
    return `active until ${at(link.expiresAt)}`;
  }

  protected create(): void {
    if (this.form.invalid) {
      this.form.markAllAsTouched();
      return;
    }
    this.creating.set(true);
    this.error.set(null);
    this.copied.set(false);
    this.api.createLink(this.data.caseId, this.data.revision, this.form.getRawValue().days).subscribe({
      next: (link) => {
        this.creating.set(false);
        this.created.set(link);
        this.links.reload();
      },
      error: (error: unknown) => {
        this.creating.set(false);
        this.error.set(describeError(error));
      },
    });
  }

  protected copy(link: CaseLinkCreated): void {
    this.copied.set(this.clipboard.copy(this.urlOf(link)));
  }

  protected revoke(link: CaseLinkView): void {
    this.error.set(null);
    this.api.revokeLink(this.data.caseId, link.id).subscribe({
      next: () => this.links.reload(),
      error: (error: unknown) => this.error.set(describeError(error)),
    });
  }
}
