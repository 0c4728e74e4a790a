import { TestBed } from '@angular/core/testing';

import { MarginGauge, bandPosition, marginLevel } from './margin-gauge';

describe('MarginGauge', () => {
  function render(margin: number | null, position: number | null): HTMLElement {
    const fixture = TestBed.createComponent(MarginGauge);
    fixture.componentRef.setInput('marginPercent', margin);
    fixture.componentRef.setInput('positionPercent', position);
    fixture.componentRef.setInput('lowerLabel', '6.8 mm');
    fixture.componentRef.setInput('upperLabel', '151 mm');
    fixture.detectChanges();
    return fixture.nativeElement as HTMLElement;
  }

  it('reads a wide margin as comfortable, with its sign', () => {
    const host = render(70.14, 12);
    expect(host.querySelector('[data-testid=margin-value]')?.textContent).toBe('+70.1 %');
    expect(host.querySelector('[data-testid=margin-words]')?.textContent).toBe('comfortable margin');
    expect(host.textContent).toContain('lower limit 6.8 mm');
    expect(host.textContent).toContain('upper limit 151 mm');
  });

  it('reads a small margin as thin and a negative one as outside the band', () => {
    expect(render(8.5, 3).querySelector('[data-testid=margin-words]')?.textContent).toBe('thin margin');
    const outside = render(-12, -5);
    expect(outside.querySelector('[data-testid=margin-value]')?.textContent).toBe('−12 %');
    expect(outside.querySelector('[data-testid=margin-words]')?.textContent).toBe('outside the holding band');
  });

  it('says when no limit was found and draws no marker', () => {
    const host = render(null, null);
    expect(host.querySelector('[data-testid=margin-words]')?.textContent).toBe('no drive limit found');
    expect(host.querySelector('.marker')).toBeNull();
  });

  it('places the marker between the limits, clamped to the track', () => {
    const middle = render(40, 50).querySelector<HTMLElement>('.marker');
    expect(middle?.style.left).toBe('50%');
    const beyond = render(-30, 400).querySelector<HTMLElement>('.marker');
    expect(beyond?.style.left).toBe('100%');
  });

  it('puts the case between the limits, or against the scan end when a limit was not met', () => {
    expect(bandPosition({ value: 60, lower: 50, upper: 150, scanned: [10, 600] })).toBeCloseTo(10, 12);
    // No upper limit up to 600 Hz: the scan's end stands in for it.
    expect(bandPosition({ value: 60, lower: 50, upper: null, scanned: [10, 600] })).toBeCloseTo((100 * 10) / 550, 12);
    expect(bandPosition({ value: 60, lower: null, upper: 150, scanned: [10, 600] })).toBeCloseTo((100 * 50) / 140, 12);
    expect(bandPosition({ value: 60, lower: null, upper: null, scanned: [10, 600] })).toBeNull();
  });

  it('grades levels at the 20 % line', () => {
    expect(marginLevel(19.99)).toBe('thin');
    expect(marginLevel(20)).toBe('comfortable');
    expect(marginLevel(-0.01)).toBe('outside');
  });
});
