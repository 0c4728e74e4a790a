import { provideHttpClient } from '@angular/common/http';
import { provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { Router, provideRouter } from '@angular/router';

import { routes } from './app.routes';
import { SESSION_STORAGE_KEY } from './core/session';

describe('app routes', () => {
  function setUp(): Router {
    TestBed.configureTestingModule({
      providers: [provideHttpClient(), provideHttpClientTesting(), provideRouter(routes)],
    });
    return TestBed.inject(Router);
  }

  afterEach(() => localStorage.clear());

  it('sends a signed-out visitor of /labs to sign in and back to /labs afterwards', async () => {
    const router = setUp();
    await router.navigateByUrl('/labs');
    expect(router.url).toBe('/sign-in?returnUrl=%2Flabs');
  });

  it("opens the current lab's page for /labs when signed in", async () => {
    localStorage.setItem(
      SESSION_STORAGE_KEY,
      JSON.stringify({
        token: 't',
        user: { id: 'u1', name: 'Ada', email: 'ada@example.org' },
        memberships: [{ lab: { id: 'lab-9', name: 'Shaker Lab' }, role: 'viewer' }],
        currentLabId: 'lab-9',
      }),
    );
    const router = setUp();
    await router.navigateByUrl('/labs');
    expect(router.url).toBe('/labs/lab-9');
  });
});
