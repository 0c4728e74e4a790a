import { HttpClient } from '@angular/common/http';
import { Injectable, inject } from '@angular/core';
import { Observable, map } from 'rxjs';

import { LabRole, User, isLabRole, parseUser } from '../../core/session';

export interface LabMember {
  readonly user: User;
  readonly role: LabRole;
}

export const LAB_ROLES: readonly { readonly value: LabRole; readonly label: string; readonly can: string }[] = [
  { value: 'owner', label: 'Owner', can: 'manages members and everything below' },
  { value: 'analyst', label: 'Analyst', can: 'creates cases, saves revisions and runs' },
  { value: 'reviewer', label: 'Reviewer', can: 'rechecks revisions and comments' },
  { value: 'viewer', label: 'Viewer', can: 'reads cases and runs' },
];

/** Accepts either a bare list or `{ members: [...] }`, and drops entries that do not parse. */
export function parseMembers(reply: unknown): LabMember[] {
  const list: unknown =
    typeof reply === 'object' && reply !== null && 'members' in reply ? reply.members : reply;
  if (!Array.isArray(list)) return [];
  const members: LabMember[] = [];
  for (const entry of list as unknown[]) {
    if (typeof entry !== 'object' || entry === null || !('role' in entry) || !('user' in entry)) continue;
    const user = parseUser(entry.user);
    if (user && isLabRole(entry.role)) members.push({ user, role: entry.role });
  }
  return members;
}

/** The lab membership endpoints. The server enforces who may call which. */
@Injectable({ providedIn: 'root' })
export class LabMembers {
  private readonly http = inject(HttpClient);

  list(labId: string): Observable<LabMember[]> {
    return this.http.get<unknown>(`/api/labs/${encodeURIComponent(labId)}/members`).pipe(map(parseMembers));
  }

  add(labId: string, email: string, role: LabRole): Observable<unknown> {
    return this.http.post<unknown>(`/api/labs/${encodeURIComponent(labId)}/members`, { email, role });
  }

  changeRole(labId: string, userId: string, role: LabRole): Observable<unknown> {
    return this.http.patch<unknown>(
      `/api/labs/${encodeURIComponent(labId)}/members/${encodeURIComponent(userId)}`,
      { role },
    );
  }
}
