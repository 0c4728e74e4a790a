import { TestBed } from '@angular/core/testing';
import { describe, expect, it } from 'vitest';

import { runReply } from '../library/reply-fixtures';
import type { RunView } from '../library/library-types';
import { StoredRunsTable } from './stored-runs-table';

function render(runs: RunView[]): HTMLElement {
  const fixture = TestBed.createComponent(StoredRunsTable);
  fixture.componentRef.setInput('runs', runs);
  fixture.detectChanges();
  return fixture.nativeElement as HTMLElement;
}

describe('StoredRunsTable', () => {
  it('says in words what the server made of each stored run', () => {
    const verified = runReply();
    const pending = runReply({ verification: { ...verified.verification, state: 'pending', verifiedAt: null } });
    const differing = runReply({
      verification: {
        ...verified.verification,
        state: 'unreproduced',
        differences: [
          { name: 'maxDeviation', stored: 0.1, rerun: 0.2, difference: 0.1, tolerance: 1e-7, match: false },
          { name: 'slowFrequencyHz', stored: 1, rerun: 2, difference: 1, tolerance: 1e-6, match: false },
        ],
      },
    });
    const digestOnly = runReply({ verification: { ...verified.verification, state: 'unreproduced' } });
    const host = render([verified, pending, differing, digestOnly]);
    const checks = Array.from(host.querySelectorAll('td.check'), (td) => td.textContent?.trim());
    expect(checks).toEqual([
      'Verified by the server',
      'Server check running',
      'Unreproduced: 2 numbers differ',
      'Unreproduced: numbers agree, digest differs',
    ]);
    expect(host.querySelectorAll('td.check.bad')).toHaveLength(2);
    expect(host.querySelector('th')?.textContent).toContain('Kind');
  });
});
