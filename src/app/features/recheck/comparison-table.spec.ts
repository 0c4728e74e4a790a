import { ComponentFixture, TestBed } from '@angular/core/testing';

import { type ComparisonRow, groupComparison } from './comparison-groups';
import { ComparisonTable } from './comparison-table';

const REL = 1e-6;

/** A 49-point amplitude sweep as the server compares it: every summary entry, point 10's multiplier off. */
function sweepComparison(): ComparisonRow[] {
  const rows: ComparisonRow[] = [
    { name: 'field', stored: 'drive.amplitude', rerun: 'drive.amplitude', tolerance: null, match: true },
    { name: 'points', stored: 49, rerun: 49, tolerance: 49 * REL, match: true },
    { name: 'thresholds', stored: 1, rerun: 1, tolerance: REL, match: true },
    { name: 'threshold.0.kind', stored: 'outcome', rerun: 'outcome', tolerance: null, match: true },
    { name: 'threshold.0.value', stored: 0.00678, rerun: 0.00678, tolerance: 0.00678 * REL, match: true },
  ];
  // Text order of the keys, as an object's sorted keys come: point.0, point.1, point.10, ...
  const indices = Array.from({ length: 49 }, (_, i) => i).sort((a, b) => String(a).localeCompare(String(b)));
  for (const i of indices) {
    const outcome = i < 20 ? 'falls' : 'holds-upright';
    const mu = 1.5 - i / 50;
    const rerunMu = i === 9 ? mu * 1.01 : mu;
    rows.push({ name: `point.${i}.maxMultiplier`, stored: mu, rerun: rerunMu, tolerance: mu * REL, match: i !== 9 });
    rows.push({ name: `point.${i}.outcome`, stored: outcome, rerun: outcome, tolerance: null, match: true });
  }
  return rows;
}

describe('groupComparison', () => {
  it('puts a sweep\'s points in numeric order and labels the rest in the tabs\' units', () => {
    const g = groupComparison(sweepComparison());
    expect(g.points.map((p) => p.point)).toEqual(Array.from({ length: 49 }, (_, i) => i + 1));
    expect(g.points[9]).toMatchObject({ point: 10, match: false, outcomeStored: 'falls' });
    expect(g.points[30]?.outcomeStored).toBe('holds upright');
    expect(g.pointsDiffering).toBe(1);
    const threshold = g.rows.find((r) => r.key === 'threshold.0.value');
    expect(threshold).toMatchObject({ label: 'Threshold 1 value', stored: '6.78 mm' });
    expect(g.rows.find((r) => r.key === 'field')?.stored).toBe('Drive amplitude');
    expect(g.tolerance).toContain('1e-6');
  });

  it('lists the numbers that differ before those that agree', () => {
    const g = groupComparison([
      { name: 'amplitudeLower', stored: 0.00678, rerun: 0.00678, tolerance: 0.00678 * REL, match: true },
      { name: 'frequencyUpper', stored: 40, rerun: 41, tolerance: 40 * REL, match: false },
      { name: 'uprightHolds', stored: true, rerun: true, tolerance: null, match: true },
    ]);
    expect(g.rows.map((r) => r.label)).toEqual(['Upper frequency limit', 'Lower amplitude limit', 'Upright holds']);
    expect(g.rows[0]).toMatchObject({ stored: '40 Hz', rerun: '41 Hz', difference: '1 Hz', match: false });
    expect(g.rows[1]?.stored).toBe('6.78 mm');
    expect(g.rows[2]?.stored).toBe('yes');
  });
});

describe('ComparisonTable', () => {
  let fixture: ComponentFixture<ComparisonTable>;

  function render(rows: ComparisonRow[], digestMatch: boolean): HTMLElement {
    TestBed.configureTestingModule({ imports: [ComparisonTable] });
    fixture = TestBed.createComponent(ComparisonTable);
    fixture.componentRef.setInput('rows', rows);
    fixture.componentRef.setInput('kind', 'sweep');
    fixture.componentRef.setInput('digestMatch', digestMatch);
    fixture.detectChanges();
    return fixture.nativeElement as HTMLElement;
  }

  it('shows a 49-point sweep as a summary line, labelled rows and one compact point table, opened on a difference', () => {
    const host = render(sweepComparison(), false);
    const text = host.textContent ?? '';
    expect(host.querySelector('[data-testid="run-summary"]')?.textContent).toMatch(/Sweep\s+·\s+digest differs\s+·\s+1 of 103 numbers differ/);
    expect(host.querySelectorAll('.tolerance').length).toBe(1);
    expect(text).not.toMatch(/point\.\d|maxMultiplier|threshold\.0|drive\.amplitude/);
    const pointRows = [...host.querySelectorAll('details.points tbody tr')];
    expect(pointRows.length).toBe(49);
    expect(pointRows.slice(0, 11).map((r) => r.querySelector('th')?.textContent?.trim())).toEqual(['1', '2', '3', '4', '5', '6', '7', '8', '9', '10', '11']);
    expect(pointRows[9]?.classList.contains('mismatch')).toBe(true);
    expect(host.querySelector('details.points')?.hasAttribute('open')).toBe(true);
    // The single rows: swept field, point and threshold counts, the threshold.
    expect(host.querySelectorAll('table:not(.compact) tbody tr').length).toBe(5);
  });

  it('collapses the point table when every point agrees', () => {
    const rows = sweepComparison().map((r) => (r.name === 'point.9.maxMultiplier' ? { ...r, rerun: r.stored, match: true } : r));
    const host = render(rows, true);
    expect(host.querySelector('details.points')?.hasAttribute('open')).toBe(false);
    expect(host.querySelector('details.points summary')?.textContent).toContain('all agree');
    expect(host.querySelector('[data-testid="run-summary"]')?.textContent).toMatch(/same digest\s+·\s+every number agrees/);
  });
});
