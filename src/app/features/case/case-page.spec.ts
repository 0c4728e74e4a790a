import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { Router, provideRouter } from '@angular/router';
import { RouterTestingHarness } from '@angular/router/testing';

import { templateCase } from '../../../../shared/case/templates';
import { WorkerPool } from '../../../../shared/compute/worker-pool';
import { ENGINE_POOL } from '../../core/compute/engine-pool';
import { SESSION_STORAGE_KEY, type LabRole } from '../../core/session';
import { CasePage } from './case-page';
import { CASE_REPOSITORY } from './case-repository';
import { CASE_TABS } from './case-tabs';
import { CaseWorkspace } from './case-workspace';
import { caseUrlMatcher } from './case.routes';
import { ApiCaseRepository } from '../library/api-case-repository';
import { FIXTURE_IDS, caseDetailReply, revisionReply } from '../library/reply-fixtures';

function signInAs(role: LabRole): void {
  localStorage.setItem(
    SESSION_STORAGE_KEY,
    JSON.stringify({
      token: 'jwt-1',
      user: { id: 'u1', name: 'Me', email: 'me@example.org' },
      memberships: [{ lab: { id: 'lab-1', name: 'Shaker Lab' }, role }],
      currentLabId: 'lab-1',
    }),
  );
}

/**
 * The case page against the real API repository; the server's side is played by HttpTestingController with replies
 * that satisfy the API contract. The first test loads the tab chunks; on a busy two-core machine that alone can pass
 * the 5 s default.
 */
describe('CasePage', { timeout: 30_000 }, () => {
  let harness: RouterTestingHarness;
  let backend: HttpTestingController;
  const caseId = FIXTURE_IDS.case;

  beforeEach(async () => {
    localStorage.removeItem(SESSION_STORAGE_KEY);
    for (const key of Object.keys(localStorage)) if (key.startsWith('qp.revisionNote.')) localStorage.removeItem(key);
    TestBed.configureTestingModule({
      providers: [
        provideHttpClient(),
        provideHttpClientTesting(),
        provideRouter([
          {
            path: 'cases',
            children: [
              {
                matcher: caseUrlMatcher,
                providers: [{ provide: CASE_REPOSITORY, useExisting: ApiCaseRepository }],
                component: CasePage,
                children: [
                  { path: '', pathMatch: 'full', redirectTo: CASE_TABS[0].path },
                  ...CASE_TABS.map((tab) => ({ path: tab.path, loadComponent: tab.loadComponent })),
                ],
              },
            ],
          },
        ]),
        // Nothing here computes; a pool whose workers fail loudly proves it.
        {
          provide: ENGINE_POOL,
          useFactory: () =>
            new WorkerPool(() => {
              throw new Error('the case page must not start workers here');
            }, 1),
        },
      ],
    });
    backend = TestBed.inject(HttpTestingController);
    harness = await RouterTestingHarness.create();
  });

  afterEach(() => backend.verify());

  const host = () => harness.routeNativeElement as HTMLElement;
  const workspace = () => harness.routeDebugElement?.injector.get(CaseWorkspace) ?? null;
  const button = (text: string) =>
    [...host().querySelectorAll<HTMLButtonElement>('button')].find((b) => b.textContent?.includes(text)) ?? null;

  async function settle(): Promise<void> {
    harness.detectChanges();
    await harness.fixture.whenStable();
    harness.detectChanges();
  }

  /** Answers the one pending request to `url` (it may be sent a tick later) with `body`; returns what was sent. */
  async function answer(method: string, url: string, body: object | null, status = 200): Promise<object | null> {
    let sent: object | null = null;
    await vi.waitFor(
      () => {
        const request = backend.expectOne((r) => r.method === method && r.url === url);
        sent = request.request.body as object | null;
        request.flush(body, { status, statusText: status === 200 ? 'OK' : 'Refused' });
      },
      { timeout: 10_000, interval: 20 },
    );
    // Not whenStable: it would wait for the next request of the same load, which only this spec answers.
    await new Promise((resolve) => setTimeout(resolve, 0));
    harness.detectChanges();
    return sent;
  }

  /** Opens r`revision` of the shared rig (latest `latest`) through the page, as the server answers it. */
  async function openRevision(revision: number, latest: number, params = templateCase(), myRole: LabRole = 'analyst'): Promise<void> {
    const navigated = harness.navigateByUrl(`/cases/${caseId}/r/${revision}/rig`, CasePage);
    await answer('GET', `/api/cases/${caseId}`, caseDetailReply({ title: 'Shared rig', latestRevision: latest, myRole }));
    await answer('GET', `/api/cases/${caseId}/revisions/${revision}`, revisionReply(revision, params, { caseTitle: 'Shared rig' }));
    await navigated;
    await settle();
  }

  /** The server's side of a successful save of r`number` with `note`: answers the POST and returns what it got. */
  async function acceptSave(number: number): Promise<object | null> {
    const sent = await answer('POST', `/api/cases/${caseId}/revisions`, revisionReply(number));
    await answer('GET', `/api/cases/${caseId}`, caseDetailReply({ title: 'Shared rig', latestRevision: number }));
    return sent;
  }
  const noteField = () => document.querySelector<HTMLTextAreaElement>('[data-testid=revision-note]');

  /** Answers the revision note dialog: types `note` (unless null) and saves, or cancels. */
  async function answerNote(note: string | null, action: 'Save' | 'Cancel' = 'Save'): Promise<void> {
    await vi.waitFor(async () => {
      await settle();
      expect(noteField()).not.toBeNull();
    });
    const field = noteField();
    if (field && note !== null) {
      field.value = note;
      field.dispatchEvent(new Event('input'));
    }
    await settle();
    const buttons = [...document.querySelectorAll<HTMLButtonElement>('mat-dialog-actions button')];
    buttons.find((b) => b.textContent?.trim() === action)?.click();
    await vi.waitFor(async () => {
      await settle();
      expect(noteField()).toBeNull();
    });
  }

  it('asks for a note before saving a new revision and stores it with the revision', async () => {
    await openRevision(1, 1);
    workspace()?.form.group.controls.drive.controls.amplitude.setValue(12);
    button('Save')?.click();
    await answerNote('Stroke 24 mm for the new crank');
    const sent = await acceptSave(2);
    expect(sent).toMatchObject({ baseRevision: 1, note: 'Stroke 24 mm for the new crank' });
    await vi.waitFor(async () => {
      await settle();
      expect(TestBed.inject(Router).url).toBe(`/cases/${caseId}/r/2/rig`);
    });
    expect(localStorage.getItem(`qp.revisionNote.${caseId}`)).toBeNull();
  });

  it('keeps the note of a cancelled save for the next Save and saves nothing meanwhile', async () => {
    await openRevision(1, 1);
    workspace()?.form.group.controls.drive.controls.amplitude.setValue(12);
    button('Save')?.click();
    await answerNote('Half-written note', 'Cancel');
    backend.expectNone((r) => r.method === 'POST');

    button('Save')?.click();
    await vi.waitFor(async () => {
      await settle();
      expect(noteField()?.value).toBe('Half-written note');
    });
    await answerNote(null);
    expect(await acceptSave(2)).toMatchObject({ note: 'Half-written note' });
  });

  it('offers the latest revision after a stale save and opens it with one click', async () => {
    await openRevision(1, 1);
    workspace()?.form.group.controls.drive.controls.amplitude.setValue(12);
    button('Save')?.click();
    await answerNote('');
    const sent = await answer('POST', `/api/cases/${caseId}/revisions`, { error: { code: 'stale_revision', message: 'r2 exists' } }, 409);
    expect(sent).toMatchObject({ baseRevision: 1 });
    await settle();

    const alert = host().querySelector('[role=alert]');
    expect(alert?.textContent).toMatch(/someone saved a newer revision of this case since you opened r1/);
    const openLatest = host().querySelector<HTMLButtonElement>('[data-testid=open-latest]');
    expect(openLatest?.textContent).toContain('Open latest revision');

    openLatest?.click();
    const colleague = templateCase();
    colleague.drive.frequency = 55;
    await answer('GET', `/api/cases/${caseId}`, caseDetailReply({ title: 'Shared rig', latestRevision: 2 }));
    await answer('GET', `/api/cases/${caseId}/revisions/2`, revisionReply(2, colleague, { caseTitle: 'Shared rig' }));
    await vi.waitFor(async () => {
      await settle();
      expect(TestBed.inject(Router).url).toBe(`/cases/${caseId}/r/2/rig`);
    });
    expect(host().querySelector('[data-testid=revision]')?.textContent).toBe('r2');
    expect(host().querySelector('[data-testid=open-latest]')).toBeNull();
    expect(host().querySelector('[role=alert]')).toBeNull();
    expect(workspace()?.draft().drive.frequency).toBe(55);
    expect(workspace()?.dirty()).toBe(false);
  });

  it('offers no shortcut for a refusal that is not about a newer revision', async () => {
    await openRevision(1, 1);
    workspace()?.form.group.controls.drive.controls.amplitude.setValue(12);
    button('Save')?.click();
    await answerNote('');
    await answer('POST', `/api/cases/${caseId}/revisions`, { error: { code: 'case_not_found', message: 'No such case.', field: 'caseId' } }, 404);
    await settle();
    expect(host().querySelector('[role=alert]')?.textContent).toContain('No such case.');
    expect(host().querySelector('[data-testid=open-latest]')).toBeNull();
  });

  it('shows a reply that breaks the contract as an error in words, not as a guessed case', async () => {
    const navigated = harness.navigateByUrl(`/cases/${caseId}/r/1/rig`, CasePage);
    const { myRole: _role, ...withoutRole } = caseDetailReply({ title: 'Shared rig' });
    await answer('GET', `/api/cases/${caseId}`, withoutRole);
    await navigated;
    await settle();
    expect(workspace()?.loadError()).toContain("server's reply was not what this page expects");
    expect(workspace()?.opened()).toBeNull();
    expect(host().textContent).not.toContain('myRole');
  });

  it('saves a changed title with Save, without a new revision', async () => {
    await openRevision(1, 1);
    const input = host().querySelector<HTMLTextAreaElement>('.title-field textarea');
    if (!input) throw new Error('the title of a writable case is editable');
    expect(input.value).toBe('Shared rig');
    input.value = 'Shared rig, long stroke';
    input.dispatchEvent(new Event('input'));
    await settle();
    expect(host().textContent).toContain('edited');

    button('Save')?.click();
    const sent = await answer('PATCH', `/api/cases/${caseId}`, caseDetailReply({ title: 'Shared rig, long stroke' }));
    expect(sent).toEqual({ title: 'Shared rig, long stroke' });
    await vi.waitFor(async () => {
      await settle();
      expect(workspace()?.titleEdited()).toBe(false);
    });
    expect(workspace()?.opened()?.tags).toEqual(['teaching']);
    expect(workspace()?.opened()?.latestRevision).toBe(1);
    expect(workspace()?.opened()?.title).toBe('Shared rig, long stroke');
    expect(host().querySelector('[data-testid=revision]')?.textContent).toBe('r1');
    await vi.waitFor(() => expect(document.body.textContent).toContain('Title saved.'));
  });

  it('gives a role that cannot save no Save, no file loading and no editable field, and says so', async () => {
    await openRevision(1, 1, templateCase(), 'viewer');
    expect(host().querySelector('h1')?.textContent).toContain('Shared rig');
    expect(host().querySelector('.title-field')).toBeNull();
    expect(button('Save')).toBeNull();
    expect(button('Load file')).toBeNull();
    expect(host().querySelector('[data-testid=case-upload]')).toBeNull();
    expect(host().querySelector('[data-testid=view-only]')?.textContent).toContain('view only');
    expect(button('Case file')).not.toBeNull();
    // The Rig form shows the values but takes no input, and offers no preset to fill it with.
    const amplitude = host().querySelector<HTMLInputElement>('input[data-field="drive.amplitude"]');
    expect(amplitude?.disabled).toBe(true);
    expect(host().querySelector('[data-testid=preset-select]')).toBeNull();
    expect(button('Fill the form')).toBeNull();
  });

  it('shows a viewer no new-case form, only the way to the library', async () => {
    signInAs('viewer');
    await harness.navigateByUrl('/cases/new', CasePage);
    await settle();
    expect(host().querySelector('[data-testid=cannot-create]')?.textContent).toContain('You are viewer in Shaker Lab');
    expect(host().querySelector('input, textarea, mat-select')).toBeNull();
    expect(button('Save')).toBeNull();
  });

  it('gives an analyst the new-case form', async () => {
    signInAs('analyst');
    await harness.navigateByUrl('/cases/new', CasePage);
    await settle();
    expect(host().querySelector('[data-testid=cannot-create]')).toBeNull();
    expect(host().querySelector('.title-field textarea')).not.toBeNull();
  });
});
