import { provideHttpClient } from '@angular/common/http';
import { provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { Router, provideRouter } from '@angular/router';
import { RouterTestingHarness } from '@angular/router/testing';
import { firstValueFrom, map } from 'rxjs';

import { templateCase } from '../../../../shared/case/templates';
import { WorkerPool } from '../../../../shared/compute/worker-pool';
import { ENGINE_POOL } from '../../core/compute/engine-pool';
import { SESSION_STORAGE_KEY, type LabRole } from '../../core/session';
import { CasePage } from './case-page';
import { CASE_REPOSITORY } from './case-repository';
import { CASE_TABS } from './case-tabs';
import { CaseWorkspace } from './case-workspace';
import { caseUrlMatcher } from './case.routes';
import { LOCAL_CASES_KEY, LocalCaseRepository } from './local-case-repository';

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

// The first test loads the tab chunks; on a busy two-core machine that alone can pass the 5 s default.
describe('CasePage', { timeout: 30_000 }, () => {
  let harness: RouterTestingHarness;
  let repository: LocalCaseRepository;
  let caseId: string;

  beforeEach(async () => {
    localStorage.removeItem(LOCAL_CASES_KEY);
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
                providers: [{ provide: CASE_REPOSITORY, useExisting: LocalCaseRepository }],
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
    repository = TestBed.inject(LocalCaseRepository);
    const created = await firstValueFrom(
      repository.create({ labId: null, title: 'Shared rig', tags: ['teaching'], params: templateCase(), note: '' }),
    );
    caseId = created.caseId;
    harness = await RouterTestingHarness.create();
  });

  const host = () => harness.routeNativeElement as HTMLElement;
  const workspace = () => harness.routeDebugElement?.injector.get(CaseWorkspace) ?? null;
  const button = (text: string) =>
    [...host().querySelectorAll<HTMLButtonElement>('button')].find((b) => b.textContent?.includes(text)) ?? null;

  async function settle(): Promise<void> {
    harness.detectChanges();
    await harness.fixture.whenStable();
    harness.detectChanges();
  }

  /** The note the browser-local library stored with a revision. */
  const storedNote = (revision: number): string | undefined => {
    const library = JSON.parse(localStorage.getItem(LOCAL_CASES_KEY) ?? '{}') as Record<string, { revisions: Array<{ number: number; note: string }> }>;
    return library[caseId]?.revisions.find((r) => r.number === revision)?.note;
  };
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
    await harness.navigateByUrl(`/cases/${caseId}/r/1/rig`, CasePage);
    await settle();
    workspace()?.form.group.controls.drive.controls.amplitude.setValue(12);
    button('Save')?.click();
    await answerNote('Stroke 24 mm for the new crank');
    await vi.waitFor(async () => {
      await settle();
      expect(TestBed.inject(Router).url).toBe(`/cases/${caseId}/r/2/rig`);
    });
    expect(storedNote(2)).toBe('Stroke 24 mm for the new crank');
    expect(localStorage.getItem(`qp.revisionNote.${caseId}`)).toBeNull();
  });

  it('keeps the note of a cancelled save for the next Save and saves nothing meanwhile', async () => {
    await harness.navigateByUrl(`/cases/${caseId}/r/1/rig`, CasePage);
    await settle();
    workspace()?.form.group.controls.drive.controls.amplitude.setValue(12);
    button('Save')?.click();
    await answerNote('Half-written note', 'Cancel');
    expect((await firstValueFrom(repository.open(caseId))).latestRevision).toBe(1);

    button('Save')?.click();
    await vi.waitFor(async () => {
      await settle();
      expect(noteField()?.value).toBe('Half-written note');
    });
    await answerNote(null);
    await vi.waitFor(async () => expect((await firstValueFrom(repository.open(caseId))).latestRevision).toBe(2));
    expect(storedNote(2)).toBe('Half-written note');
  });

  it('offers the latest revision after a stale save and opens it with one click', async () => {
    await harness.navigateByUrl(`/cases/${caseId}/r/1/rig`, CasePage);
    await settle();
    const colleague = templateCase();
    colleague.drive.frequency = 55;
    await firstValueFrom(repository.saveRevision(caseId, 1, colleague, 'a colleague'));

    workspace()?.form.group.controls.drive.controls.amplitude.setValue(12);
    button('Save')?.click();
    await answerNote('');
    await settle();

    const alert = host().querySelector('[role=alert]');
    expect(alert?.textContent).toMatch(/you edited r1, but r2 was saved since/);
    const openLatest = host().querySelector<HTMLButtonElement>('[data-testid=open-latest]');
    expect(openLatest?.textContent).toContain('Open latest revision');

    openLatest?.click();
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
    await harness.navigateByUrl(`/cases/${caseId}/r/1/rig`, CasePage);
    await settle();
    localStorage.removeItem(LOCAL_CASES_KEY);
    workspace()?.form.group.controls.drive.controls.amplitude.setValue(12);
    button('Save')?.click();
    await answerNote('');
    await settle();
    expect(host().querySelector('[role=alert]')?.textContent).toContain('That case does not exist in this browser.');
    expect(host().querySelector('[data-testid=open-latest]')).toBeNull();
  });

  it('saves a changed title with Save, without a new revision', async () => {
    await harness.navigateByUrl(`/cases/${caseId}/r/1/rig`, CasePage);
    await settle();
    const input = host().querySelector<HTMLTextAreaElement>('.title-field textarea');
    if (!input) throw new Error('the title of a writable case is editable');
    expect(input.value).toBe('Shared rig');
    input.value = 'Shared rig, long stroke';
    input.dispatchEvent(new Event('input'));
    await settle();
    expect(host().textContent).toContain('edited');

    button('Save')?.click();
    await vi.waitFor(async () => {
      await settle();
      expect(workspace()?.titleEdited()).toBe(false);
    });
    const stored = await firstValueFrom(repository.open(caseId));
    expect(stored.title).toBe('Shared rig, long stroke');
    expect(stored.tags).toEqual(['teaching']);
    expect(stored.latestRevision).toBe(1);
    expect(workspace()?.opened()?.title).toBe('Shared rig, long stroke');
    expect(host().querySelector('[data-testid=revision]')?.textContent).toBe('r1');
    await vi.waitFor(() => expect(document.body.textContent).toContain('Title saved.'));
  });

  it('gives a role that cannot save no Save, no file loading and no editable field, and says so', async () => {
    const open = repository.open.bind(repository);
    vi.spyOn(repository, 'open').mockImplementation((id, rev) => open(id, rev).pipe(map((o) => ({ ...o, readOnly: true }))));
    await harness.navigateByUrl(`/cases/${caseId}/r/1/rig`, CasePage);
    await settle();
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
