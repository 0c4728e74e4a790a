import type { CaseParams } from '../case/case-schema';
import type { FitResult } from './fit';

/** What "Apply to the rig" changed, in words for the user, and the save note naming the trace. */
export interface AppliedFit {
  params: CaseParams;
  /** e.g. "body: equivalent length from the fit; damping: viscous ratio, quadratic 0, friction 0" */
  changes: string;
  note: string;
}

/**
 * The case with a free-swing fit written in: the body's equivalent length (a point mass's length, a measured
 * swing's frequency; a rod with bob becomes a measured swing of the same mass, since one length cannot reshape its
 * geometry) and the damping the fit's model estimated, with the terms it left out set to zero as the fit assumed.
 * Null for a chain: one swing trace cannot size several links, and replacing them would drop links.
 */
export function applyFit(params: CaseParams, fit: FitResult, traceLabel: string): AppliedFit | null {
  if (params.body.kind === 'chain') return null;
  const L = fit.fitted.equivalentLength;
  const swingFrequency = Math.sqrt(params.gravity / L) / (2 * Math.PI);
  let body: CaseParams['body'];
  let bodyChange: string;
  switch (params.body.kind) {
    case 'point-mass':
      body = { ...params.body, length: L };
      bodyChange = 'length';
      break;
    case 'measured-swing':
      body = { ...params.body, swingFrequency };
      bodyChange = 'small swing frequency';
      break;
    case 'rod-bob':
      body = { kind: 'measured-swing', swingFrequency, mass: params.body.rodMass + params.body.bobMass };
      bodyChange = 'now a measured swing (rod and bob replaced by the fitted swing frequency)';
      break;
  }
  const damping = {
    ...params.damping,
    viscousRatio: fit.fitted.viscousRatio,
    quadratic: fit.fitted.quadratic ?? 0,
    friction: fit.fitted.friction ?? 0,
  };
  const model = fit.model === 'viscous' ? 'viscous' : fit.model === 'viscous+quadratic' ? 'viscous and quadratic' : 'viscous and friction';
  return {
    params: { ...params, body, damping },
    changes: `body ${bodyChange}; damping ratio${fit.model === 'viscous+quadratic' ? ', quadratic coefficient' : ''}${fit.model === 'viscous+friction' ? ', pivot friction' : ''}`,
    note: `Body and damping fitted to bench trace "${traceLabel}" (${model} damping model).`,
  };
}
