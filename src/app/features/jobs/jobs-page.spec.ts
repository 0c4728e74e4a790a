import { provideHttpClient, withInterceptors } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { ComponentFixture, TestBed } from '@angular/core/testing';
import { provideRouter } from '@angular/router';

import { authInterceptor } from '../../core/auth-interceptor';
import { LabRole, SESSION_STORAGE_KEY } from '../../core/session';
import { CASE_ID, jobView, LAB_ID } from './job-fixtures';
import { JobsPage } from './jobs-page';

const RUNNING = jobView();
const DONE = jobView({
  id: '00000000-0000-4000-8000-0000000000b2', kind: 'chart', state: 'succeeded', progress: 1, chunksDone: 12, chunksTotal: 12,
  runId: '00000000-0000-4000-8000-0000000000d1', finishedAt: '2026-03-02T21:17:07.000Z',
});
const FAILED = jobView({
  id: '00000000-0000-4000-8000-0000000000b3', kind: 'basin', state: 'failed', progress: 0.5, chunksDone: 3, chunksTotal: 6,
  error: 'A chunk failed three times: the motion solver gave up at a start angle of 170°.', finishedAt: '2026-03-02T21:20:00.000Z',
});

function signInAs(role: LabRole): void {
  localStorage.setItem(
    SESSION_STORAGE_KEY,
    JSON.stringify({
      token: 'jwt-1',
      user: { id: '00000000-0000-4000-8000-0000000000a9', name: 'Me', email: 'me@example.org' },
      memberships: [{ lab: { id: LAB_ID, name: 'Shaker Lab' }, role }],
      currentLabId: LAB_ID,
    }),
  );
}

describe('JobsPage', () => {
  let fixture: ComponentFixture<JobsPage>;
  let backend: HttpTestingController;
  let host: HTMLElement;

  async function open(): Promise<void> {
    TestBed.configureTestingModule({
      imports: [JobsPage],
      providers: [provideRouter([]), provideHttpClient(withInterceptors([authInterceptor])), provideHttpClientTesting()],
    });
    backend = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(JobsPage);
    fixture.componentRef.setInput('labId', LAB_ID);
    host = fixture.nativeElement as HTMLElement;
    fixture.detectChanges();
    await new Promise((r) => setTimeout(r, 0));
    const list = backend.expectOne((r) => r.url === `/api/labs/${LAB_ID}/jobs`);
    expect(list.request.params.get('state')).toBe('all');
    expect(list.request.headers.get('Authorization')).toBe('Bearer jwt-1');
    list.flush({ items: [RUNNING, DONE, FAILED] });
    await fixture.whenStable();
  }

  afterEach(() => {
    fixture.destroy();
    localStorage.clear();
  });

  it('lists running jobs with their chunks and finished ones with their state, reason and stored run', async () => {
    signInAs('analyst');
    await open();
    const active = host.querySelector('[data-testid="active-jobs"]')!;
    expect(active.textContent).toContain('Tall rod on the shaker');
    expect(active.textContent).toContain('Sweep');
    expect(active.textContent).toContain('5 of 20 chunks (25 %)');
    expect(active.textContent).toContain('Running');
    const finished = Array.from(host.querySelectorAll('[data-testid="finished-jobs"] [data-testid="job-row"]'));
    expect(finished.map((row) => row.getAttribute('data-state'))).toEqual(['succeeded', 'failed']);
    expect(finished[0].textContent).toContain('Stability chart');
    expect(finished[0].textContent).toContain('Done');
    expect(finished[0].textContent).toContain('ran 2 min 5 s');
    expect(finished[0].querySelector('a[data-testid="job-run-link"]')?.getAttribute('href')).toBe(`/cases/${CASE_ID}/r/2/map`);
    expect(finished[1].textContent).toContain('Failed');
    expect(finished[1].textContent).toContain('the motion solver gave up at a start angle of 170°');
    expect(finished[1].querySelector('[data-testid="job-run-link"]')).toBeNull();
  });

  it('cancels a running job for an analyst', async () => {
    signInAs('analyst');
    await open();
    (host.querySelector('[data-testid="job-cancel"]') as HTMLButtonElement).click();
    const cancel = backend.expectOne(`/api/cases/${CASE_ID}/jobs/${RUNNING.id}/cancel`);
    expect(cancel.request.method).toBe('POST');
    cancel.flush(jobView({ state: 'cancelled', cancelledBy: { id: '00000000-0000-4000-8000-0000000000a9', name: 'Me' }, finishedAt: '2026-03-02T21:16:00.000Z' }));
    await fixture.whenStable();
    expect(host.querySelector('[data-testid="no-active-jobs"]')).not.toBeNull();
    const rows = Array.from(host.querySelectorAll('[data-testid="finished-jobs"] [data-testid="job-row"]'));
    expect(rows.map((r) => r.getAttribute('data-state'))).toContain('cancelled');
    expect(rows.find((r) => r.getAttribute('data-state') === 'cancelled')?.textContent).toContain('by Me, after 5 of 20 chunks');
  });

  it('offers no Cancel to a viewer', async () => {
    signInAs('viewer');
    await open();
    expect(host.querySelector('[data-testid="job-cancel"]')).toBeNull();
    expect(host.querySelector('[data-testid="active-jobs"]')?.textContent).toContain('5 of 20 chunks');
  });
});
