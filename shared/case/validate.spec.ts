import { describe, expect, it } from 'vitest';
import { parseCase } from './validate';
import { DEMO_RIGS, demoRigCase, templateCase } from './templates';
import type { CaseParams } from './case-schema';

function issuesOf(input: unknown) {
  const r = parseCase(input);
  if (r.ok) throw new Error('expected the case to be refused');
  return r.issues;
}

describe('parseCase', () => {
  it('accepts the template and every demo rig', () => {
    expect(parseCase(templateCase()).ok).toBe(true);
    for (const rig of DEMO_RIGS) expect(parseCase(rig.params), rig.id).toMatchObject({ ok: true });
  });

  it('fills in standard gravity when absent', () => {
    const { gravity: _omit, ...rest } = templateCase();
    const r = parseCase(rest);
    expect(r.ok && r.value.gravity).toBeCloseTo(9.80665, 10);
  });

  it('refuses a negative length with its field path', () => {
    const c = templateCase();
    const issues = issuesOf({ ...c, body: { kind: 'point-mass', length: -0.1, mass: 1 } });
    expect(issues.map((i) => i.field)).toContain('body.length');
  });

  it('refuses a connecting rod no longer than the crank radius', () => {
    const c = templateCase();
    const issues = issuesOf({ ...c, drive: { ...c.drive, amplitude: 0.05, waveform: { kind: 'crank-slider', connectingRod: 0.05 } } });
    expect(issues).toEqual([expect.objectContaining({ field: 'drive.waveform.connectingRod', message: expect.stringMatching(/longer than the crank/) })]);
  });

  it('refuses NaN, Infinity and zero frequency', () => {
    const c = templateCase();
    expect(issuesOf({ ...c, start: { angle: Number.NaN, rate: 0 } })[0].field).toBe('start.angle');
    expect(issuesOf({ ...c, start: { angle: 0, rate: Number.POSITIVE_INFINITY } })[0].field).toBe('start.rate');
    expect(issuesOf({ ...c, drive: { ...c.drive, frequency: 0 } })[0].field).toBe('drive.frequency');
  });

  it('refuses absurd durations, drive period counts and output sizes', () => {
    const c = templateCase();
    expect(issuesOf({ ...c, run: { ...c.run, duration: 1e9 } })[0].field).toBe('run.duration');
    expect(issuesOf({ ...c, drive: { ...c.drive, frequency: 1e5 }, run: { ...c.run, duration: 1000 } })[0].field).toBe('run.duration');
    expect(issuesOf({ ...c, run: { ...c.run, outputPoints: 1e9 } })[0].field).toBe('run.outputPoints');
    expect(issuesOf({ ...c, run: { ...c.run, outputPoints: 10.5 } })[0].field).toBe('run.outputPoints');
  });

  it('refuses a massless rod-and-bob body and unknown kinds', () => {
    const c = templateCase();
    const body = { kind: 'rod-bob', rodLength: 0.3, rodMass: 0, bobMass: 0, bobRadius: 0, bobDistance: 0.2 };
    expect(issuesOf({ ...c, body })[0].field).toBe('body.bobMass');
    expect(issuesOf({ ...c, body: { kind: 'cube' } })[0].field).toBe('body.kind');
    expect(issuesOf('not a case')[0].field).toBe('');
  });

  it('returns fresh demo rig copies that callers may change', () => {
    const a = demoRigCase('horizontal-arm') as CaseParams;
    a.drive.amplitude = 1;
    expect(demoRigCase('horizontal-arm')?.drive.amplitude).toBeCloseTo(0.01, 12);
  });
});
