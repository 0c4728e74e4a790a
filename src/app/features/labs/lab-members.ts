import { HttpClient } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import { Observable, map } from 'rxjs';

import { pagedSchema, type LabRole } from '../../../../shared/api/common';
import { addMemberResultSchema, invitationSchema, memberSchema, type Invitation, type Member } from '../../../../shared/api/labs';
import { replyOf } from '../../core/api-reply';

/** A member as the pages show one: the person, their role in the lab and since when (an ISO instant). */
export interface LabMember {
  readonly user: { readonly id: string; readonly name: string; readonly email: string };
  readonly role: LabRole;
  readonly joinedAt: string;
}

/**
 * The server's largest page (pageQuerySchema in shared/api); labs are small teams, so one page shows everyone.
 * The reply's `total` says when a lab has outgrown it.
 */
export const MEMBER_PAGE = { page: 1, pageSize: 500 } as const;

export const LAB_ROLES: readonly { readonly value: LabRole; readonly label: string; readonly can: string }[] = [
  { value: 'owner', label: 'Owner', can: 'manages members and everything below' },
  { value: 'analyst', label: 'Analyst', can: 'creates cases, saves revisions and runs' },
  { value: 'reviewer', label: 'Reviewer', can: 'rechecks revisions and comments' },
  { value: 'viewer', label: 'Viewer', can: 'reads cases and runs' },
];

/** A pending invitation for an address that has no account yet (times are ISO strings). */
export type LabInvitation = Invitation;

/** An invitation's mail is queued in the server's outbox with it and sent shortly after. */
export type AddMemberResult =
  | { readonly kind: 'member'; readonly member: LabMember }
  | { readonly kind: 'invitation'; readonly invitation: LabInvitation; readonly queued: boolean };

function labMemberOf({ userId, name, email, role, joinedAt }: Member): LabMember {
  return { user: { id: userId, name, email }, role, joinedAt };
}

const membersPage = pagedSchema(memberSchema);
const invitationsPage = pagedSchema(invitationSchema);

/** The lab membership endpoints. The server enforces who may call which. */
@Injectable({ providedIn: 'root' })
export class LabMembers {
  private readonly http = inject(HttpClient);

  list(labId: string): Observable<LabMember[]> {
    return this.http
      .get<unknown>(`/api/labs/${encodeURIComponent(labId)}/members`, { params: MEMBER_PAGE })
      .pipe(
        replyOf(membersPage, 'the lab members'),
        map((page) => page.items.map(labMemberOf)),
      );
  }

  /** Adds an existing account, or invites an address that has none yet. */
  add(labId: string, email: string, role: LabRole): Observable<AddMemberResult> {
    return this.http
      .post<unknown>(`/api/labs/${encodeURIComponent(labId)}/members`, { email, role })
      .pipe(
        replyOf(addMemberResultSchema, 'adding a member'),
        map((result): AddMemberResult => (result.kind === 'member' ? { kind: 'member', member: labMemberOf(result.member) } : result)),
      );
  }

  changeRole(labId: string, userId: string, role: LabRole): Observable<LabMember> {
    return this.http
      .patch<unknown>(`/api/labs/${encodeURIComponent(labId)}/members/${encodeURIComponent(userId)}`, { role })
      .pipe(replyOf(memberSchema, 'changing a role'), map(labMemberOf));
  }

  /** Owners only; the server answers 409 `last_owner` rather than leave a lab without an owner. */
  remove(labId: string, userId: string): Observable<unknown> {
    return this.http.delete<unknown>(`/api/labs/${encodeURIComponent(labId)}/members/${encodeURIComponent(userId)}`);
  }

  /** Pending invitations (not accepted, not expired), newest first. Owners only. */
  invitations(labId: string): Observable<LabInvitation[]> {
    return this.http
      .get<unknown>(`/api/labs/${encodeURIComponent(labId)}/invitations`, { params: MEMBER_PAGE })
      .pipe(
        replyOf(invitationsPage, 'the pending invitations'),
        map((page) => page.items),
      );
  }

  revokeInvitation(labId: string, invitationId: string): Observable<unknown> {
    return this.http.delete<unknown>(
      `/api/labs/${encodeURIComponent(labId)}/invitations/${encodeURIComponent(invitationId)}`,
    );
  }
}
