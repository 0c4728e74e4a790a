import { TestBed } from '@angular/core/testing';

import type { SweepPoint } from '../../../../../shared/engine/sweep';
import { DEFAULT_UNITS } from '../../../core/units/display-units';
import { SweepTable, sweepCsv, sweepRows } from './sweep-table';

const POINTS: SweepPoint[] = [
  { index: 0, value: 0.0005, outcome: 'falls', meanAngle: 3.1, maxDeviation: 3.14, slowFrequencyHz: null, maxMultiplier: 1.8 },
  { index: 1, value: 0.002, outcome: 'holds-upright', meanAngle: 0.001, maxDeviation: 0.05, slowFrequencyHz: 3.25, maxMultiplier: 0.97 },
  { index: 2, value: 0.004, outcome: null, meanAngle: null, maxDeviation: null, slowFrequencyHz: null, maxMultiplier: null, error: 'drive.amplitude: too big, "really"' },
];

describe('SweepTable', () => {
  it('exports the points as CSV with units in the header and refused points in words', () => {
    const csv = sweepCsv(sweepRows(POINTS, 'length', DEFAULT_UNITS), 'Drive amplitude', 'mm', DEFAULT_UNITS);
    const lines = csv.trimEnd().split('\r\n');
    expect(lines[0]).toBe('point,Drive amplitude (mm),outcome,slow frequency (Hz),mean angle (°),largest deviation (°),largest |multiplier|');
    expect(lines).toHaveLength(4);
    const first = lines[1].split(',');
    expect(Number(first[1])).toBe(0.5);
    expect(first[2]).toBe('falls');
    expect(first[3]).toBe('');
    expect(Number(first[4])).toBeCloseTo((3.1 * 180) / Math.PI, 8);
    expect(lines[2].split(',')[2]).toBe('holds upright');
    // A refused point reads in words, without the validator's text.
    expect(lines[3].split(',')[2]).toBe('no valid case');
  });

  it('renders one row per point and sorts by a column header', async () => {
    const fixture = TestBed.createComponent(SweepTable);
    fixture.componentRef.setInput('points', POINTS);
    fixture.componentRef.setInput('fieldLabel', 'Drive amplitude');
    fixture.componentRef.setInput('dimension', 'length');
    fixture.componentRef.setInput('units', DEFAULT_UNITS);
    fixture.detectChanges();
    await fixture.whenStable();
    const host = fixture.nativeElement as HTMLElement;
    const rows = () => [...host.querySelectorAll('tr.mat-mdc-row')].map((r) => r.querySelector('td')?.textContent?.trim());
    expect(rows()).toEqual(['0', '1', '2']);
    expect(host.textContent).toContain('Drive amplitude (mm)');
    const header = [...host.querySelectorAll<HTMLElement>('th')].find((th) => th.textContent?.includes('Slow frequency'));
    header?.querySelector<HTMLElement>('.mat-sort-header-container')?.click();
    header?.querySelector<HTMLElement>('.mat-sort-header-container')?.click();
    fixture.detectChanges();
    expect(rows()[0]).toBe('1');
  });

  it('downloads the same CSV it shows', () => {
    const fixture = TestBed.createComponent(SweepTable);
    fixture.componentRef.setInput('points', POINTS);
    fixture.componentRef.setInput('fieldLabel', 'Drive amplitude');
    fixture.componentRef.setInput('dimension', 'length');
    fixture.componentRef.setInput('units', DEFAULT_UNITS);
    fixture.detectChanges();
    expect(fixture.componentInstance.csvText()).toContain('1,2,holds upright,3.25');
  });
});
