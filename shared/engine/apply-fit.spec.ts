import { describe, expect, it } from 'vitest';
import { templateCase } from '../case/templates';
import { parseCase } from '../case/validate';
import type { FitResult } from './fit';
import { bodyProperties } from './body';
import { applyFit } from './apply-fit';

function fit(model: FitResult['model'], extra: Partial<FitResult['fitted']> = {}): FitResult {
  const fitted = { equivalentLength: 0.312, viscousRatio: 0.004, offset: 0.01, startAngle: 3.4, startRate: 0, ...extra };
  return {
    model, fitted, uncertainty: fitted, swingFrequency: 0.89, swingFrequencyUncertainty: 0, rmsResidual: 0.001, points: 10, iterations: 3,
    time: new Float64Array(), fittedAngle: new Float64Array(), residual: new Float64Array(),
  };
}

function applyOrThrow<T>(value: T | null): T {
  if (value === null) throw new Error('fit not applied');
  return value;
}

describe('applyFit', () => {
  it('writes the fitted length of a point mass and the damping, and names the trace in the note', () => {
    const base = { ...templateCase(), damping: { viscousRatio: 0.05, quadratic: 0.3, friction: 0.2, frictionSmoothing: 0.01 } };
    const applied = applyOrThrow(applyFit(base, fit('viscous+friction', { friction: 0.07 }), 'Bench 3 swing'));
    expect(applied.params.body).toEqual({ kind: 'point-mass', length: 0.312, mass: 0.1 });
    expect(applied.params.damping).toEqual({ viscousRatio: 0.004, quadratic: 0, friction: 0.07, frictionSmoothing: 0.01 });
    expect(applied.note).toContain('"Bench 3 swing"');
    expect(parseCase(applied.params).ok).toBe(true);
  });

  it('turns a rod with bob into a measured swing with the fitted equivalent length', () => {
    const base = { ...templateCase(), body: { kind: 'rod-bob' as const, rodLength: 0.2, rodMass: 0.02, bobMass: 0.05, bobRadius: 0.01, bobDistance: 0.18 } };
    const applied = applyOrThrow(applyFit(base, fit('viscous'), 'swing'));
    expect(applied.params.body.kind).toBe('measured-swing');
    expect(bodyProperties(applied.params.body, applied.params.gravity).equivalentLength).toBeCloseTo(0.312, 10);
    expect(applied.changes).toContain('measured swing');
  });

  it('leaves a chain alone: one swing cannot size several links', () => {
    const link = { kind: 'point-mass' as const, length: 0.1, mass: 0.05, jointDamping: 0 };
    const base = { ...templateCase(), body: { kind: 'chain' as const, links: [link, link] } };
    expect(applyFit(base, fit('viscous'), 'swing')).toBeNull();
  });
});
