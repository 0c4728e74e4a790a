import { provideHttpClient, withInterceptors } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { ComponentFixture, TestBed } from '@angular/core/testing';
import { Router, provideRouter } from '@angular/router';

import { authInterceptor } from '../../core/auth-interceptor';
import { Session } from '../../core/session';
import { SignInPage } from './sign-in-page';

describe('SignInPage', () => {
  let fixture: ComponentFixture<SignInPage>;
  let backend: HttpTestingController;
  let host: HTMLElement;

  beforeEach(async () => {
    TestBed.configureTestingModule({
      imports: [SignInPage],
      providers: [
        provideRouter([]),
        provideHttpClient(withInterceptors([authInterceptor])),
        provideHttpClientTesting(),
      ],
    });
    fixture = TestBed.createComponent(SignInPage);
    backend = TestBed.inject(HttpTestingController);
    host = fixture.nativeElement as HTMLElement;
    await fixture.whenStable();
  });

  afterEach(() => {
    backend.verify();
    localStorage.clear();
  });

  function input(name: string): HTMLInputElement {
    const element = host.querySelector<HTMLInputElement>(`input[formcontrolname="${name}"]`);
    if (!element) throw new Error(`no ${name} input`);
    return element;
  }

  function type(name: string, value: string): void {
    const element = input(name);
    element.value = value;
    element.dispatchEvent(new Event('input'));
    element.dispatchEvent(new Event('blur'));
  }

  async function submit(): Promise<void> {
    host.querySelector<HTMLButtonElement>('button[type="submit"]')?.click();
    fixture.detectChanges();
    await fixture.whenStable();
  }

  function errors(): string[] {
    return Array.from(host.querySelectorAll('mat-error'), (e) => e.textContent?.trim() ?? '');
  }

  it('asks for both fields when submitted empty, and sends nothing', async () => {
    await submit();
    expect(errors()).toEqual(['Enter your email address.', 'Enter your password.']);
    backend.expectNone('/api/auth/sign-in');
    expect(document.activeElement).toBe(input('email'));
  });

  it('explains a malformed email address', async () => {
    type('email', 'not-an-address');
    type('password', 'secret-password');
    await submit();
    expect(errors()).toEqual(['Enter a valid email address, like name@example.org.']);
    backend.expectNone('/api/auth/sign-in');
  });

  it("shows the server's reason when the password is wrong", async () => {
    type('email', 'analyst@example.org');
    type('password', 'wrong-password');
    await submit();
    const request = backend.expectOne('/api/auth/sign-in');
    expect(request.request.body).toEqual({ email: 'analyst@example.org', password: 'wrong-password' });
    request.flush(
      { error: { code: 'bad_credentials', message: 'The email or password is incorrect.' } },
      { status: 401, statusText: 'Unauthorized' },
    );
    await fixture.whenStable();
    expect(host.querySelector('[role="alert"]')?.textContent).toContain('The email or password is incorrect.');
    expect(TestBed.inject(Session).isSignedIn()).toBe(false);
  });

  it('signs in, loads the labs and returns to the page the user came from', async () => {
    const navigate = vi.spyOn(TestBed.inject(Router), 'navigateByUrl').mockResolvedValue(true);
    fixture.componentRef.setInput('returnUrl', '/labs/00000000-0000-4000-8000-00000000002a');
    type('email', 'analyst@example.org');
    type('password', 'right-password');
    await submit();
    backend.expectOne('/api/auth/sign-in').flush({
      token: 'jwt-1',
      tokenType: 'Bearer',
      expiresAt: '2030-01-01T00:00:00.000Z',
      user: { id: '00000000-0000-4000-8000-0000000000a1', name: 'Ada Analyst', email: 'analyst@example.org', isSiteAdmin: false },
    });
    // The reply is checked against the contract once its schemas have loaded; then the account is asked for.
    const me = await vi.waitFor(() => backend.expectOne('/api/me'));
    expect(me.request.headers.get('Authorization')).toBe('Bearer jwt-1');
    me.flush({
      user: { id: '00000000-0000-4000-8000-0000000000a1', name: 'Ada Analyst', email: 'analyst@example.org', isSiteAdmin: false },
      memberships: [
        { labId: '00000000-0000-4000-8000-00000000001a', labName: 'Bench Lab', role: 'analyst' },
        { labId: '00000000-0000-4000-8000-00000000002a', labName: 'Shaker Lab', role: 'viewer' },
      ],
      tokenExpiresAt: '2030-01-01T00:00:00.000Z',
    });
    await vi.waitFor(() => expect(navigate).toHaveBeenCalled());
    const session = TestBed.inject(Session);
    expect(session.user()?.name).toBe('Ada Analyst');
    expect(session.currentLab()?.name).toBe('Bench Lab');
    expect(navigate).toHaveBeenCalledWith('/labs/00000000-0000-4000-8000-00000000002a');
  });

  it('ignores a return address that leads outside the app', async () => {
    const navigate = vi.spyOn(TestBed.inject(Router), 'navigateByUrl').mockResolvedValue(true);
    fixture.componentRef.setInput('returnUrl', '//elsewhere.example/steal');
    type('email', 'analyst@example.org');
    type('password', 'right-password');
    await submit();
    backend.expectOne('/api/auth/sign-in').flush({
      token: 'jwt-1',
      tokenType: 'Bearer',
      expiresAt: '2030-01-01T00:00:00.000Z',
      user: { id: '00000000-0000-4000-8000-0000000000a1', name: 'Ada Analyst', email: 'analyst@example.org', isSiteAdmin: false },
    });
    (await vi.waitFor(() => backend.expectOne('/api/me'))).flush({
      user: { id: '00000000-0000-4000-8000-0000000000a1', name: 'Ada Analyst', email: 'analyst@example.org', isSiteAdmin: false },
      memberships: [],
      tokenExpiresAt: '2030-01-01T00:00:00.000Z',
    });
    await vi.waitFor(() => expect(navigate).toHaveBeenCalledWith('/'));
  });
});
