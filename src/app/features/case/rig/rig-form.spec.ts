import { caseDigest } from '../../../../../shared/case/canonical';
import { getField } from '../../../../../shared/case/case-fields';
import type { CaseParams } from '../../../../../shared/case/case-schema';
import { DEMO_RIGS, templateCase } from '../../../../../shared/case/templates';
import { RigForm, readableIssue } from './rig-form';
import { parseCase } from '../../../../../shared/case/validate';
import { DEFAULT_UNITS, fromDisplay, toDisplay, type DisplayUnits } from '../../../core/units/display-units';

const NUMERIC_PATHS = [
  'drive.direction', 'drive.amplitude', 'drive.frequency', 'damping.viscousRatio', 'damping.quadratic',
  'damping.friction', 'damping.frictionSmoothing', 'start.angle', 'start.rate', 'gravity', 'run.duration',
  'run.rtol', 'run.atol', 'run.outputPoints', 'run.strobePhase', 'run.transientFraction',
];

function expectSameCase(actual: CaseParams, expected: CaseParams, paths: readonly string[]): void {
  for (const path of paths) {
    const a = getField(actual, path);
    const e = getField(expected, path);
    const tolerance = 1e-11 * Math.max(1, Math.abs(e));
    expect(Math.abs(a - e), `${path}: ${a} vs ${e}`).toBeLessThanOrEqual(tolerance);
  }
}

function parsed(form: RigForm): CaseParams {
  const result = form.parse();
  if (!result.ok) throw new Error(JSON.stringify(result.issues));
  return result.value;
}

describe('RigForm', () => {
  it('carries the case\'s tolerances and drive noise through the form, and an edit keeps them', () => {
    const params: CaseParams = {
      ...templateCase(),
      tolerances: [{ field: 'drive.amplitude', distribution: 'normal', sigma: 5e-4 }],
      noise: { kind: 'phase-jitter', rms: 0.05, bandwidth: 100, seed: 7 },
    };
    const form = new RigForm(params);
    expect(caseDigest(parsed(form))).toBe(caseDigest(params));
    form.group.controls.drive.controls.frequency.setValue(41);
    expect(parsed(form).tolerances).toEqual(params.tolerances);
    expect(parsed(form).noise).toEqual(params.noise);
    form.setParams(templateCase());
    expect('tolerances' in parsed(form)).toBe(false);
  });

  it('shows SI lengths in mm, frequencies in Hz and angles in degrees by default', () => {
    const form = new RigForm(templateCase());
    const c = form.group.controls;
    expect(c.body.controls.length.value).toBe(200);
    expect(c.drive.controls.amplitude.value).toBe(10);
    expect(c.drive.controls.frequency.value).toBe(40);
    expect(String(c.start.controls.angle.value)).toBe('5.72958');
  });

  it('shows at most 6 significant digits, without trailing zeros', () => {
    const params = structuredClone(DEMO_RIGS[0].params);
    params.start.angle = 0.15;
    params.drive.amplitude = 0.0123456789;
    const form = new RigForm(params);
    const c = form.group.controls;
    expect(String(c.start.controls.angle.value)).toBe('8.59437');
    expect(String(c.drive.controls.amplitude.value)).toBe('12.3457');
    form.setUnits({ length: 'cm', frequency: 'rpm', angle: 'rad' });
    expect(String(c.start.controls.angle.value)).toBe('0.15');
    expect(String(c.drive.controls.amplitude.value)).toBe('1.23457');
  });

  it('keeps every field the user did not edit exactly as stored, through display and unit switches', () => {
    for (const rig of DEMO_RIGS) {
      const params = structuredClone(rig.params);
      params.drive.amplitude = 0.0123456789;
      const stored = caseDigest(params);
      const form = new RigForm(params);
      expect(caseDigest(parsed(form)), rig.id).toBe(stored);
      form.setUnits({ length: 'cm', frequency: 'rpm', angle: 'rad' });
      form.setUnits({ length: 'm', frequency: 'Hz', angle: 'deg' });
      expect(caseDigest(parsed(form)), rig.id).toBe(stored);

      // An edited field takes the typed value; the others keep every stored digit.
      form.group.controls.drive.controls.frequency.setValue(41.5);
      const edited = parsed(form);
      expect(edited.drive.frequency).toBeCloseTo(41.5, 12);
      expect(caseDigest(edited), rig.id).toBe(caseDigest({ ...params, drive: { ...params.drive, frequency: edited.drive.frequency } }));
    }
  });

  for (const units of [
    { length: 'mm', frequency: 'Hz', angle: 'deg' },
    { length: 'cm', frequency: 'rpm', angle: 'rad' },
    { length: 'm', frequency: 'rpm', angle: 'deg' },
  ] satisfies DisplayUnits[]) {
    it(`round-trips every demo rig through ${units.length}, ${units.frequency}, ${units.angle}`, () => {
      for (const rig of DEMO_RIGS) {
        const form = new RigForm(rig.params, units);
        const back = parsed(form);
        expectSameCase(back, rig.params, NUMERIC_PATHS);
        expect(back.body).toEqual(expect.objectContaining({ kind: rig.params.body.kind }));
      }
    });
  }

  it('converts the shown values when the units change, and the case stays the same', () => {
    const rig = DEMO_RIGS[0].params;
    const form = new RigForm(rig);
    form.setUnits({ length: 'cm', frequency: 'rpm', angle: 'rad' });
    const c = form.group.controls;
    expect(c.drive.controls.amplitude.value).toBe(2);
    expect(c.drive.controls.frequency.value).toBe(1500);
    expect(c.start.controls.angle.value).toBeCloseTo(0.15, 12);
    expect(c.drive.controls.connectingRod.value).toBe(10);
    expectSameCase(parsed(form), rig, [...NUMERIC_PATHS, 'body.rodLength', 'body.bobDistance', 'drive.waveform.connectingRod']);
  });

  it('keeps display rounding away from the stored value: 0.02 m shows as exactly 20 mm', () => {
    const units: DisplayUnits = { length: 'mm', frequency: 'Hz', angle: 'deg' };
    expect(toDisplay(0.02, 'length', units)).toBe(20);
    expect(fromDisplay(20, 'length', units)).toBeCloseTo(0.02, 15);
    expect(toDisplay(Math.PI / 2, 'angle', units)).toBe(90);
  });

  it('fills the form from each preset, including body and waveform kinds', () => {
    const form = new RigForm(templateCase());
    for (const rig of DEMO_RIGS) {
      form.setParams(rig.params);
      const c = form.group.controls;
      expect(c.body.controls.kind.value).toBe(rig.params.body.kind);
      expect(c.drive.controls.waveform.value).toBe(rig.params.drive.waveform.kind);
      expect(c.drive.controls.amplitude.value).toBeCloseTo(rig.params.drive.amplitude * 1000, 9);
      expect(c.drive.controls.frequency.value).toBeCloseTo(rig.params.drive.frequency, 9);
    }
  });

  it('puts a refused length on its control with the bound in the shown unit', () => {
    const form = new RigForm(templateCase());
    form.group.controls.body.controls.length.setValue(-5);
    const result = form.parse();
    expect(result.ok).toBe(false);
    expect(form.group.controls.body.controls.length.errors?.['case']).toBe('Must be at least 1 mm');
    form.group.controls.body.controls.length.setValue(150);
    expect(form.parse().ok).toBe(true);
    expect(form.group.controls.body.controls.length.errors).toBeNull();
  });

  it('puts the connecting-rod check on the connecting rod, in words', () => {
    const rig = DEMO_RIGS.find((r) => r.params.drive.waveform.kind === 'crank-slider');
    if (!rig) throw new Error('a demo rig with a crank is expected');
    const form = new RigForm(rig.params);
    form.group.controls.drive.controls.connectingRod.setValue(15);
    form.parse();
    const message: unknown = form.group.controls.drive.controls.connectingRod.errors?.['case'];
    expect(String(message)).toMatch(/longer than the crank radius/);
  });

  it('asks for a number in an emptied field, and for a whole number of output points', () => {
    const form = new RigForm(templateCase());
    form.group.controls.drive.controls.frequency.setValue(null);
    form.group.controls.run.controls.outputPoints.setValue(12.5);
    form.parse();
    expect(form.group.controls.drive.controls.frequency.errors?.['case']).toBe('Enter a number');
    expect(form.group.controls.run.controls.outputPoints.errors?.['case']).toBe('Must be a whole number');
  });

  it('writes bounds in the display unit, rounded towards the allowed side, with the reason', () => {
    const rpm: DisplayUnits = { length: 'mm', frequency: 'rpm', angle: 'deg' };
    expect(readableIssue({ field: 'drive.frequency', message: '', bound: { relation: '<=', value: 1e5 } }, rpm)).toBe('Must be at most 6e+6 rev/min');
    const slow = parseCase({ ...templateCase(), drive: { ...templateCase().drive, frequency: 1e-30 } });
    if (slow.ok) throw new Error('expected a refusal');
    // The ratio bound is 0.11144... Hz: shown rounded up, so the shown value itself is allowed.
    expect(readableIssue(slow.issues[0], DEFAULT_UNITS)).toBe(
      'Must be at least 0.1115 Hz: a drive slower than a tenth of the free swing has no slow motion to average',
    );
    expect(readableIssue(slow.issues[0], rpm)).toMatch(/^Must be at least 6\.687 rev\/min/);
    const tooFar = parseCase({ ...templateCase(), drive: { ...templateCase().drive, amplitude: 1e30 } });
    if (tooFar.ok) throw new Error('expected a refusal');
    expect(readableIssue(tooFar.issues[0], DEFAULT_UNITS)).toBe('Must be at most 10000 mm');
  });

  it('names the allowed kinds in words and asks for whole numbers', () => {
    const kind = parseCase({ ...templateCase(), body: { kind: 'cube' } });
    if (kind.ok) throw new Error('expected a refusal');
    expect(readableIssue(kind.issues[0], DEFAULT_UNITS)).toBe(
      'Must be one of: point mass on a light rod, rod with a bob, measured free swing, chain of hinged links',
    );
    const points = parseCase({ ...templateCase(), run: { ...templateCase().run, outputPoints: 10.5 } });
    if (points.ok) throw new Error('expected a refusal');
    expect(readableIssue(points.issues[0], DEFAULT_UNITS)).toBe('Must be a whole number');
  });

  it('builds a harmonics waveform from the harmonic rows', () => {
    const form = new RigForm(templateCase());
    form.group.controls.drive.controls.waveform.setValue('harmonics');
    form.addHarmonic();
    const harmonics = form.harmonics.controls;
    harmonics[1].controls.phase.setValue(90);
    const value = parsed(form);
    if (value.drive.waveform.kind !== 'harmonics') throw new Error('harmonics expected');
    expect(value.drive.waveform.terms).toHaveLength(2);
    expect(value.drive.waveform.terms[1].order).toBe(2);
    expect(value.drive.waveform.terms[1].phase).toBeCloseTo(Math.PI / 2, 12);
  });

  it('saves a chain with every link as opened, through unit switches and edits of other fields', () => {
    const rig = DEMO_RIGS.find((r) => r.params.body.kind === 'chain' && r.params.body.links.length === 3);
    if (!rig) throw new Error('three-link demo missing');
    const form = new RigForm(structuredClone(rig.params));
    expect(form.group.controls.body.controls.kind.value).toBe('chain');
    form.setUnits({ length: 'cm', frequency: 'rpm', angle: 'rad' });
    form.group.controls.drive.controls.amplitude.setValue(0.6);
    const saved = parsed(form);
    expect(saved.body).toEqual(rig.params.body);
    expect(saved.drive.amplitude).toBeCloseTo(0.006, 12);
  });

  it('switching a point mass to a chain gives two point-mass links sharing its length and mass', () => {
    const form = new RigForm(templateCase());
    form.group.controls.body.controls.kind.setValue('chain');
    form.group.controls.damping.controls.viscousRatio.setValue(0);
    const saved = parsed(form);
    expect(saved.body).toEqual({
      kind: 'chain',
      links: [
        { kind: 'point-mass', length: 0.1, mass: 0.05, jointDamping: 0 },
        { kind: 'point-mass', length: 0.1, mass: 0.05, jointDamping: 0 },
      ],
    });
  });

  it('edits chain links in display units, adds a straight third link and removes one, never below two', () => {
    const rig = DEMO_RIGS.find((r) => r.id === 'two-link-shaker');
    if (!rig) throw new Error('two-link demo missing');
    const form = new RigForm(structuredClone(rig.params));
    form.setUnits({ length: 'cm', frequency: 'Hz', angle: 'deg' });
    const second = form.links.at(1).controls;
    expect(second.rodLength.value).toBe(15);
    second.rodLength.setValue(12);
    second.startBend.setValue(0);
    form.addLink();
    const saved = parsed(form);
    if (saved.body.kind !== 'chain') throw new Error('not a chain');
    expect(saved.body.links).toHaveLength(3);
    expect(saved.body.links[1]).toEqual({ kind: 'rod-bob', rodLength: 0.12, rodMass: 0.02, bobMass: 0, bobRadius: 0, bobDistance: 0, jointDamping: 2e-4, startBend: 0 });
    // the new link copies the last one, straight on
    expect(saved.body.links[2]).toEqual({ kind: 'rod-bob', rodLength: 0.12, rodMass: 0.02, bobMass: 0, bobRadius: 0, bobDistance: 0, jointDamping: 2e-4 });
    form.addLink();
    expect(form.links.length).toBe(3);
    form.removeLink(0);
    form.removeLink(0);
    expect(form.links.length).toBe(2);
  });

  it('puts a link issue on the link field, in the shown unit', () => {
    const rig = DEMO_RIGS.find((r) => r.id === 'three-link-beads');
    if (!rig) throw new Error('three-link demo missing');
    const form = new RigForm(structuredClone(rig.params));
    form.links.at(2).controls.length.setValue(0.5);
    const result = form.parse();
    expect(result.ok).toBe(false);
    expect(form.links.at(2).controls.length.errors?.['case']).toBe('Must be at least 1 mm');
  });
});
