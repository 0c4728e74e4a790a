import { describe, expect, it } from 'vitest';
import { compareSummaries } from './compare-runs';
import { setField, templateCase } from '../case';
import {
  computeRun, digestView, makeRunRecord, parseRunRecord, recheckRun, resultDigest, type RunResult, type RunSettings,
} from './run-record';

describe('run records', () => {
  const c = templateCase();
  const settings: RunSettings = { kind: 'margins', relTolerance: 1e-6 };

  it('gives the same digest on a rerun and a different one when the case changes', () => {
    const a = resultDigest(computeRun(c, settings));
    const b = resultDigest(computeRun(c, settings));
    const other = resultDigest(computeRun(setField(c, 'drive.frequency', 41), settings));
    expect(a).toMatch(/^[0-9a-f]{64}$/);
    expect(b).toBe(a);
    expect(other).not.toBe(a);
  });

  it('leaves the thresholds\' bisection probes out of a sweep digest, so digests stored before them still match', () => {
    const spec = { field: 'drive.amplitude', from: 0.002, to: 0.004, steps: 2 };
    const sweepOf = (probes: { value: number; outcome: 'falls' | 'irregular' }[], value = 0.003): RunResult => ({
      kind: 'sweep',
      value: {
        engineVersion: '1.0.0', field: spec.field, spec, values: Float64Array.from([0.002, 0.004]),
        points: [],
        thresholds: [{ kind: 'outcome', value, bracket: [0.0029, 0.0031], tolerance: 0.0002, below: 'falls', above: 'irregular', probes }],
      },
    });
    const withProbes = resultDigest(sweepOf([{ value: 0.003, outcome: 'irregular' }]));
    expect(resultDigest(sweepOf([]))).toBe(withProbes);
    expect(resultDigest(sweepOf([], 0.00301))).not.toBe(withProbes);
  });

  it('rounds numbers to 9 significant digits and writes non-finite values as text', () => {
    expect(digestView({ x: 0.1234567891234, y: Infinity, z: new Float64Array([1 / 3]) })).toEqual({
      x: 0.123456789, y: 'Infinity', z: [0.333333333],
    });
  });

  it('confirms a stored record and disputes one whose numbers were changed beyond the tolerance', () => {
    const record = JSON.parse(JSON.stringify(makeRunRecord(c, settings, computeRun(c, settings)))) as unknown;
    const parsed = parseRunRecord(record);
    if (!parsed.ok) throw new Error(parsed.message);
    const report = recheckRun(parsed.value);
    expect(report.ok).toBe(true);
    expect(report.digestMatches).toBe(true);
    const lower = Number(parsed.value.summary['frequencyLower']);
    const changed = { ...parsed.value, summary: { ...parsed.value.summary, frequencyLower: lower * (1 + 1e-5) } };
    const disputed = recheckRun(changed);
    expect(disputed.ok).toBe(false);
    expect(disputed.compared.filter((x) => !x.ok).map((x) => x.key)).toEqual(['frequencyLower']);
  });

  it('compares numbers within the relative tolerance and revives non-finite values stored as text', () => {
    const rows = compareSummaries(
      { a: 1, b: 'Infinity', c: 'falls', d: 2 },
      { a: 1 + 5e-7, b: Infinity, c: 'falls', d: 2.01 },
      1e-6,
    );
    expect(rows.map((r) => [r.key, r.ok])).toEqual([['a', true], ['b', true], ['c', true], ['d', false]]);
  });

  it('refuses a record with an invalid case, naming the field', () => {
    const bad = parseRunRecord({ kind: 'motion', settings: { kind: 'motion' }, summary: {}, resultDigest: 'x', engineVersion: '1', params: { ...c, gravity: -1 } });
    expect(bad).toMatchObject({ ok: false, field: 'params.gravity' });
  });
});
