import { describe, expect, it } from 'vitest';
import { SWEEPABLE_FIELDS, getField, setField, sweepableFieldsFor } from './case-fields';
import { DEMO_RIGS, templateCase } from './templates';
import { parseCase } from './validate';

describe('case fields', () => {
  it('reads and writes a nested numeric field without touching the input', () => {
    const c = templateCase();
    const d = setField(c, 'drive.amplitude', 0.02);
    expect(getField(d, 'drive.amplitude')).toBeCloseTo(0.02, 12);
    expect(getField(c, 'drive.amplitude')).toBeCloseTo(0.01, 12);
    expect(d.body).toBe(c.body);
  });

  it('refuses missing and non-numeric paths', () => {
    const c = templateCase();
    expect(() => getField(c, 'drive.waveform.connectingRod')).toThrow(/no field/);
    expect(() => setField(c, 'drive.waveform.kind', 1)).toThrow(/not numeric/);
    expect(() => setField(c, 'body.nope', 1)).toThrow(/no field/);
  });

  it('lists, for each case, only fields that exist in it, each with a label and unit', () => {
    for (const rig of DEMO_RIGS) {
      for (const f of sweepableFieldsFor(rig.params)) {
        expect(Number.isFinite(getField(rig.params, f.path)), f.path).toBe(true);
        expect(parseCase(setField(rig.params, f.path, getField(rig.params, f.path))).ok).toBe(true);
      }
    }
    for (const f of SWEEPABLE_FIELDS) expect(f.label.length > 0 && f.unit.length > 0).toBe(true);
  });
});
