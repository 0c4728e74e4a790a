import { describe, expect, it } from 'vitest';
import { bodyProperties } from '../../shared/engine/body';
import { averagedLowerFrequency } from '../../shared/engine/averaged';
import { simulateMotion } from '../../shared/engine/motion';
import { templateCase } from '../../shared/case/templates';
import type { CaseParams } from '../../shared/case/case-schema';
import { expectNear } from './check';

// Source: facts of the trade (docs/physics.md, common practice, no published source): a body whose free small swing
// is 1.2 Hz has an equivalent length of about 17 cm; on a 2 cm (amplitude) vertical drive it needs roughly 15 Hz to
// stay upright.

const g = 9.80665;

function measured(frequency: number): CaseParams {
  const c = templateCase();
  return {
    ...c,
    body: { kind: 'measured-swing', swingFrequency: 1.2, mass: 0.1 },
    drive: { ...c.drive, amplitude: 0.02, frequency },
    damping: { ...c.damping, viscousRatio: 0.05 },
    run: { ...c.run, duration: 8, outputPoints: 500 },
  };
}

describe('facts of the trade (common practice)', () => {
  it('a 1.2 Hz free swing means an equivalent length of about 17 cm (trade fact)', () => {
    expectNear(bodyProperties({ kind: 'measured-swing', swingFrequency: 1.2, mass: 1 }, g).equivalentLength, 0.17, 0.005, 'equivalent length of a 1.2 Hz swing (trade fact)');
  });

  it('such a body on a 2 cm vertical drive needs roughly 15 Hz (trade fact)', () => {
    expectNear(averagedLowerFrequency(measured(20), 0.02) as number, 15, 1, 'averaged lower frequency at 2 cm (trade fact)');
    const above = simulateMotion(measured(18));
    const below = simulateMotion(measured(12));
    expect(above.outcome, `18 Hz (trade fact: about 15 Hz needed): ${above.outcomeNumbers.reason}`).toBe('holds-upright');
    expect(below.outcome, `12 Hz (trade fact: about 15 Hz needed): ${below.outcomeNumbers.reason}`).toBe('falls');
  });
});
