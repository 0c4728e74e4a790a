import { HttpClient } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import { Observable, map } from 'rxjs';

import { LabRole, User, isLabRole, parseUser } from '../../core/session';

export interface LabMember {
  readonly user: User;
  readonly role: LabRole;
}

/** The server's largest page; labs are small teams, so one page shows everyone. */
const MEMBER_PAGE_SIZE = 500;

export const LAB_ROLES: readonly { readonly value: LabRole; readonly label: string; readonly can: string }[] = [
  { value: 'owner', label: 'Owner', can: 'manages members and everything below' },
  { value: 'analyst', label: 'Analyst', can: 'creates cases, saves revisions and runs' },
  { value: 'reviewer', label: 'Reviewer', can: 'rechecks revisions and comments' },
  { value: 'viewer', label: 'Viewer', can: 'reads cases and runs' },
];

/** A pending invitation for an address that has no account yet (times are ISO strings). */
export interface LabInvitation {
  readonly id: string;
  readonly email: string;
  readonly role: LabRole;
  readonly invitedAt: string;
  readonly expiresAt: string;
}

/** An invitation's mail is queued in the server's outbox with it and sent shortly after. */
export type AddMemberResult =
  | { readonly kind: 'member'; readonly member: LabMember }
  | { readonly kind: 'invitation'; readonly invitation: LabInvitation; readonly queued: boolean };

function isRecord(value: unknown): value is Record<string, unknown> {
  return typeof value === 'object' && value !== null;
}

/** One `{ userId, name, email, role }` entry of the members page. */
function parseMember(value: unknown): LabMember | null {
  if (!isRecord(value) || !isLabRole(value['role'])) return null;
  const user = parseUser({ id: value['userId'], name: value['name'], email: value['email'] });
  return user ? { user, role: value['role'] } : null;
}

/** `GET /api/labs/:labId/members` answers a page: `{ items, total, limit, offset }`. */
export function parseMembers(reply: unknown): LabMember[] {
  const items = isRecord(reply) && Array.isArray(reply['items']) ? (reply['items'] as unknown[]) : [];
  return items.map(parseMember).filter((m): m is LabMember => m !== null);
}

/** One `{ id, email, role, invitedAt, expiresAt }` invitation. */
function parseInvitation(value: unknown): LabInvitation | null {
  if (!isRecord(value)) return null;
  const { id, email, role, invitedAt, expiresAt } = value;
  if (typeof id !== 'string' || typeof email !== 'string' || !isLabRole(role)) return null;
  if (typeof invitedAt !== 'string' || typeof expiresAt !== 'string') return null;
  return { id, email, role, invitedAt, expiresAt };
}

/** `GET /api/labs/:labId/invitations` answers a page like the members list. */
export function parseInvitations(reply: unknown): LabInvitation[] {
  const items = isRecord(reply) && Array.isArray(reply['items']) ? (reply['items'] as unknown[]) : [];
  return items.map(parseInvitation).filter((i): i is LabInvitation => i !== null);
}

export function parseAddResult(reply: unknown): AddMemberResult {
  if (isRecord(reply) && reply['kind'] === 'member') {
    const member = parseMember(reply['member']);
    if (member) return { kind: 'member', member };
  }
  if (isRecord(reply) && reply['kind'] === 'invitation') {
    const invitation = parseInvitation(reply['invitation']);
    if (invitation) return { kind: 'invitation', invitation, queued: reply['queued'] === true };
  }
  throw new Error('The server sent an unexpected reply to adding a member.');
}

/** The lab membership endpoints. The server enforces who may call which. */
@Injectable({ providedIn: 'root' })
export class LabMembers {
  private readonly http = inject(HttpClient);

  list(labId: string): Observable<LabMember[]> {
    return this.http
      .get<unknown>(`/api/labs/${encodeURIComponent(labId)}/members`, { params: { pageSize: MEMBER_PAGE_SIZE } })
      .pipe(map(parseMembers));
  }

  /** Adds an existing account, or invites an address that has none yet. */
  add(labId: string, email: string, role: LabRole): Observable<AddMemberResult> {
    return this.http
      .post<unknown>(`/api/labs/${encodeURIComponent(labId)}/members`, { email, role })
      .pipe(map(parseAddResult));
  }

  changeRole(labId: string, userId: string, role: LabRole): Observable<unknown> {
    return this.http.patch<unknown>(
      `/api/labs/${encodeURIComponent(labId)}/members/${encodeURIComponent(userId)}`,
      { role },
    );
  }

  /** Owners only; the server answers 409 `last_owner` rather than leave a lab without an owner. */
  remove(labId: string, userId: string): Observable<unknown> {
    return this.http.delete<unknown>(`/api/labs/${encodeURIComponent(labId)}/members/${encodeURIComponent(userId)}`);
  }

  /** Pending invitations (not accepted, not expired), newest first. Owners only. */
  invitations(labId: string): Observable<LabInvitation[]> {
    return this.http
      .get<unknown>(`/api/labs/${encodeURIComponent(labId)}/invitations`, { params: { pageSize: MEMBER_PAGE_SIZE } })
      .pipe(map(parseInvitations));
  }

  revokeInvitation(labId: string, invitationId: string): Observable<unknown> {
    return this.http.delete<unknown>(
      `/api/labs/${encodeURIComponent(labId)}/invitations/${encodeURIComponent(invitationId)}`,
    );
  }
}
