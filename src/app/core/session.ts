import { HttpClient } from '@angular/common/http';
import { Injectable, computed, inject, signal, untracked } from '@angular/core';
import { Observable, map, switchMap, tap } from 'rxjs';

export type LabRole = 'owner' | 'analyst' | 'reviewer' | 'viewer';

/** Roles that may create and save cases (the server enforces the same on every write). */
export const CASE_WRITER_ROLES: readonly LabRole[] = ['analyst', 'owner'];

export interface User {
  readonly id: string;
  readonly name: string;
  readonly email: string;
  /** Site administrators see the local mail sink and outbox; the server checks it on every admin route. */
  readonly isSiteAdmin: boolean;
}

export interface Lab {
  readonly id: string;
  readonly name: string;
}

export interface Membership {
  readonly lab: Lab;
  readonly role: LabRole;
}


interface StoredSession {
  readonly token: string;
  readonly user: User;
  readonly memberships: readonly Membership[];
  readonly currentLabId: string | null;
}

export const SESSION_STORAGE_KEY = 'quiverpoint.session';

/**
 * Who is signed in, their labs, and which lab they are working in. Kept in localStorage so a
 * reload or a second tab keeps the session; the server's short token lifetime bounds the risk.
 */
@Injectable({ providedIn: 'root' })
export class Session {
  private readonly http = inject(HttpClient);

  private readonly state = signal<StoredSession | null>(readStored());

  readonly token = computed(() => this.state()?.token ?? null);
  readonly user = computed(() => this.state()?.user ?? null);
  readonly memberships = computed(() => this.state()?.memberships ?? []);
  readonly isSignedIn = computed(() => this.state() !== null);
  readonly currentMembership = computed(() => {
    const session = this.state();
    if (!session) return null;
    return session.memberships.find((m) => m.lab.id === session.currentLabId) ?? null;
  });
  readonly currentLab = computed(() => this.currentMembership()?.lab ?? null);
  /** Whether the role in the current lab may create and save cases; hides controls only, the server decides. */
  readonly canWriteCases = computed(() => {
    const role = this.currentMembership()?.role;
    return role !== undefined && CASE_WRITER_ROLES.includes(role);
  });

  signIn(email: string, password: string): Observable<User> {
    return this.http.post<unknown>('/api/auth/sign-in', { email, password }).pipe(
      map((reply) => {
        const user = isRecord(reply) ? parseUser(reply['user']) : null;
        const token = isRecord(reply) ? reply['token'] : null;
        if (typeof token !== 'string' || !user) throw new Error('The server sent an unexpected sign-in reply.');
        return { token, user };
      }),
      tap(({ token, user }) => this.store({ token, user, memberships: [], currentLabId: null })),
      switchMap(() => this.refresh()),
    );
  }

  /** Reloads the user and their memberships; keeps the chosen lab when it is still one of theirs. */
  refresh(): Observable<User> {
    return this.http.get<unknown>('/api/me').pipe(
      map((reply) => {
        const user = isRecord(reply) ? parseUser(reply['user']) : null;
        if (!isRecord(reply) || !user) throw new Error('The server sent an unexpected reply about your account.');
        return { user, memberships: parseMeMemberships(reply['memberships']) };
      }),
      tap((me) => {
        const current = this.state();
        if (!current) return;
        const stillMember = me.memberships.some((m) => m.lab.id === current.currentLabId);
        this.store({
          token: current.token,
          user: me.user,
          memberships: me.memberships,
          currentLabId: stillMember ? current.currentLabId : (me.memberships[0]?.lab.id ?? null),
        });
      }),
      map((me) => me.user),
    );
  }

  /** Tells the server, then forgets the session whatever the server answered. */
  signOut(): Observable<void> {
    return new Observable<void>((subscriber) => {
      const request = this.http.post('/api/auth/sign-out', {}).subscribe({
        complete: () => finish(),
        error: () => finish(),
      });
      const finish = () => {
        this.clear();
        subscriber.next();
        subscriber.complete();
      };
      return () => request.unsubscribe();
    });
  }

  /** Safe to call from an effect: it neither tracks nor rewrites the state when nothing changes. */
  selectLab(labId: string): void {
    const current = untracked(this.state);
    if (!current || current.currentLabId === labId) return;
    if (!current.memberships.some((m) => m.lab.id === labId)) return;
    this.store({ ...current, currentLabId: labId });
  }

  roleIn(labId: string): LabRole | null {
    return this.memberships().find((m) => m.lab.id === labId)?.role ?? null;
  }

  clear(): void {
    this.state.set(null);
    storage()?.removeItem(SESSION_STORAGE_KEY);
  }

  private store(session: StoredSession): void {
    this.state.set(session);
    storage()?.setItem(SESSION_STORAGE_KEY, JSON.stringify(session));
  }
}

function storage(): Storage | null {
  return typeof localStorage === 'undefined' ? null : localStorage;
}

function readStored(): StoredSession | null {
  const raw = storage()?.getItem(SESSION_STORAGE_KEY);
  if (!raw) return null;
  try {
    return parseStored(JSON.parse(raw));
  } catch {
    return null;
  }
}

function isRecord(value: unknown): value is Record<string, unknown> {
  return typeof value === 'object' && value !== null;
}

/** Ids travel as strings in the client (route parameters are strings), whatever the server sends. */
function idOf(value: unknown): string | null {
  if (typeof value === 'string' && value !== '') return value;
  if (typeof value === 'number' && Number.isFinite(value)) return String(value);
  return null;
}

export function parseUser(value: unknown): User | null {
  if (!isRecord(value)) return null;
  const id = idOf(value['id']);
  const { name, email } = value;
  if (id === null || typeof name !== 'string' || typeof email !== 'string') return null;
  return { id, name, email, isSiteAdmin: value['isSiteAdmin'] === true };
}

const ROLES: readonly LabRole[] = ['owner', 'analyst', 'reviewer', 'viewer'];

export function isLabRole(value: unknown): value is LabRole {
  return typeof value === 'string' && (ROLES as readonly string[]).includes(value);
}

function parseMembership(value: unknown): Membership | null {
  if (!isRecord(value) || !isRecord(value['lab']) || !isLabRole(value['role'])) return null;
  const id = idOf(value['lab']['id']);
  const name = value['lab']['name'];
  if (id === null || typeof name !== 'string') return null;
  return { lab: { id, name }, role: value['role'] };
}

function parseMemberships(value: unknown): Membership[] {
  const list = Array.isArray(value) ? value : [];
  return list.map(parseMembership).filter((m): m is Membership => m !== null);
}

/** `GET /api/me` lists memberships as `{ labId, labName, role }`. */
function parseMeMemberships(value: unknown): Membership[] {
  const list = Array.isArray(value) ? value : [];
  return parseMemberships(
    list.map((entry: unknown) =>
      isRecord(entry) ? { lab: { id: entry['labId'], name: entry['labName'] }, role: entry['role'] } : null,
    ),
  );
}

/** Stored data may come from an older build or be tampered with: accept only what parses. */
function parseStored(value: unknown): StoredSession | null {
  if (!isRecord(value) || typeof value['token'] !== 'string') return null;
  const user = parseUser(value['user']);
  if (!user) return null;
  const memberships = parseMemberships(value['memberships']);
  const currentLabId = typeof value['currentLabId'] === 'string' ? value['currentLabId'] : null;
  return { token: value['token'], user, memberships, currentLabId };
}
