import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { firstValueFrom } from 'rxjs';

import { ReplyMismatchError } from './api-reply';
import { SESSION_STORAGE_KEY, Session } from './session';

const ADA = { id: '00000000-0000-4000-8000-0000000000a1', name: 'Ada Analyst', email: 'analyst@example.org', isSiteAdmin: false };

describe('Session', () => {
  function setUp(): { session: Session; backend: HttpTestingController } {
    TestBed.configureTestingModule({ providers: [provideHttpClient(), provideHttpClientTesting()] });
    return { session: TestBed.inject(Session), backend: TestBed.inject(HttpTestingController) };
  }

  afterEach(() => localStorage.clear());

  it('ignores stored data it cannot read instead of trusting it', () => {
    localStorage.setItem(SESSION_STORAGE_KEY, JSON.stringify({ token: 42, user: ADA }));
    expect(setUp().session.isSignedIn()).toBe(false);
    TestBed.resetTestingModule();
    localStorage.setItem(SESSION_STORAGE_KEY, '{not json');
    expect(setUp().session.isSignedIn()).toBe(false);
  });

  it('keeps the chosen lab across a refresh while the user still belongs to it', async () => {
    localStorage.setItem(
      SESSION_STORAGE_KEY,
      JSON.stringify({ token: 't', user: ADA, memberships: [], currentLabId: '00000000-0000-4000-8000-00000000002a' }),
    );
    const { session, backend } = setUp();
    const refreshed = firstValueFrom(session.refresh());
    backend.expectOne('/api/me').flush({
      user: ADA,
      memberships: [
        { labId: '00000000-0000-4000-8000-00000000001a', labName: 'Bench Lab', role: 'analyst' },
        { labId: '00000000-0000-4000-8000-00000000002a', labName: 'Shaker Lab', role: 'owner' },
      ],
      tokenExpiresAt: '2030-01-01T00:00:00.000Z',
    });
    await refreshed;
    expect(session.currentLab()).toEqual({ id: '00000000-0000-4000-8000-00000000002a', name: 'Shaker Lab' });
    expect(session.roleIn('00000000-0000-4000-8000-00000000002a')).toBe('owner');
    const stored: unknown = JSON.parse(localStorage.getItem(SESSION_STORAGE_KEY) ?? 'null');
    expect(stored).toMatchObject({ currentLabId: '00000000-0000-4000-8000-00000000002a' });
  });

  it('falls back to the first lab when the chosen one is gone, and refuses to select a lab it is not in', async () => {
    localStorage.setItem(
      SESSION_STORAGE_KEY,
      JSON.stringify({ token: 't', user: ADA, memberships: [], currentLabId: 'lab-gone' }),
    );
    const { session, backend } = setUp();
    const refreshed = firstValueFrom(session.refresh());
    backend.expectOne('/api/me').flush({
      user: ADA,
      memberships: [{ labId: '00000000-0000-4000-8000-00000000001a', labName: 'Bench Lab', role: 'viewer' }],
      tokenExpiresAt: '2030-01-01T00:00:00.000Z',
    });
    await refreshed;
    expect(session.currentLab()?.id).toBe('00000000-0000-4000-8000-00000000001a');
    session.selectLab('lab-stranger');
    expect(session.currentLab()?.id).toBe('00000000-0000-4000-8000-00000000001a');
  });

  it('refuses an account reply that breaks the contract instead of guessing, and keeps what it had', async () => {
    localStorage.setItem(
      SESSION_STORAGE_KEY,
      JSON.stringify({ token: 't', user: ADA, memberships: [{ lab: { id: 'lab-kept', name: 'Bench Lab' }, role: 'owner' }], currentLabId: 'lab-kept' }),
    );
    const { session, backend } = setUp();
    const failure = firstValueFrom(session.refresh()).catch((error: unknown) => error);
    // A role this build does not know, and no token expiry.
    backend.expectOne('/api/me').flush({ user: ADA, memberships: [{ labId: '00000000-0000-4000-8000-00000000001a', labName: 'Bench Lab', role: 'admin' }] });
    expect(await failure).toBeInstanceOf(ReplyMismatchError);
    expect(session.roleIn('lab-kept')).toBe('owner');
  });

  it('forgets the session on sign-out even when the server cannot be reached', () => {
    localStorage.setItem(
      SESSION_STORAGE_KEY,
      JSON.stringify({ token: 't', user: ADA, memberships: [], currentLabId: null }),
    );
    const { session, backend } = setUp();
    let done = false;
    session.signOut().subscribe({ complete: () => (done = true) });
    backend.expectOne('/api/auth/sign-out').error(new ProgressEvent('error'));
    expect(done).toBe(true);
    expect(session.isSignedIn()).toBe(false);
    expect(localStorage.getItem(SESSION_STORAGE_KEY)).toBeNull();
  });
});
