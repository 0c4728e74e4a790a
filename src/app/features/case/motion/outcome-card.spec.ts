import { TestBed } from '@angular/core/testing';

import { DEMO_RIGS } from '../../../../../shared/case/templates';
import { simulateMotion } from '../../../../../shared/engine/motion';
import { DEFAULT_UNITS } from '../rig/rig-form';
import { OutcomeCard } from './outcome-card';

describe('OutcomeCard', () => {
  it('shows the verdict of a real run, its reason and the numbers behind it in display units', () => {
    const params = structuredClone(DEMO_RIGS[1].params);
    params.run.duration = 3;
    const run = simulateMotion(params);
    const fixture = TestBed.createComponent(OutcomeCard);
    fixture.componentRef.setInput('view', {
      outcome: run.outcome,
      numbers: run.outcomeNumbers,
      summary: run.summary,
      status: run.status,
      rhsEvaluations: run.rhsEvaluations,
    });
    fixture.componentRef.setInput('units', DEFAULT_UNITS);
    fixture.detectChanges();
    const host = fixture.nativeElement as HTMLElement;
    expect(host.querySelector('[data-testid=outcome]')?.textContent).toBe('holds upright');
    expect(host.textContent).toContain(run.outcomeNumbers.reason);
    const degrees = (run.outcomeNumbers.maxDeviation * 180) / Math.PI;
    const row = [...host.querySelectorAll('.row')].find((r) => r.textContent?.includes('Largest slow deviation'));
    expect(row?.querySelector('dd')?.textContent).toBe(`${Number(degrees.toPrecision(4))}°`);
    expect(host.textContent).toContain(`${Number(run.summary.peakPivotAccelerationG.toPrecision(3))} g`);
  });

  it('shows a falling case in the words of the outcome', () => {
    const params = structuredClone(DEMO_RIGS[1].params);
    params.drive.amplitude = 0.003;
    params.run.duration = 4;
    const run = simulateMotion(params);
    const fixture = TestBed.createComponent(OutcomeCard);
    fixture.componentRef.setInput('view', {
      outcome: run.outcome, numbers: run.outcomeNumbers, summary: run.summary, status: run.status, rhsEvaluations: run.rhsEvaluations,
    });
    fixture.componentRef.setInput('units', { length: 'mm', frequency: 'Hz', angle: 'rad' });
    fixture.detectChanges();
    const host = fixture.nativeElement as HTMLElement;
    expect(host.querySelector('[data-testid=outcome]')?.textContent).toBe('falls');
    expect(host.textContent).toContain(' rad');
  });
});
