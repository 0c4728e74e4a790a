import { templateCase } from '../../../../shared/case/templates';
import { computeRun, makeRunRecord } from '../../../../shared/engine/run-record';
import { flattenParams } from '../../features/history/params-diff';
import { DEFAULT_UNITS } from './display-units';
import { FIELD_TABLE, fieldInfo, fieldLabel, formatFieldValue, summaryRows } from './field-table';

describe('field table', () => {
  it('names every field of the template case', () => {
    for (const row of flattenParams(templateCase())) expect(fieldInfo(row.path), row.path).not.toBeNull();
  });

  it('names every summary key of a real motion and margins run, and shows none of the keys', () => {
    const params = templateCase();
    params.run.duration = 2;
    for (const settings of [{ kind: 'motion' }, { kind: 'margins', relTolerance: 1e-3 }] as const) {
      const record = makeRunRecord(params, settings, computeRun(params, settings));
      for (const row of summaryRows(record.summary)) {
        expect(FIELD_TABLE[`summary.${row.key}`], row.key).toBeDefined();
        expect(row.label).not.toBe(row.key);
      }
    }
  });

  it('reads summary numbers with labels and units', () => {
    expect(summaryRows({ marginPercent: 3.198, amplitudeLower: 0.00678, uprightHolds: true, outcome: 'holds-upright' }, DEFAULT_UNITS)).toEqual([
      { key: 'marginPercent', label: 'Margin', value: '+3.2 %' },
      { key: 'amplitudeLower', label: 'Lower amplitude limit', value: '6.78 mm' },
      { key: 'uprightHolds', label: 'Upright holds', value: 'yes' },
      { key: 'outcome', label: 'Outcome', value: 'holds upright' },
    ]);
  });

  it('numbers array entries from 1 and gives sweep thresholds the swept field\'s unit', () => {
    expect(fieldLabel('summary.point.3.outcome')).toBe('Point 4 outcome');
    expect(formatFieldValue('summary.point.3.outcome', 'falls')).toBe('falls');
    const rows = summaryRows({ field: 'drive.amplitude', 'threshold.0.kind': 'outcome', 'threshold.0.value': 0.0065 });
    expect(rows.map((r) => `${r.label}: ${r.value}`)).toEqual([
      'Swept field: Drive amplitude',
      'Threshold 1 kind: outcome changes',
      'Threshold 1 value: 6.5 mm',
    ]);
  });
});
