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

  it('states a fixed limit as a bound in SI, and a wrong kind with what is allowed', () => {
    const c = templateCase();
    expect(issuesOf({ ...c, drive: { ...c.drive, amplitude: 1e30 } })[0]).toMatchObject({
      field: 'drive.amplitude',
      bound: { relation: '<=', value: 10 },
    });
    expect(issuesOf({ ...c, body: { kind: 'point-mass', length: 1e-6, mass: 1 } })[0]).toMatchObject({
      field: 'body.length',
      bound: { relation: '>=', value: 0.001 },
    });
    expect(issuesOf({ ...c, body: { kind: 'wobble' } })[0]).toMatchObject({
      field: 'body.kind',
      expected: 'point-mass | rod-bob | measured-swing | chain',
    });
    expect(issuesOf({ ...c, run: { ...c.run, outputPoints: 10.5 } })[0]).toMatchObject({ expected: 'int' });
  });

  it('refuses a drive too slow for its run: at least 10 drive periods, with the bound and the reason', () => {
    const c = templateCase();
    // 1e-30 Hz passed before and took 16 s to give "Drive period T 1e+33 ms".
    const issues = issuesOf({ ...c, drive: { ...c.drive, frequency: 1e-30 } });
    const frequency = issues.filter((i) => i.field === 'drive.frequency');
    expect(frequency.length).toBeGreaterThan(0);
    expect(frequency.every((i) => i.bound?.relation === '>=' && i.reason)).toBe(true);
    // No duration bound beyond the longest allowed run.
    expect(issues.some((i) => i.field === 'run.duration')).toBe(false);
    const short = issuesOf({ ...c, run: { ...c.run, duration: 0.1 } });
    expect(short).toContainEqual(
      expect.objectContaining({ field: 'run.duration', bound: { relation: '>=', value: 10 / 40 }, reason: expect.stringMatching(/10 drive periods/) }),
    );
    expect(short).toContainEqual(expect.objectContaining({ field: 'drive.frequency', bound: { relation: '>=', value: 10 / 0.1 } }));
  });

  it('refuses a drive slower than a tenth of the free swing frequency', () => {
    const c = templateCase(); // 20 cm: free swing sqrt(g/L)/2pi = 1.114 Hz
    const run = { ...c.run, duration: 10000 };
    const issue = issuesOf({ ...c, drive: { ...c.drive, frequency: 0.1 }, run })[0];
    expect(issue.field).toBe('drive.frequency');
    expect(issue.bound?.value).toBeCloseTo(Math.sqrt(9.80665 / 0.2) / (2 * Math.PI) / 10, 10);
    expect(parseCase({ ...c, drive: { ...c.drive, frequency: 0.12 }, run }).ok).toBe(true);
  });

  it('bounds the step budget by drive periods and a measured swing to 1 mm equivalent length', () => {
    const c = templateCase();
    const fast = { kind: 'measured-swing', swingFrequency: 100, mass: 1 };
    expect(issuesOf({ ...c, body: fast })[0]).toMatchObject({
      field: 'body.swingFrequency',
      bound: { relation: '<=', value: Math.sqrt(9.80665 / 0.001) / (2 * Math.PI) },
    });
    expect(issuesOf({ ...c, run: { ...c.run, duration: 1e5 } })[0]).toMatchObject({
      field: 'run.duration',
      bound: { relation: '<=', value: 2e6 / 40 },
    });
  });

  it('returns fresh demo rig copies that callers may change', () => {
    const a = demoRigCase('horizontal-arm') as CaseParams;
    a.drive.amplitude = 1;
    expect(demoRigCase('horizontal-arm')?.drive.amplitude).toBeCloseTo(0.01, 12);
  });

  describe('chains', () => {
    const link = { kind: 'point-mass', length: 0.1, mass: 0.05, jointDamping: 0 };
    const chain = (links: unknown[], extra: Record<string, unknown> = {}) => ({
      ...templateCase(),
      body: { kind: 'chain', links },
      damping: { viscousRatio: 0, quadratic: 0, friction: 0, frictionSmoothing: 0.01 },
      ...extra,
    });

    it('accepts two and three links of either kind, bends optional', () => {
      const rod = { kind: 'rod-bob', rodLength: 0.2, rodMass: 0.03, bobMass: 0.01, bobRadius: 0.005, bobDistance: 0.2, jointDamping: 1e-4, startBend: 0.1 };
      expect(parseCase(chain([link, rod])).ok).toBe(true);
      expect(parseCase(chain([link, rod, link])).ok).toBe(true);
    });

    it('refuses one link or four with the links field', () => {
      expect(issuesOf(chain([link]))[0].field).toBe('body.links');
      expect(issuesOf(chain([link, link, link, link]))[0].field).toBe('body.links');
    });

    it('refuses a massless rod link, a tilted drive and case damping, naming the field', () => {
      const empty = { kind: 'rod-bob', rodLength: 0.2, rodMass: 0, bobMass: 0, bobRadius: 0, bobDistance: 0, jointDamping: 0 };
      expect(issuesOf(chain([link, empty]))).toEqual([expect.objectContaining({ field: 'body.links.1.bobMass', message: expect.stringMatching(/^link 2: /) })]);
      const c = templateCase();
      expect(issuesOf(chain([link, link], { drive: { ...c.drive, direction: 0.3 } })).map((i) => i.field)).toEqual(['drive.direction']);
      expect(issuesOf(chain([link, link], { damping: c.damping })).map((i) => i.field)).toEqual(['damping.viscousRatio']);
    });

    it('refuses a negative joint damping', () => {
      expect(issuesOf(chain([link, { ...link, jointDamping: -1 }]))[0].field).toBe('body.links.1.jointDamping');
    });
  });
});
