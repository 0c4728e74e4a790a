import { Component } from '@angular/core';
import { TestBed } from '@angular/core/testing';
import { provideHttpClient } from '@angular/common/http';
import { provideHttpClientTesting } from '@angular/common/http/testing';
import { Router, provideRouter } from '@angular/router';

import { authGuard } from './auth-guard';
import { SESSION_STORAGE_KEY } from './session';

@Component({ selector: 'qp-private-page', template: 'private page' })
class PrivatePage {}

@Component({ selector: 'qp-sign-in-stub', template: 'sign-in page' })
class SignInStub {}

describe('authGuard', () => {
  function setUp(): Router {
    TestBed.configureTestingModule({
      providers: [
        provideHttpClient(),
        provideHttpClientTesting(),
        provideRouter([
          { path: 'sign-in', component: SignInStub },
          { path: 'labs/:labId', component: PrivatePage, canActivate: [authGuard] },
        ]),
      ],
    });
    return TestBed.inject(Router);
  }

  afterEach(() => localStorage.clear());

  it('redirects a visitor to sign in, remembering where they were going', async () => {
    const router = setUp();
    await router.navigateByUrl('/labs/lab-7');
    expect(router.url).toBe('/sign-in?returnUrl=%2Flabs%2Flab-7');
  });

  it('lets a signed-in user through', async () => {
    localStorage.setItem(
      SESSION_STORAGE_KEY,
      JSON.stringify({
        token: 't',
        user: { id: 'u1', name: 'Ada', email: 'ada@example.org' },
        memberships: [],
        currentLabId: null,
      }),
    );
    const router = setUp();
    await router.navigateByUrl('/labs/lab-7');
    expect(router.url).toBe('/labs/lab-7');
  });
});
