import { provideHttpClient, withInterceptors } from '@angular/common/http';
import { HttpTestingController, TestRequest, provideHttpClientTesting } from '@angular/common/http/testing';
import { ComponentFixture, TestBed } from '@angular/core/testing';
import { Router, provideRouter } from '@angular/router';

import { authInterceptor } from '../../core/auth-interceptor';
import { LabRole, SESSION_STORAGE_KEY } from '../../core/session';
import { LibraryPage, SEARCH_DEBOUNCE_MS } from './library-page';

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

function casePage(total: number, titles: string[], page = 1, pageSize = 20): object {
  return {
    items: titles.map((title, i) => ({
      id: `00000000-0000-4000-8000-00000000000${i}`,
      title,
      tags: ['shaker'],
      labId: '00000000-0000-4000-8000-00000000000a',
      latestRevision: 2,
      recheckState: i === 0 ? 'awaiting-recheck' : 'confirmed',
      author: { id: '00000000-0000-4000-8000-0000000000a1', name: 'Ada Analyst' },
      createdAt: '2026-11-29T10:00:00.000Z',
      updatedAt: '2026-11-30T10:00:00.000Z',
      archived: false,
    })),
    total,
    page,
    pageSize,
  };
}

const MEMBERS = {
  items: [
    { userId: '00000000-0000-4000-8000-0000000000a2', name: 'Ada Analyst', email: 'a@example.org', role: 'analyst', joinedAt: '2026-01-01T00:00:00.000Z' },
    { userId: '00000000-0000-4000-8000-0000000000a3', name: 'Rui Reviewer', email: 'r@example.org', role: 'reviewer', joinedAt: '2026-01-02T00:00:00.000Z' },
  ],
  total: 2,
  page: 1,
  pageSize: 500,
};

describe('LibraryPage', { timeout: 20_000 }, () => {
  let fixture: ComponentFixture<LibraryPage>;
  let backend: HttpTestingController;
  let host: HTMLElement;

  function casesRequest(): TestRequest {
    return backend.expectOne((r) => r.url === '/api/labs/lab-1/cases');
  }

  async function settle(): Promise<void> {
    fixture.detectChanges();
    await fixture.whenStable();
  }

  async function open(role: LabRole, url = '/'): Promise<TestRequest> {
    signInAs(role);
    TestBed.configureTestingModule({
      imports: [LibraryPage],
      providers: [provideRouter([]), provideHttpClient(withInterceptors([authInterceptor])), provideHttpClientTesting()],
    });
    backend = TestBed.inject(HttpTestingController);
    await TestBed.inject(Router).navigateByUrl(url);
    fixture = TestBed.createComponent(LibraryPage);
    host = fixture.nativeElement as HTMLElement;
    fixture.detectChanges();
    backend.expectOne((r) => r.url === '/api/labs/lab-1/members').flush(MEMBERS);
    return casesRequest();
  }

  afterEach(() => {
    backend.verify();
    localStorage.clear();
  });

  it('asks the server for the first page, newest first, and shows the rows', async () => {
    const first = await open('analyst');
    expect(first.request.params.get('sort')).toBe('-updated');
    expect(first.request.params.get('page')).toBe('1');
    expect(first.request.params.get('pageSize')).toBe('20');
    expect(first.request.params.get('archived')).toBe('false');
    expect(first.request.params.has('search')).toBe(false);
    first.flush(casePage(2, ['Tall rod', 'Bench crank']));
    await settle();
    const titles = Array.from(host.querySelectorAll('.case-title'), (e) => e.textContent?.trim());
    expect(titles).toEqual(['Tall rod', 'Bench crank']);
    expect(host.querySelector('.case-title')?.getAttribute('href')).toBe('/cases/00000000-0000-4000-8000-000000000000/r/2');
    expect(host.textContent).toContain('Awaiting recheck');
    expect(host.querySelector('.create-button')).not.toBeNull();
  });

  /** Native clicks: a harness would wait for stability, which a pending request never reaches. */
  function click(element: Element | null | undefined): void {
    if (!(element instanceof HTMLElement)) throw new Error('nothing to click');
    element.click();
    fixture.detectChanges();
  }

  function chooseOption(selectIndex: number, text: string): void {
    click(host.querySelectorAll('mat-select .mat-mdc-select-trigger')[selectIndex]);
    const option = Array.from(document.querySelectorAll('mat-option')).find((o) => o.textContent?.trim() === text);
    click(option);
  }

  it('sends sorting and paging to the server instead of sorting rows itself', async () => {
    (await open('analyst')).flush(casePage(45, ['A', 'B']));
    await settle();
    const titleHeader = () => host.querySelector('th.mat-column-title .mat-sort-header-container');

    click(titleHeader());
    const sorted = casesRequest();
    expect(sorted.request.params.get('sort')).toBe('title');
    expect(sorted.request.params.get('page')).toBe('1');
    sorted.flush(casePage(45, ['A', 'B']));
    await settle();

    click(titleHeader());
    const descending = casesRequest();
    expect(descending.request.params.get('sort')).toBe('-title');
    descending.flush(casePage(45, ['B', 'A']));
    await settle();

    click(host.querySelector('.mat-mdc-paginator-navigation-next'));
    const second = casesRequest();
    expect(second.request.params.get('page')).toBe('2');
    expect(second.request.params.get('sort')).toBe('-title');
    second.flush(casePage(45, ['C'], 2));
    await settle();
    expect(host.querySelector('.mat-mdc-paginator-range-label')?.textContent).toMatch(/21 .* 40 of 45/);
  });

  it('filters by recheck state and author on the server, back on page one', async () => {
    (await open('viewer')).flush(casePage(1, ['A']));
    await settle();

    chooseOption(1, 'Disputed');
    const byState = casesRequest();
    expect(byState.request.params.get('recheck')).toBe('disputed');
    byState.flush(casePage(0, []));
    await settle();
    expect(host.textContent).toContain('No case matches these filters.');

    chooseOption(0, 'Rui Reviewer');
    const byAuthor = casesRequest();
    expect(byAuthor.request.params.get('author')).toBe('00000000-0000-4000-8000-0000000000a3');
    expect(byAuthor.request.params.get('recheck')).toBe('disputed');
    byAuthor.flush(casePage(0, []));
    await settle();
    expect(host.querySelector('.create-button')).toBeNull();
  });

  it('starts from the filters in the address and keeps the address in step', async () => {
    const first = await open('analyst', '/?q=rod&recheck=disputed&sort=title&page=2&size=50&bogus=1');
    expect(first.request.params.get('search')).toBe('rod');
    expect(first.request.params.get('recheck')).toBe('disputed');
    expect(first.request.params.get('sort')).toBe('title');
    expect(first.request.params.get('page')).toBe('2');
    expect(first.request.params.get('pageSize')).toBe('50');
    first.flush(casePage(60, ['Rod A'], 2, 50));
    await settle();
    expect(host.querySelector<HTMLInputElement>('input[type="search"]')?.value).toBe('rod');

    click(host.querySelector('.mat-mdc-paginator-navigation-previous'));
    casesRequest().flush(casePage(60, ['Rod B'], 1, 50));
    await settle();
    const url = TestBed.inject(Router).url;
    expect(url).toContain('q=rod');
    expect(url).toContain('sort=title');
    expect(url).not.toContain('page=');
  });

  it('waits for the typing to pause before searching', async () => {
    (await open('analyst')).flush(casePage(1, ['A']));
    await settle();
    const input = host.querySelector<HTMLInputElement>('input[type="search"]');
    if (!input) throw new Error('no search box');
    for (const text of ['t', 'ta', 'tal']) {
      input.value = text;
      input.dispatchEvent(new Event('input'));
      TestBed.tick();
    }
    backend.expectNone((r) => r.url === '/api/labs/lab-1/cases');
    await new Promise((resolve) => setTimeout(resolve, SEARCH_DEBOUNCE_MS + 100));
    TestBed.tick();
    const searched = casesRequest();
    expect(searched.request.params.get('search')).toBe('tal');
    expect(searched.request.params.get('page')).toBe('1');
    searched.flush(casePage(1, ['Tall rod']));
  });
});
