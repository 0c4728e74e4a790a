import { provideHttpClient } from '@angular/common/http';
import { HttpTestingController, provideHttpClientTesting } from '@angular/common/http/testing';
import { signal } from '@angular/core';
import { ComponentFixture, TestBed } from '@angular/core/testing';
import { provideRouter } from '@angular/router';

import type { LabRole } from '../../../../shared/api/common';
import type { RunView } from '../../../../shared/api/cases';
import { templateCase, type CaseParams } from '../../../../shared/case';
import { CaseWorkspace } from '../case/case-workspace';
import { DEFAULT_UNITS } from '../../core/units/display-units';
import { FIXTURE_IDS, caseDetailReply, revisionReply, runReply } from '../library/reply-fixtures';
import { HistoryTab } from './history-tab';

const R1 = templateCase();
const R2 = { ...R1, drive: { ...R1.drive, amplitude: 0.012 }, damping: { ...R1.damping, viscousRatio: 0.02 } };

/** One run per kind, with a stable id per kind. */
const RUN_IDS: Record<string, string> = { motion: '00000000-0000-4000-8000-0000000000e1', margins: '00000000-0000-4000-8000-0000000000e2', sweep: '00000000-0000-4000-8000-0000000000e3' };

function run(kind: string, summary: RunView['summary']): RunView {
  return runReply({ id: RUN_IDS[kind] ?? '00000000-0000-4000-8000-0000000000e9', kind, settings: { kind }, summary, resultDigest: 'a'.repeat(64), author: null });
}

/** Stored runs per revision number (none unless a test sets them). */
let runsOf: Record<number, RunView[]> = {};

function revision(number: number, params: CaseParams): object {
  return revisionReply(number, params, { note: `note ${number}`, runs: runsOf[number] ?? [] });
}

describe('HistoryTab', () => {
  let fixture: ComponentFixture<HistoryTab>;
  let backend: HttpTestingController;
  let host: HTMLElement;

  async function open(role: LabRole): Promise<void> {
    TestBed.configureTestingModule({
      imports: [HistoryTab],
      providers: [
        provideRouter([]),
        provideHttpClient(),
        provideHttpClientTesting(),
        // Only the opened revision matters to this tab; the workspace's engine and forms stay out of the test.
        { provide: CaseWorkspace, useValue: { opened: signal({ caseId: 'c1', revision: 2 }), title: signal('Teaching rod'), units: signal(DEFAULT_UNITS) } },
      ],
    });
    backend = TestBed.inject(HttpTestingController);
    fixture = TestBed.createComponent(HistoryTab);
    host = fixture.nativeElement as HTMLElement;
    fixture.detectChanges();
    const author = { id: FIXTURE_IDS.analyst, name: 'Ada Analyst' };
    backend.expectOne('/api/cases/c1').flush(
      caseDetailReply({
        latestRevision: 2,
        myRole: role,
        revisions: [
          { number: 1, paramsDigest: '1'.repeat(64), note: 'first', author, createdAt: '2026-11-29T10:00:00.000Z', recheckState: 'confirmed' },
          { number: 2, paramsDigest: '2'.repeat(64), note: 'stronger drive', author, createdAt: '2026-11-30T10:00:00.000Z', recheckState: 'draft' },
        ],
      }),
    );
    backend.expectOne('/api/cases/c1/revisions/1').flush(revision(1, R1));
    for (const request of backend.match('/api/cases/c1/revisions/2')) request.flush(revision(2, R2));
    backend.expectOne((r) => r.url === '/api/cases/c1/revisions/2/comments').flush({ items: [], total: 0, page: 1, pageSize: 500 });
    fixture.detectChanges();
    await fixture.whenStable();
  }

  afterEach(() => {
    backend.verify();
    runsOf = {};
  });

  function diffRows(): string[][] {
    return Array.from(host.querySelectorAll('.diff-table tbody tr'), (tr) =>
      Array.from(tr.children, (cell) => (cell.textContent ?? '').replace('(changed)', '').trim()),
    );
  }

  it('compares the open revision with the one before it, changed rows only, in display units', async () => {
    await open('analyst');
    expect(host.querySelector('.diff-summary')?.textContent).toContain('2 parameters differ between r1 and r2');
    expect(diffRows()).toEqual([
      ['Drive amplitude', '10', '12', 'mm'],
      ['Viscous damping ratio ζ', '0.01', '0.02', ''],
    ]);
    expect(host.querySelectorAll('.diff-table tr.changed').length).toBe(2);
  });

  it('shows every parameter, changed ones highlighted, when "Only changed" is off', async () => {
    await open('analyst');
    host.querySelector<HTMLButtonElement>('mat-slide-toggle button')?.click();
    fixture.detectChanges();
    const rows = diffRows();
    expect(rows.length).toBeGreaterThan(15);
    expect(rows).toContainEqual(['Drive frequency', '40', '40', 'Hz']);
    expect(host.querySelectorAll('.diff-table tr.changed').length).toBe(2);
  });

  it('offers the analyst a recheck request and links, and the reviewer the recheck itself', async () => {
    await open('analyst');
    // r2 has no stored runs yet, so there is nothing for a reviewer to rerun.
    expect(host.querySelector<HTMLButtonElement>('.ask-recheck')?.disabled).toBe(true);
    expect(host.querySelector('.open-recheck')).toBeNull();
    TestBed.resetTestingModule();
    await open('reviewer');
    expect(host.querySelector('.ask-recheck')).toBeNull();
    expect(host.querySelector('.open-recheck')?.getAttribute('href')).toBe('/cases/c1/r/2/recheck');
  });

  it('compares the stored results of both revisions with arrows and percentages', async () => {
    runsOf = {
      1: [run('motion', { outcome: 'falls', slowFrequencyHz: null, maxDeviation: 2 }), run('margins', { uprightHolds: false, marginPercent: -4, amplitudeLower: 0.0104, amplitudeUpper: 0.09, frequencyLower: 41.6, frequencyUpper: null })],
      2: [run('motion', { outcome: 'holds-upright', slowFrequencyHz: 0.9, maxDeviation: 0.04 }), run('margins', { uprightHolds: true, marginPercent: 15.2, amplitudeLower: 0.0104, amplitudeUpper: 0.09, frequencyLower: 34.7, frequencyUpper: null })],
    };
    await open('viewer');
    expect(host.querySelector('.results-summary')?.textContent).toContain('6 results differ between the stored runs of r1 and r2');
    const rows = Array.from(host.querySelectorAll('.results-diff tbody tr'), (tr) =>
      Array.from(tr.querySelectorAll('th, td'), (cell) => (cell.textContent ?? '').replace('(changed)', '').replace(/\s+/g, ' ').trim()),
    );
    expect(rows).toContainEqual(['Motion Outcome', 'falls', 'holds upright', '≠ changed']);
    expect(rows).toContainEqual(['Floquet margins Margin of the upright', '−4 %', '+15.2 %', '↑ +19.2 points']);
    expect(rows).toContainEqual(['Floquet margins Lower frequency limit', '41.6 Hz', '34.7 Hz', '↓ −16.6 %']);
    expect(rows).toContainEqual(['Floquet margins Lower amplitude limit', '10.4 mm', '10.4 mm', '=']);
    expect(host.querySelectorAll('.results-diff tr.changed').length).toBe(6);
  });

  it('downloads the case report of the open revision', async () => {
    await open('viewer');
    const createObjectURL = vi.fn(() => 'blob:report');
    Object.assign(URL, { createObjectURL, revokeObjectURL: vi.fn() });
    const clicked: string[] = [];
    const click = vi.spyOn(HTMLAnchorElement.prototype, 'click').mockImplementation(function (this: HTMLAnchorElement) {
      clicked.push(this.download);
    });
    const button = Array.from(host.querySelectorAll<HTMLButtonElement>('button')).find((b) => b.textContent?.includes('Case report (PDF)'));
    button?.click();
    fixture.detectChanges();
    backend
      .expectOne('/api/cases/c1/revisions/2/report.pdf')
      .flush(new Blob(['%PDF-1.7'], { type: 'application/pdf' }), { headers: { 'Content-Disposition': 'attachment; filename=teaching-rod-r2-report.pdf' } });
    expect(clicked).toEqual(['teaching-rod-r2-report.pdf']);
    expect(createObjectURL).toHaveBeenCalledTimes(1);
    click.mockRestore();
  });
});
