import { describe, expect, it } from 'vitest';
import { templateCase } from '../case';
import { SUMMARY_ABS_TOLERANCE, SUMMARY_REL_TOLERANCE, compareRun, comparisonPayload, type StoredRunClaim } from './compare-runs';
import type { RunRecord } from './run-record';

const DIGEST_A = 'a'.repeat(64);
const DIGEST_B = 'b'.repeat(64);

function stored(summary: StoredRunClaim['summary'], resultDigest = DIGEST_A, engineVersion = '1.0.0'): StoredRunClaim {
  return { id: 'run-1', kind: 'motion', summary, resultDigest, engineVersion };
}

function rerun(summary: RunRecord['summary'], resultDigest = DIGEST_A, engineVersion = '1.0.0'): RunRecord {
  return { kind: 'motion', params: templateCase(), settings: { kind: 'motion' }, summary, resultDigest, engineVersion };
}

describe('compareRun', () => {
  it('accepts numbers within the relative tolerance and reports the tolerance it used', () => {
    const c = compareRun(stored({ maxDeviation: 0.25, outcome: 'holds-upright' }), rerun({ maxDeviation: 0.25 * (1 + 1e-8), outcome: 'holds-upright' }));
    expect(c.match).toBe(true);
    const row = c.numbers.find((n) => n.name === 'maxDeviation');
    expect(row?.match).toBe(true);
    expect(row?.tolerance).toBeCloseTo(0.25 * SUMMARY_REL_TOLERANCE, 15);
    expect(row?.difference).toBeCloseTo(0.25e-8, 15);
    expect(c.numbers.find((n) => n.name === 'outcome')).toMatchObject({ tolerance: null, match: true });
  });

  it('flags a number outside tolerance and a changed outcome word', () => {
    const c = compareRun(stored({ maxDeviation: 0.25, outcome: 'holds-upright' }), rerun({ maxDeviation: 0.26, outcome: 'falls' }));
    expect(c.match).toBe(false);
    expect(c.numbers.filter((n) => !n.match).map((n) => n.name)).toEqual(['maxDeviation', 'outcome']);
  });

  it('holds near-zero numbers to the absolute floor instead of a vanishing relative band', () => {
    const c = compareRun(stored({ meanAngle: 0 }), rerun({ meanAngle: SUMMARY_ABS_TOLERANCE / 2 }));
    expect(c.numbers[0]).toMatchObject({ match: true, tolerance: SUMMARY_ABS_TOLERANCE });
  });

  it('fails on a different digest from the same engine, but lets the numbers decide after an engine change', () => {
    expect(compareRun(stored({ x: 1 }), rerun({ x: 1 }, DIGEST_B)).match).toBe(false);
    const newer = compareRun(stored({ x: 1 }, DIGEST_A, '0.9.0'), rerun({ x: 1 }, DIGEST_B, '1.0.0'));
    expect(newer).toMatchObject({ digestMatch: false, numbersMatch: true, match: true, reproduced: false });
    expect(compareRun(stored({ x: 1 }), rerun({ x: 1 }))).toMatchObject({ reproduced: true, match: true });
  });

  it('sends infinite numbers as words, since JSON has no Infinity', () => {
    const payload = comparisonPayload(compareRun(stored({ multiplier: Infinity }), rerun({ multiplier: Infinity })));
    expect(payload.numbers[0]).toMatchObject({ name: 'multiplier', stored: 'Infinity', rerun: 'Infinity', match: true });
    expect(JSON.parse(JSON.stringify(payload)).numbers[0].stored).toBe('Infinity');
  });
});
