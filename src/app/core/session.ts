import { HttpClient } from '@angular/common/http';
import { Injectable, computed, inject, signal, untracked } from '@angular/core';
import { Observable, map, switchMap, tap } from 'rxjs';

import type { PublicUser } from '../../../shared/api/auth';
import type { LabRole } from '../../../shared/api/common';
import { parseReply } from './api-reply';

/** The contract's schemas bring zod, which stays out of the first download: they load with the first reply. */
const authContract = () => import('../../../shared/api/auth');

export type { LabRole };

/** Roles that may create and save cases (the server enforces the same on every write). */
export const CASE_WRITER_ROLES: readonly LabRole[] = ['analyst', 'owner'];

/** Site administrators see the local mail sink and outbox; the server checks it on every admin route. */
export type User = Readonly<PublicUser>;

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
      switchMap(async (reply) => parseReply((await authContract()).signedInSchema, 'signing in', reply)),
      tap(({ token, user }) => this.store({ token, user, memberships: [], currentLabId: null })),
      switchMap(() => this.refresh()),
    );
  }

  /** Reloads the user and their memberships; keeps the chosen lab when it is still one of theirs. */
  refresh(): Observable<User> {
    return this.http.get<unknown>('/api/me').pipe(
      switchMap(async (reply) => parseReply((await authContract()).meSchema, 'your account', reply)),
      map(({ user, memberships }) => ({
        user,
        memberships: memberships.map(({ labId, labName, role }): Membership => ({ lab: { id: labId, name: labName }, role })),
      })),
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

const LAB_ROLES: readonly LabRole[] = ['owner', 'analyst', 'reviewer', 'viewer'];

function isLabRole(value: unknown): value is LabRole {
  return typeof value === 'string' && (LAB_ROLES as readonly string[]).includes(value);
}

/** A user as this or an older build stored it (server replies themselves are parsed with shared/api). */
function parseStoredUser(value: unknown): User | null {
  if (!isRecord(value)) return null;
  const { id, name, email } = value;
  if (typeof id !== 'string' || id === '' || typeof name !== 'string' || typeof email !== 'string') return null;
  return { id, name, email, isSiteAdmin: value['isSiteAdmin'] === true };
}

function parseStoredMembership(value: unknown): Membership | null {
  if (!isRecord(value) || !isRecord(value['lab']) || !isLabRole(value['role'])) return null;
  const { id, name } = value['lab'];
  if (typeof id !== 'string' || id === '' || typeof name !== 'string') return null;
  return { lab: { id, name }, role: value['role'] };
}

function parseStoredMemberships(value: unknown): Membership[] {
  const list = Array.isArray(value) ? value : [];
  return list.map(parseStoredMembership).filter((m): m is Membership => m !== null);
}

/** Stored data may come from an older build or be tampered with: accept only what parses. */
function parseStored(value: unknown): StoredSession | null {
  if (!isRecord(value) || typeof value['token'] !== 'string') return null;
  const user = parseStoredUser(value['user']);
  if (!user) return null;
  const memberships = parseStoredMemberships(value['memberships']);
  const currentLabId = typeof value['currentLabId'] === 'string' ? value['currentLabId'] : null;
  return { token: value['token'], user, memberships, currentLabId };
}
