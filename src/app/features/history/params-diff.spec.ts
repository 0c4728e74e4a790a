import { demoRigCase, templateCase } from '../../../../shared/case';
import { diffParams, flattenParams } from './params-diff';

describe('flattenParams', () => {
  it('lists every leaf as a dotted path, in display units', () => {
    const rows = flattenParams(templateCase());
    const byPath = new Map(rows.map((r) => [r.path, r]));
    expect(byPath.get('drive.amplitude')).toEqual({ path: 'drive.amplitude', label: 'Drive amplitude', value: '10', unit: 'mm' });
    expect(byPath.get('drive.frequency')).toEqual({ path: 'drive.frequency', label: 'Drive frequency', value: '40', unit: 'Hz' });
    expect(byPath.get('drive.waveform.kind')).toEqual({ path: 'drive.waveform.kind', label: 'Drive waveform', value: 'sine', unit: '' });
    expect(byPath.get('body.kind')?.value).toBe('point mass on a light rod');
    expect(byPath.get('body.length')?.value).toBe('200');
    expect(Number(byPath.get('start.angle')?.value)).toBeCloseTo((0.1 * 180) / Math.PI, 4);
    expect(byPath.get('start.angle')?.unit).toBe('°');
  });

  it('puts rows in the form order whatever order the stored keys come back in', () => {
    const stored = JSON.parse('{"run":{"atol":1e-10,"duration":3},"body":{"mass":0.1,"kind":"point-mass","length":0.2},"schemaVersion":1}');
    expect(flattenParams(stored).map((r) => r.path)).toEqual([
      'schemaVersion', 'body.kind', 'body.length', 'body.mass', 'run.duration', 'run.atol',
    ]);
  });

  it('indexes array entries such as harmonic terms', () => {
    const params = {
      drive: { waveform: { kind: 'harmonics', terms: [{ order: 1, relAmplitude: 1, phase: 0 }, { order: 3, relAmplitude: 0.2, phase: Math.PI }] } },
    };
    const paths = flattenParams(params).map((r) => `${r.path}=${r.value}${r.unit ? ` ${r.unit}` : ''}`);
    expect(paths).toContain('drive.waveform.terms.1.order=3');
    expect(paths).toContain('drive.waveform.terms.1.phase=180 °');
    expect(flattenParams(params).find((r) => r.path === 'drive.waveform.terms.1.phase')?.label).toBe('Harmonic 2 phase');
  });
});

describe('flattenParams, tolerances', () => {
  it('reads each tolerance by the label and display unit of the field it is on', () => {
    const params = {
      ...templateCase(),
      tolerances: [
        { field: 'drive.amplitude', distribution: 'normal', sigma: 0.002 },
        { field: 'drive.frequency', distribution: 'uniform', halfWidth: 2 },
      ],
    };
    const rows = flattenParams(params).filter((r) => r.path.startsWith('tolerances.'));
    expect(rows.map((r) => `${r.label}: ${r.value}${r.unit ? ` ${r.unit}` : ''}`)).toEqual([
      'Tolerance 1 on: Drive amplitude',
      'Tolerance 1 spread: normal (σ)',
      'Tolerance 1 σ, Drive amplitude: 2 mm',
      'Tolerance 2 on: Drive frequency',
      'Tolerance 2 spread: uniform (±)',
      'Tolerance 2 ±, Drive frequency: 2 Hz',
    ]);
  });
});

describe('diffParams', () => {
  it('marks only the changed rows between two revisions', () => {
    const r1 = templateCase();
    const r2 = { ...r1, drive: { ...r1.drive, amplitude: 0.012 } };
    const changed = diffParams(r1, r2).filter((row) => row.changed);
    expect(changed).toEqual([{ path: 'drive.amplitude', label: 'Drive amplitude', unit: 'mm', left: '10', right: '12', changed: true }]);
  });

  it('shows fields that exist on one side only, such as a changed body kind', () => {
    const left = templateCase();
    const right = demoRigCase('shaker-tall-rod');
    const rows = diffParams(left, right);
    const length = rows.find((r) => r.path === 'body.length');
    const rodLength = rows.find((r) => r.path === 'body.rodLength');
    expect(length).toMatchObject({ left: '200', right: null, changed: true });
    expect(rodLength).toMatchObject({ left: null, right: '500', changed: true });
    expect(rows.find((r) => r.path === 'body.kind')).toMatchObject({ left: 'point mass on a light rod', right: 'rod with a bob', changed: true });
    expect(rows.find((r) => r.path === 'schemaVersion')?.changed).toBe(false);
  });
});
