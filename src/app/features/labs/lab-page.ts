import {
  ChangeDetectionStrategy,
  Component,
  ErrorHandler,
  computed,
  effect,
  inject,
  input,
  signal,
} from '@angular/core';
import { DatePipe } from '@angular/common';
import { rxResource } from '@angular/core/rxjs-interop';
import { FormGroupDirective, NonNullableFormBuilder, ReactiveFormsModule, Validators } from '@angular/forms';
import { MatButtonModule } from '@angular/material/button';
import { MatCardModule } from '@angular/material/card';
import { MatDialog } from '@angular/material/dialog';
import { MatFormFieldModule } from '@angular/material/form-field';
import { MatIconModule } from '@angular/material/icon';
import { MatInputModule } from '@angular/material/input';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSelectModule } from '@angular/material/select';
import { MatSnackBar } from '@angular/material/snack-bar';
import { MatTableModule } from '@angular/material/table';
import { MatTooltipModule } from '@angular/material/tooltip';

import { apiErrorOf, describeError } from '../../core/error-message';
import { LabRole, Session } from '../../core/session';
import { AddMemberResult, LAB_ROLES, LabInvitation, LabMember, LabMembers } from './lab-members';
import { RemoveMemberData, RemoveMemberDialog } from './remove-member-dialog';

@Component({
  selector: 'qp-lab-page',
  imports: [
    DatePipe,
    ReactiveFormsModule,
    MatButtonModule,
    MatCardModule,
    MatFormFieldModule,
    MatIconModule,
    MatInputModule,
    MatProgressBarModule,
    MatSelectModule,
    MatTableModule,
    MatTooltipModule,
  ],
  templateUrl: './lab-page.html',
  styleUrl: './lab-page.scss',
  changeDetection: ChangeDetectionStrategy.OnPush,
})
export class LabPage {
  private readonly session = inject(Session);
  private readonly labMembers = inject(LabMembers);
  private readonly snackBar = inject(MatSnackBar);
  private readonly errorHandler = inject(ErrorHandler);
  private readonly dialog = inject(MatDialog);

  /** Bound from the `:labId` route parameter. */
  readonly labId = input.required<string>();

  protected readonly roles = LAB_ROLES;
  protected readonly invitationColumns = ['email', 'role', 'invitedAt', 'expiresAt', 'revoke'];
  protected readonly members = rxResource({
    params: () => this.labId(),
    stream: ({ params }) => this.labMembers.list(params),
  });
  protected readonly sortedMembers = computed(() =>
    [...(this.members.value() ?? [])].sort((a, b) => a.user.name.localeCompare(b.user.name)),
  );
  protected readonly loadError = computed(() => {
    const error = this.members.error();
    return error ? describeError(error.cause ?? error) : null;
  });
  protected readonly labName = computed(
    () => this.session.memberships().find((m) => m.lab.id === this.labId())?.lab.name ?? 'Lab',
  );
  protected readonly myRole = computed(() => this.session.roleIn(this.labId()));
  protected readonly isOwner = computed(() => this.myRole() === 'owner');
  protected readonly myUserId = computed(() => this.session.user()?.id ?? null);
  protected readonly columns = computed(() => (this.isOwner() ? ['member', 'role', 'remove'] : ['member', 'role']));

  /** Only owners may see invitations, so for anyone else the resource stays idle and never asks. */
  protected readonly invitations = rxResource({
    params: () => (this.isOwner() ? this.labId() : undefined),
    stream: ({ params }) => this.labMembers.invitations(params),
  });
  protected readonly invitationsError = computed(() => {
    const error = this.invitations.error();
    return error ? describeError(error.cause ?? error) : null;
  });
  protected readonly revokingId = signal<string | null>(null);

  protected readonly addForm = inject(NonNullableFormBuilder).group({
    email: ['', [Validators.required, Validators.email]],
    role: ['analyst' as LabRole, Validators.required],
  });
  protected readonly adding = signal(false);
  protected readonly addError = signal<string | null>(null);
  protected readonly changingUserId = signal<string | null>(null);

  constructor() {
    // Opening a lab's page (from a link, say) makes it the lab the rest of the app works in.
    effect(() => this.session.selectLab(this.labId()));
  }

  protected roleLabel(role: LabRole): string {
    return LAB_ROLES.find((r) => r.value === role)?.label ?? role;
  }

  protected addMember(formDirective: FormGroupDirective): void {
    this.addError.set(null);
    if (this.addForm.invalid) {
      this.addForm.markAllAsTouched();
      return;
    }
    const { email, role } = this.addForm.getRawValue();
    this.adding.set(true);
    this.labMembers.add(this.labId(), email.trim(), role).subscribe({
      next: (result) => {
        this.adding.set(false);
        formDirective.resetForm({ email: '', role: 'analyst' });
        if (result.kind === 'member') this.members.reload();
        else this.invitations.reload();
        this.snackBar.open(this.describeAdded(result), 'OK', { duration: 6000 });
      },
      error: (error: unknown) => {
        this.adding.set(false);
        const api = apiErrorOf(error);
        if (api?.field === 'email') {
          this.addForm.controls.email.setErrors({ server: api.message });
        } else {
          this.addError.set(describeError(error));
        }
      },
    });
  }

  private describeAdded(result: AddMemberResult): string {
    if (result.kind === 'member') {
      return `Added ${result.member.user.name} as ${this.roleLabel(result.member.role).toLowerCase()}.`;
    }
    const { email, role } = result.invitation;
    const as = this.roleLabel(role).toLowerCase();
    return result.queued
      ? `${email} has no account yet: an invitation to join as ${as} is on its way by e-mail.`
      : `${email} has no account yet: an invitation to join as ${as} was created.`;
  }

  protected changeRole(member: LabMember, role: LabRole): void {
    if (role === member.role) return;
    this.changingUserId.set(member.user.id);
    this.labMembers.changeRole(this.labId(), member.user.id, role).subscribe({
      next: () => {
        this.changingUserId.set(null);
        this.members.reload();
        if (member.user.id === this.myUserId()) this.session.refresh().subscribe();
        this.snackBar.open(`${member.user.name} is now ${this.roleLabel(role).toLowerCase()}.`, 'OK', {
          duration: 4000,
        });
      },
      error: (error: unknown) => {
        this.changingUserId.set(null);
        // Reload so the select shows the role the server kept.
        this.members.reload();
        this.errorHandler.handleError(error);
      },
    });
  }

  protected confirmRemoval(member: LabMember): void {
    const isSelf = member.user.id === this.myUserId();
    const data: RemoveMemberData = { labId: this.labId(), labName: this.labName(), member, isSelf };
    this.dialog
      .open<RemoveMemberDialog, RemoveMemberData, boolean>(RemoveMemberDialog, { data, autoFocus: 'dialog' })
      .afterClosed()
      .subscribe((removed) => {
        if (!removed) return;
        this.members.reload();
        // Leaving changes what this person may do everywhere, so the session learns it at once.
        if (isSelf) this.session.refresh().subscribe();
        const text = isSelf ? `You left ${this.labName()}.` : `${member.user.name} was removed from ${this.labName()}.`;
        this.snackBar.open(text, 'OK', { duration: 5000 });
      });
  }

  protected revokeInvitation(invitation: LabInvitation): void {
    this.revokingId.set(invitation.id);
    this.labMembers.revokeInvitation(this.labId(), invitation.id).subscribe({
      next: () => {
        this.revokingId.set(null);
        this.invitations.reload();
        this.snackBar.open(`The invitation for ${invitation.email} was revoked; its link no longer works.`, 'OK', {
          duration: 5000,
        });
      },
      error: (error: unknown) => {
        this.revokingId.set(null);
        this.invitations.reload();
        this.errorHandler.handleError(error);
      },
    });
  }
}
