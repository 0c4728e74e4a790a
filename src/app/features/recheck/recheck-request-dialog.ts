import { ChangeDetectionStrategy, Component, computed, inject, signal } from '@angular/core';
import { rxResource } from '@angular/core/rxjs-interop';
import { NonNullableFormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MAT_DIALOG_DATA, MatDialogModule, MatDialogRef } from '@angular/material/dialog';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatInputModule } from '@angular/material/input';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSelectModule } from '@angular/material/select';

import { describeError } from '../../core/error-message';
import { Session } from '../../core/session';
import { LabMembers } from '../labs/lab-members';
import { CaseApi } from '../library/case-api';

export interface RecheckRequestData {
  readonly caseId: string;
  readonly revision: number;
  readonly labId: string;
}

/** An analyst asks a reviewer (or an owner) of the lab to rerun and confirm a revision; the reviewer is e-mailed. */
@Component({
  selector: 'qp-recheck-request-dialog',
  imports: [ReactiveFormsModule, MatButtonModule, MatDialogModule, MatFormFieldModule, MatInputModule, MatProgressBarModule, MatSelectModule],
  template: `
    <h2 mat-dialog-title>Ask for a recheck of r{{ data.revision }}</h2>
    <form [formGroup]="form" (ngSubmit)="send()" novalidate aria-label="Ask for a recheck">
      <mat-dialog-content class="fields">
        <p class="lead">The reviewer reruns every stored run of this revision and confirms or disputes its numbers.</p>
        @if (members.isLoading()) {
          <mat-progress-bar mode="indeterminate" aria-label="Loading reviewers" />
        }
        <mat-form-field>
          <mat-label>Reviewer</mat-label>
          <mat-select formControlName="reviewerId" required>
            @for (member of reviewers(); track member.user.id) {
              <mat-option [value]="member.user.id">{{ member.user.name }} ({{ member.role }})</mat-option>
            }
          </mat-select>
          @if (!members.isLoading() && reviewers().length === 0) {
            <mat-hint>No one else in this lab is a reviewer or owner.</mat-hint>
          }
          <mat-error>Choose who should recheck.</mat-error>
        </mat-form-field>
        <mat-form-field>
          <mat-label>Message (optional)</mat-label>
          <textarea matInput formControlName="message" rows="3" maxlength="2000"></textarea>
        </mat-form-field>
        @if (error(); as message) {
          <p class="form-error" role="alert">{{ message }}</p>
        }
      </mat-dialog-content>
      <mat-dialog-actions align="end">
        <button matButton type="button" mat-dialog-close>Cancel</button>
        <button matButton="filled" type="submit" [disabled]="sending()">Send request</button>
      </mat-dialog-actions>
    </form>
  `,
  styles: `
    .fields { display: flex; flex-direction: column; gap: 4px; min-width: min(420px, 80vw); }
    .lead { margin: 0 0 8px; color: var(--mat-sys-on-surface-variant); }
    .form-error { color: var(--mat-sys-error); margin: 0; }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class RecheckRequestDialog {
  private readonly api = inject(CaseApi);
  private readonly labMembers = inject(LabMembers);
  private readonly session = inject(Session);
  private readonly dialogRef = inject<MatDialogRef<RecheckRequestDialog, boolean>>(MatDialogRef);
  protected readonly data = inject<RecheckRequestData>(MAT_DIALOG_DATA);

  protected readonly members = rxResource({ params: () => this.data.labId, stream: ({ params }) => this.labMembers.list(params) });
  protected readonly reviewers = computed(() =>
    (this.members.value() ?? [])
      .filter((m) => (m.role === 'reviewer' || m.role === 'owner') && m.user.id !== this.session.user()?.id)
      .sort((a, b) => (a.role === b.role ? a.user.name.localeCompare(b.user.name) : a.role === 'reviewer' ? -1 : 1)),
  );
  protected readonly form = inject(NonNullableFormBuilder).group({
    reviewerId: ['', Validators.required],
    message: [''],
  });
  protected readonly sending = signal(false);
  protected readonly error = signal<string | null>(null);

  protected send(): void {
    if (this.form.invalid) {
      this.form.markAllAsTouched();
      return;
    }
    const { reviewerId, message } = this.form.getRawValue();
    this.sending.set(true);
    this.error.set(null);
    this.api.requestRecheck(this.data.caseId, this.data.revision, reviewerId, message.trim()).subscribe({
      next: () => this.dialogRef.close(true),
      error: (error: unknown) => {
        this.sending.set(false);
        this.error.set(describeError(error));
      },
    });
  }
}
