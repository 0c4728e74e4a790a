import { provideHttpClient } from '@angular/common/http';
import { provideHttpClientTesting } from '@angular/common/http/testing';
import { TestBed } from '@angular/core/testing';
import { Router, provideRouter } from '@angular/router';
import { RouterTestingHarness } from '@angular/router/testing';
import { firstValueFrom } from 'rxjs';

import { templateCase } from '../../../../shared/case/templates';
import { WorkerPool } from '../../../../shared/compute/worker-pool';
import { ENGINE_POOL } from '../../core/compute/engine-pool';
import { CasePage } from './case-page';
import { CASE_REPOSITORY } from './case-repository';
import { CASE_TABS } from './case-tabs';
import { CaseWorkspace } from './case-workspace';
import { caseUrlMatcher } from './case.routes';
import { LOCAL_CASES_KEY, LocalCaseRepository } from './local-case-repository';

describe('CasePage', () => {
  let harness: RouterTestingHarness;
  let repository: LocalCaseRepository;
  let caseId: string;

  beforeEach(async () => {
    localStorage.removeItem(LOCAL_CASES_KEY);
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

  it('offers the latest revision after a stale save and opens it with one click', async () => {
    await harness.navigateByUrl(`/cases/${caseId}/r/1/rig`, CasePage);
    await settle();
    const colleague = templateCase();
    colleague.drive.frequency = 55;
    await firstValueFrom(repository.saveRevision(caseId, 1, colleague, 'a colleague'));

    workspace()?.form.group.controls.drive.controls.amplitude.setValue(12);
    button('Save')?.click();
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
    await settle();
    expect(host().querySelector('[role=alert]')?.textContent).toContain('That case does not exist in this browser.');
    expect(host().querySelector('[data-testid=open-latest]')).toBeNull();
  });

  it('saves a changed title with Save, without a new revision', async () => {
    await harness.navigateByUrl(`/cases/${caseId}/r/1/rig`, CasePage);
    await settle();
    const input = host().querySelector<HTMLInputElement>('.title-field input');
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
});
