import { HttpParams, provideHttpClient, withInterceptors } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestbedHarnessEnvironment } from '@angular/cdk/testing/testbed';
import { ComponentFixture, TestBed } from '@angular/core/testing';
import { MATERIAL_ANIMATIONS } from '@angular/material/core';
import { MatDialog } from '@angular/material/dialog';
import { MatSelectHarness } from '@angular/material/select/testing';
import { provideRouter } from '@angular/router';

import { z } from 'zod';

import { pageQuerySchema } from '../../../../shared/api/common';
import { authInterceptor } from '../../core/auth-interceptor';
import { LabRole, SESSION_STORAGE_KEY } from '../../core/session';
import { LabPage } from './lab-page';

const INVITATIONS = {
  items: [
    {
      id: '00000000-0000-4000-8000-0000000000f2',
      labId: '00000000-0000-4000-8000-00000000001a',
      email: 'newer@example.org',
      role: 'viewer',
      invitedAt: '2026-03-02T09:15:00.000Z',
      expiresAt: '2026-03-09T09:15:00.000Z',
    },
    {
      id: '00000000-0000-4000-8000-0000000000f1',
      labId: '00000000-0000-4000-8000-00000000001a',
      email: 'older@example.org',
      role: 'reviewer',
      invitedAt: '2026-03-01T08:00:00.000Z',
      expiresAt: '2026-03-08T08:00:00.000Z',
    },
  ],
  total: 2,
  page: 1,
  pageSize: 500,
};

const MEMBERS = {
  items: [
    { userId: '00000000-0000-4000-8000-0000000000a2', name: 'Olga Owner', email: 'owner@example.org', role: 'owner', joinedAt: '2026-01-01T00:00:00.000Z' },
    { userId: '00000000-0000-4000-8000-0000000000a1', name: 'Ada Analyst', email: 'analyst@example.org', role: 'analyst', joinedAt: '2026-01-02T00:00:00.000Z' },
    { userId: '00000000-0000-4000-8000-0000000000a3', name: 'Remy Reviewer', email: 'reviewer@example.org', role: 'reviewer', joinedAt: '2026-01-03T00:00:00.000Z' },
  ],
  total: 3,
  page: 1,
  pageSize: 500,
};

function signInAs(userId: string, role: LabRole): void {
  localStorage.setItem(
    SESSION_STORAGE_KEY,
    JSON.stringify({
      token: 'jwt-1',
      user: { id: userId, name: 'Me', email: 'me@example.org' },
      memberships: [{ lab: { id: '00000000-0000-4000-8000-00000000001a', name: 'Shaker Lab' }, role }],
      currentLabId: '00000000-0000-4000-8000-00000000001a',
    }),
  );
}

describe('LabPage', () => {
  let fixture: ComponentFixture<LabPage>;
  let backend: HttpTestingController;
  let host: HTMLElement;

  /** Opens the page as whoever signInAs() chose; an owner's page also asks for the pending invitations. */
  async function open(invitations: object = INVITATIONS, members: object = MEMBERS): Promise<void> {
    TestBed.configureTestingModule({
      imports: [LabPage],
      providers: [
        provideRouter([]),
        provideHttpClient(withInterceptors([authInterceptor])),
        provideHttpClientTesting(),
        // Dialogs close at once instead of after their exit animation.
        { provide: MATERIAL_ANIMATIONS, useValue: { animationsDisabled: true } },
      ],
    });
    backend = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(LabPage);
    fixture.componentRef.setInput('labId', '00000000-0000-4000-8000-00000000001a');
    host = fixture.nativeElement as HTMLElement;
    fixture.detectChanges();
    const request = backend.expectOne((r) => r.url === '/api/labs/00000000-0000-4000-8000-00000000001a/members');
    expect(request.request.headers.get('Authorization')).toBe('Bearer jwt-1');
    expect(queryOf(request.request.params)).toEqual({ page: 1, pageSize: 500 });
    request.flush(members);
    const owner = JSON.parse(localStorage.getItem(SESSION_STORAGE_KEY) ?? '{}').memberships?.[0]?.role === 'owner';
    if (owner) {
      TestBed.tick();
      const listed = backend.expectOne((r) => r.url === '/api/labs/00000000-0000-4000-8000-00000000001a/invitations' && r.method === 'GET');
      expect(queryOf(listed.request.params)).toEqual({ page: 1, pageSize: 500 });
      listed.flush(invitations);
    }
    await fixture.whenStable();
    fixture.detectChanges();
  }

  /** The query as the server reads it (its own schema, unknown keys refused): the page asks for what the server serves. */
  function queryOf(params: HttpParams): unknown {
    return z.strictObject(pageQuerySchema.shape).parse(Object.fromEntries(params.keys().map((key) => [key, params.get(key)])));
  }

  function text(element: Element | null | undefined): string {
    return element?.textContent?.replace(/\s+/g, ' ').trim() ?? '';
  }

  function dialog(): HTMLElement | null {
    return document.querySelector<HTMLElement>('mat-dialog-container');
  }

  async function settle(): Promise<void> {
    TestBed.tick();
    await fixture.whenStable();
    fixture.detectChanges();
  }

  afterEach(() => {
    backend.verify();
    localStorage.clear();
    TestBed.inject(MatDialog).closeAll();
  });

  function memberNames(): string[] {
    return Array.from(host.querySelectorAll('.member-name'), (e) => e.textContent?.replace(/\s+/g, ' ').trim() ?? '');
  }

  it('lists every member by name with their role, for a non-owner without owner controls', async () => {
    signInAs('00000000-0000-4000-8000-0000000000a1', 'analyst');
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
    expect(host.querySelector('.remove-member')).toBeNull();
    // No invitations request was made (backend.verify) and no section is shown.
    expect(host.querySelector('#invitations-heading')).toBeNull();
  });

  it('gives an owner the add-member form and a role picker for each member', async () => {
    signInAs('00000000-0000-4000-8000-0000000000a2', 'owner');
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
    signInAs('00000000-0000-4000-8000-0000000000a2', 'owner');
    await open();
    const email = host.querySelector<HTMLInputElement>('.add-email input');
    if (!email) throw new Error('no email input');
    email.value = 'analyst@example.org';
    email.dispatchEvent(new Event('input'));
    host.querySelector<HTMLButtonElement>('.add-submit')?.click();
    fixture.detectChanges();
    const request = backend.expectOne('/api/labs/00000000-0000-4000-8000-00000000001a/members');
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
    signInAs('00000000-0000-4000-8000-0000000000a2', 'owner');
    await open();
    const picker = await TestbedHarnessEnvironment.loader(fixture).getHarness(
      MatSelectHarness.with({ selector: '[aria-label="Role of Remy Reviewer"]' }),
    );
    await picker.open();
    await picker.clickOptions({ text: 'Analyst' });
    const patch = backend.expectOne('/api/labs/00000000-0000-4000-8000-00000000001a/members/00000000-0000-4000-8000-0000000000a3');
    expect(patch.request.method).toBe('PATCH');
    expect(patch.request.body).toEqual({ role: 'analyst' });
    patch.flush({ ...MEMBERS.items[2], role: 'analyst' });
    TestBed.tick();
    backend.expectOne((r) => r.url === '/api/labs/00000000-0000-4000-8000-00000000001a/members' && r.method === 'GET').flush(MEMBERS);
    await fixture.whenStable();
  });

  it('gives an owner a remove control on every row, with "leave" on their own', async () => {
    signInAs('00000000-0000-4000-8000-0000000000a2', 'owner');
    await open();
    const labels = Array.from(host.querySelectorAll('.remove-member'), (b) => b.getAttribute('aria-label'));
    expect(labels).toEqual(['Remove Ada Analyst', 'Leave this lab', 'Remove Remy Reviewer']);
  });

  it('asks before removing a member, then removes them and reloads the list', async () => {
    signInAs('00000000-0000-4000-8000-0000000000a2', 'owner');
    await open();
    host.querySelector<HTMLButtonElement>('[aria-label="Remove Remy Reviewer"]')?.click();
    await settle();
    expect(text(dialog()?.querySelector('h2'))).toBe('Remove Remy Reviewer?');
    expect(text(dialog())).toContain('reviewer@example.org');
    backend.expectNone('/api/labs/00000000-0000-4000-8000-00000000001a/members/00000000-0000-4000-8000-0000000000a3');

    dialog()?.querySelector<HTMLButtonElement>('.remove-confirm')?.click();
    const removal = backend.expectOne('/api/labs/00000000-0000-4000-8000-00000000001a/members/00000000-0000-4000-8000-0000000000a3');
    expect(removal.request.method).toBe('DELETE');
    removal.flush(null, { status: 204, statusText: 'No Content' });
    // The dialog reports its result once it has closed, a turn later.
    await new Promise((resolve) => setTimeout(resolve));
    TestBed.tick();
    const reload = backend.expectOne((r) => r.url === '/api/labs/00000000-0000-4000-8000-00000000001a/members' && r.method === 'GET');
    reload.flush({ ...MEMBERS, items: MEMBERS.items.slice(0, 2), total: 2 });
    await settle();
    expect(memberNames()).toEqual(['Ada Analyst', 'Olga Owner (you)']);
    expect(text(document.querySelector('.mat-mdc-snack-bar-label'))).toContain('Remy Reviewer was removed from Shaker Lab.');
  });

  it('sends nothing when the owner cancels the removal', async () => {
    signInAs('00000000-0000-4000-8000-0000000000a2', 'owner');
    await open();
    host.querySelector<HTMLButtonElement>('[aria-label="Remove Ada Analyst"]')?.click();
    await settle();
    dialog()?.querySelector<HTMLButtonElement>('[mat-dialog-close]')?.click();
    await settle();
    backend.expectNone('/api/labs/00000000-0000-4000-8000-00000000001a/members/00000000-0000-4000-8000-0000000000a1');
  });

  it("shows the server's last_owner refusal inside the dialog and offers no retry", async () => {
    signInAs('00000000-0000-4000-8000-0000000000a2', 'owner');
    await open();
    host.querySelector<HTMLButtonElement>('[aria-label="Leave this lab"]')?.click();
    await settle();
    expect(text(dialog()?.querySelector('h2'))).toBe('Leave Shaker Lab?');
    dialog()?.querySelector<HTMLButtonElement>('.remove-confirm')?.click();
    backend.expectOne('/api/labs/00000000-0000-4000-8000-00000000001a/members/00000000-0000-4000-8000-0000000000a2').flush(
      { error: { code: 'last_owner', message: 'A lab needs at least one owner: make someone else owner first.' } },
      { status: 409, statusText: 'Conflict' },
    );
    await settle();
    expect(text(dialog()?.querySelector('[role="alert"] span'))).toBe(
      'Olga Owner is the only owner of Shaker Lab. A lab needs at least one owner: make someone else owner first.',
    );
    expect(dialog()?.querySelector('.remove-confirm')).toBeNull();
    expect(text(dialog()?.querySelector('[mat-dialog-close]'))).toBe('Close');
    // The list was not reloaded: nobody left.
    backend.expectNone((r) => r.url === '/api/labs/00000000-0000-4000-8000-00000000001a/members' && r.method === 'GET');
  });

  it('says in words that the member list could not be read when the reply is not a page of the contract', async () => {
    signInAs('00000000-0000-4000-8000-0000000000a1', 'analyst');
    // The list shape before page/pageSize: not guessed at, refused.
    await open(INVITATIONS, { items: MEMBERS.items, total: 3, limit: 500, offset: 0 });
    expect(memberNames()).toEqual([]);
    expect(text(host.querySelector('[role="alert"]'))).toContain("The server's reply was not what this page expects");
    expect(host.textContent).not.toContain('limit');
  });

  it('lists pending invitations with email, role, invited and expiry times', async () => {
    signInAs('00000000-0000-4000-8000-0000000000a2', 'owner');
    await open();
    const rows = Array.from(host.querySelectorAll('.invitations-table tr.mat-mdc-row'), (row) =>
      Array.from(row.querySelectorAll('td'), (cell) => text(cell)),
    );
    expect(rows.map((r) => r.slice(0, 2))).toEqual([
      ['newer@example.org', 'Viewer'],
      ['older@example.org', 'Reviewer'],
    ]);
    const times = Array.from(host.querySelectorAll('.invitations-table time'), (t) => t.getAttribute('datetime'));
    expect(times).toEqual([
      '2026-03-02T09:15:00.000Z',
      '2026-03-09T09:15:00.000Z',
      '2026-03-01T08:00:00.000Z',
      '2026-03-08T08:00:00.000Z',
    ]);
    expect(rows[0]?.[2]).toMatch(/^2 Mar 2026, \d\d:\d\d$/);
    expect(rows[0]?.[3]).toMatch(/^9 Mar 2026, \d\d:\d\d$/);
  });

  it('says so when no invitation is pending', async () => {
    signInAs('00000000-0000-4000-8000-0000000000a2', 'owner');
    await open({ items: [], total: 0, page: 1, pageSize: 500 });
    expect(host.querySelector('.invitations-table')).toBeNull();
    expect(text(host.querySelector('.invitations .empty'))).toBe('No invitations are waiting for an answer.');
  });

  it('revokes an invitation and reloads the pending list', async () => {
    signInAs('00000000-0000-4000-8000-0000000000a2', 'owner');
    await open();
    host.querySelector<HTMLButtonElement>('[aria-label="Revoke the invitation for older@example.org"]')?.click();
    const revoke = backend.expectOne('/api/labs/00000000-0000-4000-8000-00000000001a/invitations/00000000-0000-4000-8000-0000000000f1');
    expect(revoke.request.method).toBe('DELETE');
    revoke.flush(null, { status: 204, statusText: 'No Content' });
    TestBed.tick();
    backend
      .expectOne((r) => r.url === '/api/labs/00000000-0000-4000-8000-00000000001a/invitations' && r.method === 'GET')
      .flush({ ...INVITATIONS, items: INVITATIONS.items.slice(0, 1), total: 1 });
    await settle();
    expect(Array.from(host.querySelectorAll('.invitation-email'), (e) => text(e))).toEqual(['newer@example.org']);
    expect(text(document.querySelector('.mat-mdc-snack-bar-label'))).toContain(
      'The invitation for older@example.org was revoked',
    );
  });

  it('tells the owner an invitation was queued and shows it among the pending ones', async () => {
    signInAs('00000000-0000-4000-8000-0000000000a2', 'owner');
    await open();
    const email = host.querySelector<HTMLInputElement>('.add-email input');
    if (!email) throw new Error('no email input');
    email.value = 'fresh@example.org';
    email.dispatchEvent(new Event('input'));
    host.querySelector<HTMLButtonElement>('.add-submit')?.click();
    backend.expectOne('/api/labs/00000000-0000-4000-8000-00000000001a/members').flush(
      {
        kind: 'invitation',
        queued: true,
        invitation: {
          id: '00000000-0000-4000-8000-0000000000f3',
          labId: '00000000-0000-4000-8000-00000000001a',
          email: 'fresh@example.org',
          role: 'analyst',
          invitedAt: '2026-03-03T10:00:00.000Z',
          expiresAt: '2026-03-10T10:00:00.000Z',
        },
      },
      { status: 201, statusText: 'Created' },
    );
    TestBed.tick();
    const fresh = {
      id: '00000000-0000-4000-8000-0000000000f3',
      labId: '00000000-0000-4000-8000-00000000001a',
      email: 'fresh@example.org',
      role: 'analyst',
      invitedAt: '2026-03-03T10:00:00.000Z',
      expiresAt: '2026-03-10T10:00:00.000Z',
    };
    backend
      .expectOne((r) => r.url === '/api/labs/00000000-0000-4000-8000-00000000001a/invitations' && r.method === 'GET')
      .flush({ ...INVITATIONS, items: [fresh, ...INVITATIONS.items], total: 3 });
    await settle();
    expect(text(document.querySelector('.mat-mdc-snack-bar-label'))).toContain(
      'fresh@example.org has no account yet: an invitation to join as analyst is on its way by e-mail.',
    );
    expect(Array.from(host.querySelectorAll('.invitation-email'), (e) => text(e))[0]).toBe('fresh@example.org');
  });
});
