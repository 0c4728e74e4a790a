import { HttpClient, provideHttpClient, withInterceptors } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { Router, provideRouter } from '@angular/router';

import { authInterceptor } from './auth-interceptor';
import { SESSION_STORAGE_KEY, Session } from './session';

function storeSession(token: string): void {
  localStorage.setItem(
    SESSION_STORAGE_KEY,
    JSON.stringify({
      token,
      user: { id: 'u1', name: 'Ada Analyst', email: 'ada@example.org' },
      memberships: [{ lab: { id: 'lab-1', name: 'Shaker Lab' }, role: 'analyst' }],
      currentLabId: 'lab-1',
    }),
  );
}

describe('authInterceptor', () => {
  let http: HttpClient;
  let backend: HttpTestingController;
  let router: Router;

  function setUp(): void {
    TestBed.configureTestingModule({
      providers: [
        provideRouter([]),
        provideHttpClient(withInterceptors([authInterceptor])),
        provideHttpClientTesting(),
      ],
    });
    http = TestBed.inject(HttpClient);
    backend = TestBed.inject(HttpTestingController);
    router = TestBed.inject(Router);
  }

  afterEach(() => {
    backend.verify();
    localStorage.clear();
  });

  it('adds the bearer token to API calls when signed in', () => {
    storeSession('token-abc');
    setUp();
    http.get('/api/labs').subscribe();
    const request = backend.expectOne('/api/labs');
    expect(request.request.headers.get('Authorization')).toBe('Bearer token-abc');
    request.flush([]);
  });

  it('sends no Authorization header when nobody is signed in', () => {
    setUp();
    http.get('/api/labs').subscribe();
    const request = backend.expectOne('/api/labs');
    expect(request.request.headers.has('Authorization')).toBe(false);
    request.flush([]);
  });

  it('keeps the token away from requests outside the API', () => {
    storeSession('token-abc');
    setUp();
    http.get('/assets/readme.txt').subscribe();
    const request = backend.expectOne('/assets/readme.txt');
    expect(request.request.headers.has('Authorization')).toBe(false);
    request.flush('text');
  });

  it('on a 401 clears the session and sends the user to sign in with a return address', async () => {
    storeSession('expired-token');
    setUp();
    await router.navigateByUrl('/');
    vi.spyOn(router, 'url', 'get').mockReturnValue('/labs/lab-1');
    const navigate = vi.spyOn(router, 'navigate').mockResolvedValue(true);
    const failures: unknown[] = [];

    http.get('/api/labs/lab-1/members').subscribe({ error: (error: unknown) => failures.push(error) });
    backend
      .expectOne('/api/labs/lab-1/members')
      .flush({ error: { code: 'unauthorized', message: 'Sign in again.' } }, { status: 401, statusText: 'Unauthorized' });

    const session = TestBed.inject(Session);
    expect(session.isSignedIn()).toBe(false);
    expect(localStorage.getItem(SESSION_STORAGE_KEY)).toBeNull();
    expect(navigate).toHaveBeenCalledWith(['/sign-in'], { queryParams: { returnUrl: '/labs/lab-1' } });
    expect(failures).toHaveLength(1);
  });

  it('leaves a failed sign-in alone so the form can show the reason', () => {
    setUp();
    const navigate = vi.spyOn(router, 'navigate').mockResolvedValue(true);
    http.post('/api/auth/sign-in', { email: 'a@b.c', password: 'x' }).subscribe({ error: () => undefined });
    backend
      .expectOne('/api/auth/sign-in')
      .flush({ error: { code: 'bad_credentials', message: 'Wrong email or password.' } }, { status: 401, statusText: 'Unauthorized' });
    expect(navigate).not.toHaveBeenCalled();
  });

  it('keeps the session on a 403, which means the role is wrong, not the token', () => {
    storeSession('token-abc');
    setUp();
    http.patch('/api/labs/lab-1/members/u2', { role: 'owner' }).subscribe({ error: () => undefined });
    backend
      .expectOne('/api/labs/lab-1/members/u2')
      .flush({ error: { code: 'forbidden', message: 'Owners only.' } }, { status: 403, statusText: 'Forbidden' });
    expect(TestBed.inject(Session).isSignedIn()).toBe(true);
  });
});
