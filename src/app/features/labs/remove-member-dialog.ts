import { ChangeDetectionStrategy, Component, inject, signal } from '@angular/core';
import { MatButtonModule } from '@angular/material/button';
import { MAT_DIALOG_DATA, MatDialogModule, MatDialogRef } from '@angular/material/dialog';
import { MatIconModule } from '@angular/material/icon';

import { apiErrorOf, describeError } from '../../core/error-message';
import { LabMember, LabMembers } from './lab-members';

export interface RemoveMemberData {
  readonly labId: string;
  readonly labName: string;
  readonly member: LabMember;
  /** the signed-in owner is removing themselves */
  readonly isSelf: boolean;
}

/**
 * Asks before removing a member and sends the removal itself, so a refusal (the lab's last owner) is shown here,
 * beside the question, instead of in a passing snack bar. Closes with `true` once the member is gone.
 */
@Component({
  selector: 'qp-remove-member-dialog',
  imports: [MatButtonModule, MatDialogModule, MatIconModule],
  template: `
    <h2 mat-dialog-title>{{ data.isSelf ? 'Leave ' + data.labName + '?' : 'Remove ' + data.member.user.name + '?' }}</h2>
    <mat-dialog-content class="body">
      <p>
        @if (data.isSelf) {
          You will lose access to this lab's cases at once. Another owner can add you again.
        } @else {
          {{ data.member.user.name }} ({{ data.member.user.email }}) loses access to the cases of {{ data.labName }}
          at once. Their saved revisions and runs stay in the lab.
        }
      </p>
      @if (refusal(); as message) {
        <p class="refusal" role="alert">
          <mat-icon aria-hidden="true">block</mat-icon>
          <span>{{ message }}</span>
        </p>
      }
    </mat-dialog-content>
    <mat-dialog-actions align="end">
      <button matButton type="button" mat-dialog-close>{{ refusal() ? 'Close' : 'Cancel' }}</button>
      @if (!lastOwner()) {
        <button matButton="filled" type="button" class="remove-confirm" [disabled]="removing()" (click)="remove()">
          {{ data.isSelf ? 'Leave lab' : 'Remove' }}
        </button>
      }
    </mat-dialog-actions>
  `,
  styles: `
    .body { max-width: 460px; }
    .refusal {
      display: flex;
      gap: 8px;
      align-items: flex-start;
      margin: 8px 0 0;
      padding: 12px;
      border-radius: 8px;
      background: var(--mat-sys-error-container);
      color: var(--mat-sys-on-error-container);
    }
    .refusal mat-icon { flex: none; }
  `,
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class RemoveMemberDialog {
  private readonly labMembers = inject(LabMembers);
  private readonly dialogRef = inject<MatDialogRef<RemoveMemberDialog, boolean>>(MatDialogRef);
  protected readonly data = inject<RemoveMemberData>(MAT_DIALOG_DATA);

  protected readonly removing = signal(false);
  protected readonly refusal = signal<string | null>(null);
  /** Retrying cannot help until someone else is made owner, so the confirm button goes away. */
  protected readonly lastOwner = signal(false);

  protected remove(): void {
    this.removing.set(true);
    this.refusal.set(null);
    this.labMembers.remove(this.data.labId, this.data.member.user.id).subscribe({
      next: () => this.dialogRef.close(true),
      error: (error: unknown) => {
        this.removing.set(false);
        const api = apiErrorOf(error);
        if (api?.code === 'last_owner') {
          this.lastOwner.set(true);
          this.refusal.set(`${this.data.member.user.name} is the only owner of ${this.data.labName}. ${api.message}`);
        } else {
          this.refusal.set(describeError(error));
        }
      },
    });
  }
}
