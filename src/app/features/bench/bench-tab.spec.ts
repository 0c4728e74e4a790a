import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { signal } from '@angular/core';
import { ComponentFixture, TestBed } from '@angular/core/testing';
import { provideRouter } from '@angular/router';

import { CaseWorkspace } from '../case/case-workspace';
import { BenchTab } from './bench-tab';

const TRACE = {
  id: '00000000-0000-4000-8000-0000000000d1',
  label: 'Bench run 3',
  fileName: 'bench-run-3.csv',
  sizeBytes: 2048,
  rows: 1200,
  columns: ['time', 'angle'],
  angleUnit: 'deg',
  duration: 11.99,
  createdAt: '2026-11-30T10:00:00.000Z',
  author: { id: '00000000-0000-4000-8000-0000000000a1', name: 'Ada Analyst' },
};

describe('BenchTab', () => {
  let fixture: ComponentFixture<BenchTab>;
  let backend: HttpTestingController;
  let host: HTMLElement;

  async function open(readOnly: boolean): Promise<void> {
    TestBed.configureTestingModule({
      imports: [BenchTab],
      providers: [
        provideRouter([]),
        provideHttpClient(),
        provideHttpClientTesting(),
        // Only the opened case matters to this tab; the workspace's engine and forms stay out of the test.
        { provide: CaseWorkspace, useValue: { opened: signal({ caseId: 'c1', revision: 2 }), readOnly: signal(readOnly) } },
      ],
    });
    backend = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(BenchTab);
    host = fixture.nativeElement as HTMLElement;
    fixture.detectChanges();
    backend.expectOne((r) => r.method === 'GET' && r.url === '/api/cases/c1/bench-traces').flush({ items: [TRACE], total: 1, page: 1, pageSize: 20 });
    fixture.detectChanges();
    await fixture.whenStable();
  }

  function pickFile(content: string, name = 'swing.csv'): void {
    const input = host.querySelector<HTMLInputElement>('input[type="file"]');
    if (!input) throw new Error('no file input');
    Object.defineProperty(input, 'files', { value: [new File([content], name, { type: 'text/csv' })], configurable: true });
    input.dispatchEvent(new Event('change'));
    fixture.detectChanges();
  }

  afterEach(() => backend.verify());

  it('lists traces with rows, duration and author', async () => {
    await open(false);
    const cells = Array.from(host.querySelectorAll('tr.mat-mdc-row td'), (td) => td.textContent?.trim());
    expect(cells.slice(0, 4)).toEqual(['Bench run 3', '1200', '11.99 s', 'Ada Analyst']);
  });

  it('uploads the file with its angle unit and shows the line the server refused', async () => {
    await open(false);
    pickFile('time,angle\n0,1\n0.01,x\n');
    host.querySelector<HTMLButtonElement>('.upload-button')?.click();
    fixture.detectChanges();
    const upload = backend.expectOne((r) => r.method === 'POST' && r.url === '/api/cases/c1/bench-traces');
    const form = upload.request.body as FormData;
    expect(form.get('angleUnit')).toBe('deg');
    expect(form.get('label')).toBe('swing');
    expect((form.get('file') as File).name).toBe('swing.csv');
    upload.flush(
      { error: { code: 'bad_csv', message: 'line 3: angle "x" is not a number', field: 'file' } },
      { status: 422, statusText: 'Unprocessable Entity' },
    );
    fixture.detectChanges();
    const alert = host.querySelector('.upload-error');
    expect(alert?.getAttribute('role')).toBe('alert');
    expect(alert?.textContent).toContain('line 3: angle "x" is not a number');
    expect(host.querySelector<HTMLButtonElement>('.upload-button')?.disabled).toBe(false);

    // Picking a corrected file relabels it, since the label was never typed by hand.
    pickFile('time,angle\n0,1\n0.01,2\n', 'swing-fixed.csv');
    expect(host.querySelector<HTMLInputElement>('input[name="label"]')?.value).toBe('swing-fixed');
  });

  it('refuses a file over 2 MiB before sending it', async () => {
    await open(false);
    pickFile('x'.repeat(2 * 1024 * 1024 + 1), 'huge.csv');
    expect(host.querySelector('.upload-error')?.textContent).toContain('at most 2 MiB');
    expect(host.querySelector<HTMLButtonElement>('.upload-button')?.disabled).toBe(true);
  });

  it('offers no upload or delete to a role that cannot write', async () => {
    await open(true);
    expect(host.querySelector('form[aria-label="Upload a bench trace"]')).toBeNull();
    expect(host.querySelector('button[aria-label^="Delete"]')).toBeNull();
  });
});
