import { TestBed } from '@angular/core/testing';

import { caseDigest } from '../../../../../shared/case/canonical';
import type { CaseParams } from '../../../../../shared/case/case-schema';
import { DEMO_RIGS } from '../../../../../shared/case/templates';
import { floquetAnalysis, uprightMaxMultiplier, type FloquetAnalysis } from '../../../../../shared/engine/floquet';
import { simulateMotion, type MotionResult } from '../../../../../shared/engine/motion';
import type { Computed } from '../case-workspace';
import { formatNumber } from '../../../core/units/format-number';
import { DEFAULT_UNITS } from '../../../core/units/display-units';
import { OutcomeCard, uprightMultiplierFor, type OutcomeView } from './outcome-card';

function motionOf(params: CaseParams): Computed<MotionResult> {
  return { value: simulateMotion(params), params, paramsDigest: caseDigest(params), settings: { kind: 'motion' } };
}

function marginsOf(params: CaseParams): Computed<FloquetAnalysis> {
  const relTolerance = 1e-3;
  const value = floquetAnalysis(params, { relTolerance, starts: 4 });
  return { value, params, paramsDigest: caseDigest(params), settings: { kind: 'margins', relTolerance } };
}

function render(view: OutcomeView): HTMLElement {
  const fixture = TestBed.createComponent(OutcomeCard);
  fixture.componentRef.setInput('view', view);
  fixture.componentRef.setInput('units', DEFAULT_UNITS);
  fixture.detectChanges();
  return fixture.nativeElement as HTMLElement;
}

function viewOf(motion: Computed<MotionResult>, margins: Computed<FloquetAnalysis> | null): OutcomeView {
  const r = motion.value;
  return {
    outcome: r.outcome,
    numbers: r.outcomeNumbers,
    summary: r.summary,
    status: r.status,
    rhsEvaluations: r.rhsEvaluations,
    uprightMultiplier: uprightMultiplierFor(motion, margins),
  };
}

const multiplierRow = (host: HTMLElement) =>
  [...host.querySelectorAll('.row')].find((r) => r.textContent?.includes('Floquet multiplier'))?.querySelector('dd')?.textContent ?? null;

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
    // The reason in the rows' unit (degrees), not the engine's radians.
    expect(host.querySelector('[data-testid=outcome-reason]')?.textContent).toBe(
      `The slow motion stayed within ${formatNumber((run.outcomeNumbers.maxDeviation * 180) / Math.PI)}° of the upright (band ${formatNumber((0.5 * 180) / Math.PI)}°).`,
    );
    expect(host.textContent).not.toContain(' rad');
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

  it('shows the upright multiplier from the Margins result of the same inputs', () => {
    const params = structuredClone(DEMO_RIGS[1].params);
    params.run.duration = 3;
    const motion = motionOf(params);
    expect(motion.value.outcome).toBe('holds-upright');
    const margins = marginsOf(params);
    const host = render(viewOf(motion, margins));
    const upright = margins.value.upright;
    if (!upright) throw new Error('the Margins result of a holding rig has an upright');
    expect(multiplierRow(host)).toBe(`${formatNumber(upright.maxMultiplier, 6)} (from Margins)`);
    // The same quantity as the engine's own upright multiplier, computed independently of the analysis.
    const direct = uprightMaxMultiplier(params);
    expect(Math.abs(upright.maxMultiplier - direct), `${upright.maxMultiplier} vs ${direct}`).toBeLessThanOrEqual(1e-9 * direct);
  });

  it('asks for Margins when its result belongs to other inputs, and says nothing for a ramped drive', () => {
    const params = structuredClone(DEMO_RIGS[1].params);
    params.run.duration = 3;
    const motion = motionOf(params);
    const other = structuredClone(params);
    other.drive.frequency *= 1.1;
    expect(multiplierRow(render(viewOf(motion, marginsOf(other))))).toBe('run Margins for these inputs to see it');
    expect(multiplierRow(render(viewOf(motion, null)))).toBe('run Margins for these inputs to see it');

    const ramped = structuredClone(params);
    ramped.drive.ramp = { fromFrequency: params.drive.frequency / 2, duration: 0.5 };
    expect(uprightMultiplierFor(motionOf(ramped), marginsOf(ramped))).toBeUndefined();
  });

  it('leaves the multiplier out of a falling outcome', () => {
    const params = structuredClone(DEMO_RIGS[1].params);
    params.drive.amplitude = 0.003;
    params.run.duration = 4;
    const motion = motionOf(params);
    expect(motion.value.outcome).toBe('falls');
    expect(multiplierRow(render(viewOf(motion, marginsOf(params))))).toBeNull();
  });
});
