import { describe, expect, it } from 'vitest';
import { templateCase } from '../case/templates';
import type { CaseParams } from '../case/case-schema';
import { handleEngineRequest } from '../compute/handle-request';
import type { EngineResponse } from '../compute/protocol';
import { fitFreeSwing } from './fit';
import { EngineCancelledError } from './motion';
import { syntheticTrace } from './synthetic-trace';

const DEG = Math.PI / 180;

function swing(damping: Partial<CaseParams['damping']>, L = 0.3): CaseParams {
  const c = templateCase();
  return {
    ...c,
    body: { kind: 'point-mass', length: L, mass: 1 },
    drive: { ...c.drive, amplitude: 0 },
    damping: { ...c.damping, viscousRatio: 0, ...damping },
    start: { angle: Math.PI + 25 * DEG, rate: 0 },
  };
}

const options = { sampleRate: 200, duration: 20, noise: 0.05 * DEG, offset: -2 * DEG, fromHanging: true, seed: 11 };

describe('free-swing fit', { timeout: 30_000 }, () => {
  it('recovers a quadratic damping coefficient with the viscous+quadratic model', () => {
    const trace = syntheticTrace(swing({ viscousRatio: 0.002, quadratic: 0.05 }), options);
    const r = fitFreeSwing(trace, { model: 'viscous+quadratic' });
    expect(Math.abs((r.fitted.quadratic ?? 0) / 0.05 - 1)).toBeLessThan(0.1);
    expect(Math.abs(r.fitted.equivalentLength / 0.3 - 1)).toBeLessThan(2e-3);
    expect(r.uncertainty.quadratic).toBeGreaterThan(0);
    expect(r.rmsResidual).toBeLessThan(0.06 * DEG);
  });

  it('recovers pivot friction with the viscous+friction model', () => {
    const trace = syntheticTrace(swing({ viscousRatio: 0.002, friction: 0.05, frictionSmoothing: 0.01 }), options);
    const r = fitFreeSwing(trace, { model: 'viscous+friction', frictionSmoothing: 0.01 });
    expect(Math.abs((r.fitted.friction ?? 0) / 0.05 - 1)).toBeLessThan(0.1);
    expect(r.rmsResidual).toBeLessThan(0.06 * DEG);
  });

  it('reports a residual that fits worse when the model lacks the damping the swing has', () => {
    const trace = syntheticTrace(swing({ viscousRatio: 0.001, friction: 0.08 }), options);
    const viscous = fitFreeSwing(trace, { model: 'viscous' });
    const friction = fitFreeSwing(trace, { model: 'viscous+friction' });
    expect(viscous.rmsResidual).toBeGreaterThan(2 * friction.rmsResidual);
  });

  it('reads the sensor zero and the start state from the trace', () => {
    const r = fitFreeSwing(syntheticTrace(swing({ viscousRatio: 0.01 }), options), { model: 'viscous' });
    expect(Math.abs(r.fitted.offset - options.offset)).toBeLessThan(0.01 * DEG);
    expect(Math.abs(r.fitted.startAngle - (Math.PI + 25 * DEG))).toBeLessThan(0.05 * DEG);
    expect(r.points).toBe(trace20sPoints());
    expect(r.residual.length).toBe(r.points);
  });

  it('answers a worker fit request with progress and then the estimates', () => {
    const trace = syntheticTrace(swing({ viscousRatio: 0.01 }), options);
    const responses: EngineResponse[] = [];
    handleEngineRequest({ type: 'fit', id: 'f1', trace, model: 'viscous' }, (r) => responses.push(r));
    const last = responses[responses.length - 1];
    expect(responses.some((r) => r.type === 'progress')).toBe(true);
    expect(last.type === 'result' && last.result.kind === 'fit' ? last.result.fit.fitted.equivalentLength : 0).toBeCloseTo(0.3, 3);
  });

  it('stops with EngineCancelledError when cancelled', () => {
    const trace = syntheticTrace(swing({ viscousRatio: 0.01 }), options);
    expect(() => fitFreeSwing(trace, { model: 'viscous', shouldCancel: () => true })).toThrow(EngineCancelledError);
  });

  it('refuses a trace with fewer than two whole swings', () => {
    const trace = syntheticTrace(swing({ viscousRatio: 0.01 }), { ...options, duration: 1 });
    expect(() => fitFreeSwing(trace, { model: 'viscous' })).toThrow(/two whole swings/);
  });
});

function trace20sPoints(): number {
  return options.duration * options.sampleRate + 1;
}
