import { describe, expect, it } from 'vitest';
import { templateCase } from '../case';
import { base64ToBytes, bytesToBase64, decodeRunResult, encodeRunResult } from './result-codec';
import { computeRun, resultDigest, type RunSettings } from './run-record';

function quickCase() {
  const params = templateCase();
  params.run.duration = 0.5;
  params.run.outputPoints = 200;
  return params;
}

describe('result codec', () => {
  it('writes base64 exactly as Node does for every padding length', () => {
    for (const length of [0, 1, 2, 3, 4, 5, 255]) {
      const bytes = Uint8Array.from({ length }, (_, i) => (i * 37 + 11) & 255);
      const text = bytesToBase64(bytes);
      expect(text).toBe(Buffer.from(bytes).toString('base64'));
      expect(Array.from(base64ToBytes(text))).toEqual(Array.from(bytes));
    }
  });

  it('refuses text outside the base64 alphabet', () => {
    expect(() => base64ToBytes('ab*d')).toThrow(/base64/);
    expect(() => base64ToBytes('abc')).toThrow(/multiple of 4/);
  });

  it('round-trips a computed motion result bit for bit, typed arrays included', () => {
    const result = computeRun(quickCase(), { kind: 'motion' });
    const decoded = decodeRunResult(encodeRunResult(result));
    if (decoded.kind !== 'motion' || result.kind !== 'motion') throw new Error('kind lost');
    expect(decoded.value.series.theta).toBeInstanceOf(Float64Array);
    expect(Array.from(decoded.value.series.theta)).toEqual(Array.from(result.value.series.theta));
    expect(decoded.value.summary).toEqual(result.value.summary);
    expect(resultDigest(decoded)).toBe(resultDigest(result));
  });

  it('keeps infinite multipliers and null cells of a chart', () => {
    const params = quickCase();
    const settings: RunSettings = {
      kind: 'chart',
      grid: {
        x: { field: 'drive.frequency', from: 5, to: 60, count: 4 },
        y: { field: 'drive.amplitude', from: 0.001, to: 0.02, count: 3 },
      },
    };
    const result = computeRun(params, settings);
    if (result.kind !== 'chart') throw new Error('not a chart');
    result.value.maxMultiplier[0] = Infinity;
    const decoded = decodeRunResult(encodeRunResult(result));
    if (decoded.kind !== 'chart') throw new Error('kind lost');
    expect(decoded.value.maxMultiplier[0]).toBe(Infinity);
    expect(decoded.value.caseMark).toEqual(result.value.caseMark);
    expect(resultDigest(decoded)).toBe(resultDigest(result));
  });

  it('writes non-finite plain numbers as tagged text and reads them back', () => {
    const text = encodeRunResult({ kind: 'margins', value: { marginPercent: -Infinity, other: NaN } as never });
    expect(text).toContain('{"$num":"-Infinity"}');
    const back = decodeRunResult(text) as { value: { marginPercent: number; other: number } };
    expect(back.value.marginPercent).toBe(-Infinity);
    expect(back.value.other).toBeNaN();
  });

  it('refuses text that is not a run result', () => {
    expect(() => decodeRunResult('[1,2]')).toThrow(/not a qp-result-json\/1/);
  });
});
