import { expect } from 'vitest';

/**
 * Asserts |value - reference| <= tolerance, failing with the value, the reference, the difference and the
 * tolerance, plus the source named by `what`.
 */
export function expectNear(value: number, reference: number, tolerance: number, what: string): void {
  const difference = Math.abs(value - reference);
  expect(
    difference <= tolerance,
    `${what}: value ${value}, reference ${reference}, difference ${difference.toExponential(3)}, tolerance ${tolerance.toExponential(3)}`,
  ).toBe(true);
}

/** Relative form of expectNear: tolerance is relative to |reference|. */
export function expectRelative(value: number, reference: number, relTolerance: number, what: string): void {
  expectNear(value, reference, relTolerance * Math.abs(reference), what);
}
