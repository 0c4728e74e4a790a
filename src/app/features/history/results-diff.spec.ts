import { resultsDiff, type DiffRun } from './results-diff';

const motion = (outcome: string, slowFrequencyHz: number | null, maxDeviation: number): DiffRun => ({
  kind: 'motion',
  summary: { outcome, slowFrequencyHz, maxDeviation },
});
const margins = (marginPercent: number, amplitudeLower: number, frequencyLower: number, frequencyUpper: number | null): DiffRun => ({
  kind: 'margins',
  summary: { uprightHolds: marginPercent > 0, marginPercent, amplitudeLower, amplitudeUpper: 0.09, frequencyLower, frequencyUpper },
});
const sweep = (field: string, values: number[]): DiffRun => ({
  kind: 'sweep',
  summary: { field, points: 9, thresholds: values.length, ...Object.fromEntries(values.flatMap((v, i) => [[`threshold.${i}.kind`, 'outcome'], [`threshold.${i}.value`, v]])) },
});

describe('resultsDiff', () => {
  it('gives margin, limits, outcome and slow frequency in the tabs’ units with arrows and percentages', () => {
    const rows = resultsDiff(
      [motion('falls', null, 3), margins(-5, 0.008, 30, null)],
      [motion('holds-upright', 0.8, 0.05), margins(12.5, 0.0079, 31.5, null)],
    );
    const row = (label: string) => rows.find((r) => r.label === label);
    expect(row('Outcome')).toMatchObject({ left: 'falls', right: 'holds upright', arrow: '≠', changed: true });
    expect(row('Slow frequency')).toMatchObject({ left: 'none found', right: '0.8 Hz', changed: true });
    expect(row('Margin of the upright')).toMatchObject({ left: '−5 %', right: '+12.5 %', arrow: '↑', change: '+17.5 points' });
    expect(row('Lower amplitude limit')).toMatchObject({ left: '8 mm', right: '7.9 mm', arrow: '↓', change: '−1.25 %' });
    expect(row('Lower frequency limit')).toMatchObject({ left: '30 Hz', right: '31.5 Hz', arrow: '↑', change: '+5 %' });
    expect(row('Upper frequency limit')).toMatchObject({ left: 'none found', right: 'none found', arrow: '=', changed: false });
    expect(row('Upper amplitude limit')).toMatchObject({ left: '90 mm', right: '90 mm', changed: false, change: '' });
  });

  it('compares sweep thresholds of the same field and says when the fields differ', () => {
    const same = resultsDiff([sweep('drive.amplitude', [0.0079])], [sweep('drive.amplitude', [0.0083, 0.05])]);
    expect(same).toEqual([
      expect.objectContaining({ label: 'Drive amplitude threshold 1 (outcome changes)', left: '7.9 mm', right: '8.3 mm', arrow: '↑', change: '+5.06 %' }),
      expect.objectContaining({ label: 'Drive amplitude threshold 2 (outcome changes)', left: '—', right: '50 mm', direction: 'missing', change: 'not in the first' }),
    ]);
    const other = resultsDiff([sweep('drive.amplitude', [0.0079])], [sweep('drive.frequency', [31])]);
    expect(other).toEqual([expect.objectContaining({ label: 'Swept field', left: 'Drive amplitude', right: 'Drive frequency', changed: true })]);
  });

  it('takes the latest run of a kind and shows a kind stored on one side only as missing on the other', () => {
    const rows = resultsDiff([motion('falls', null, 3), motion('tumbles', null, 9)], [margins(10, 0.008, 30, 300)]);
    expect(rows.find((r) => r.label === 'Outcome')).toMatchObject({ left: 'tumbles', right: '—', direction: 'missing' });
    expect(rows.find((r) => r.label === 'Margin of the upright')).toMatchObject({ left: '—', right: '+10 %', change: 'not in the first' });
  });

  it('is empty when neither revision has stored runs', () => {
    expect(resultsDiff([], [])).toEqual([]);
  });
});
