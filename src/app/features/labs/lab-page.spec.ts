import { provideHttpClient, withInterceptors } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestbedHarnessEnvironment } from '@angular/cdk/testing/testbed';
import { ComponentFixture, TestBed } from '@angular/core/testing';
import { MatSelectHarness } from '@angular/material/select/testing';
import { provideRouter } from '@angular/router';

import { authInterceptor } from '../../core/auth-interceptor';
import { LabRole, SESSION_STORAGE_KEY } from '../../core/session';
import { LabPage } from './lab-page';

const MEMBERS = {
  items: [
    { userId: 'u2', name: 'Olga Owner', email: 'owner@example.org', role: 'owner', joinedAt: '2026-01-01T00:00:00.000Z' },
    { userId: 'u1', name: 'Ada Analyst', email: 'analyst@example.org', role: 'analyst', joinedAt: '2026-01-02T00:00:00.000Z' },
    { userId: 'u3', name: 'Remy Reviewer', email: 'reviewer@example.org', role: 'reviewer', joinedAt: '2026-01-03T00:00:00.000Z' },
  ],
  total: 3,
  limit: 500,
  offset: 0,
};

function signInAs(userId: string, role: LabRole): void {
  localStorage.setItem(
    SESSION_STORAGE_KEY,
    JSON.stringify({
      token: 'jwt-1',
      user: { id: userId, name: 'Me', email: 'me@example.org' },
      memberships: [{ lab: { id: 'lab-1', name: 'Shaker Lab' }, role }],
      currentLabId: 'lab-1',
    }),
  );
}

describe('LabPage', () => {
  let fixture: ComponentFixture<LabPage>;
  let backend: HttpTestingController;
  let host: HTMLElement;

  async function open(): Promise<void> {
    TestBed.configureTestingModule({
      imports: [LabPage],
      providers: [
        provideRouter([]),
        provideHttpClient(withInterceptors([authInterceptor])),
        provideHttpClientTesting(),
      ],
    });
    backend = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(LabPage);
    fixture.componentRef.setInput('labId', 'lab-1');
    host = fixture.nativeElement as HTMLElement;
    fixture.detectChanges();
    const request = backend.expectOne((r) => r.url === '/api/labs/lab-1/members');
    expect(request.request.headers.get('Authorization')).toBe('Bearer jwt-1');
    request.flush(MEMBERS);
    await fixture.whenStable();
  }

  afterEach(() => {
    backend.verify();
    localStorage.clear();
  });

  function memberNames(): string[] {
    return Array.from(host.querySelectorAll('.member-name'), (e) => e.textContent?.replace(/\s+/g, ' ').trim() ?? '');
  }

  it('lists every member by name with their role, for a non-owner without owner controls', async () => {
    signInAs('u1', 'analyst');
    await open();
    expect(host.querySelector('h1')?.textContent).toContain('Shaker Lab');
    expect(memberNames()).toEqual(['Ada Analyst (you)', 'Olga Owner', 'Remy Reviewer']);
    expect(Array.from(host.querySelectorAll('.role-badge'), (e) => e.textContent?.trim())).toEqual([
      'Analyst',
      'Owner',
      'Reviewer',
    ]);
    expect(host.querySelector('form[aria-label="Add a member"]')).toBeNull();
    expect(host.querySelector('mat-select')).toBeNull();
  });

  it('gives an owner the add-member form and a role picker for each member', async () => {
    signInAs('u2', 'owner');
    await open();
    expect(host.querySelector('form[aria-label="Add a member"]')).not.toBeNull();
    const pickers = Array.from(host.querySelectorAll('.role-select mat-select'));
    expect(pickers.map((p) => p.getAttribute('aria-label'))).toEqual([
      'Role of Ada Analyst',
      'Role of Olga Owner',
      'Role of Remy Reviewer',
    ]);
    expect(host.querySelector('.role-badge')).toBeNull();
  });

  it("shows the server's reason beside the email when adding someone already in the lab", async () => {
    signInAs('u2', 'owner');
    await open();
    const email = host.querySelector<HTMLInputElement>('.add-email input');
    if (!email) throw new Error('no email input');
    email.value = 'analyst@example.org';
    email.dispatchEvent(new Event('input'));
    host.querySelector<HTMLButtonElement>('.add-submit')?.click();
    fixture.detectChanges();
    const request = backend.expectOne('/api/labs/lab-1/members');
    expect(request.request.method).toBe('POST');
    expect(request.request.body).toEqual({ email: 'analyst@example.org', role: 'analyst' });
    request.flush(
      { error: { code: 'already_member', message: 'analyst@example.org is already a member of this lab (analyst).', field: 'email' } },
      { status: 409, statusText: 'Conflict' },
    );
    fixture.detectChanges();
    await fixture.whenStable();
    expect(host.querySelector('.add-email mat-error')?.textContent).toContain('is already a member of this lab');
  });

  it('sends a role change chosen in the picker and reloads the list', async () => {
    signInAs('u2', 'owner');
    await open();
    const picker = await TestbedHarnessEnvironment.loader(fixture).getHarness(
      MatSelectHarness.with({ selector: '[aria-label="Role of Remy Reviewer"]' }),
    );
    await picker.open();
    await picker.clickOptions({ text: 'Analyst' });
    const patch = backend.expectOne('/api/labs/lab-1/members/u3');
    expect(patch.request.method).toBe('PATCH');
    expect(patch.request.body).toEqual({ role: 'analyst' });
    patch.flush({ ...MEMBERS.items[2], role: 'analyst' });
    TestBed.tick();
    backend.expectOne((r) => r.url === '/api/labs/lab-1/members' && r.method === 'GET').flush(MEMBERS);
    await fixture.whenStable();
  });
});
