import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';

import { SESSION_STORAGE_KEY, Session } from './session';

const ADA = { id: 'u1', name: 'Ada Analyst', email: 'analyst@example.org' };

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

  it('keeps the chosen lab across a refresh while the user still belongs to it', () => {
    localStorage.setItem(
      SESSION_STORAGE_KEY,
      JSON.stringify({ token: 't', user: ADA, memberships: [], currentLabId: 'lab-2' }),
    );
    const { session, backend } = setUp();
    session.refresh().subscribe();
    backend.expectOne('/api/me').flush({
      user: ADA,
      memberships: [
        { labId: 'lab-1', labName: 'Bench Lab', role: 'analyst' },
        { labId: 'lab-2', labName: 'Shaker Lab', role: 'owner' },
      ],
    });
    expect(session.currentLab()).toEqual({ id: 'lab-2', name: 'Shaker Lab' });
    expect(session.roleIn('lab-2')).toBe('owner');
    const stored: unknown = JSON.parse(localStorage.getItem(SESSION_STORAGE_KEY) ?? 'null');
    expect(stored).toMatchObject({ currentLabId: 'lab-2' });
  });

  it('falls back to the first lab when the chosen one is gone, and refuses to select a lab it is not in', () => {
    localStorage.setItem(
      SESSION_STORAGE_KEY,
      JSON.stringify({ token: 't', user: ADA, memberships: [], currentLabId: 'lab-gone' }),
    );
    const { session, backend } = setUp();
    session.refresh().subscribe();
    backend.expectOne('/api/me').flush({
      user: ADA,
      memberships: [{ labId: 'lab-1', labName: 'Bench Lab', role: 'viewer' }],
    });
    expect(session.currentLab()?.id).toBe('lab-1');
    session.selectLab('lab-stranger');
    expect(session.currentLab()?.id).toBe('lab-1');
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
