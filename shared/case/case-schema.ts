import { z } from 'zod';

import { bodyProperties } from '../engine/body';
import { SWEEPABLE_FIELDS, sweepableFieldsFor } from './case-fields';

/** Version of the case parameter shape; bump when a stored case would need migrating. */
export const CASE_SCHEMA_VERSION = 1;

/** Standard gravity, m/s^2 (the default for `gravity`). */
export const STANDARD_GRAVITY = 9.80665;

/** Limits that keep a run bounded in time and memory; exported so the UI can show them. */
export const CASE_LIMITS = {
  /** m: shortest body or equivalent length; below it the rigid-body model and the drive's stroke lose meaning. */
  minLength: 1e-3,
  maxLength: 100,
  maxMass: 1e6,
  maxAmplitude: 10,
  maxFrequency: 1e5,
  maxDuration: 1e5,
  /** drive periods a run may span: the step budget of one run */
  maxDrivePeriods: 2e6,
  /** drive periods a run must span: outcomes are judged on period means after the transient */
  minDrivePeriods: 10,
  /** slowest drive as a share of the free swing frequency; a slower drive has no slow motion to average */
  minDriveToSwingRatio: 0.1,
  maxOutputPoints: 200_000,
  maxHarmonics: 16,
  maxHarmonicOrder: 64,
} as const;

const finite = () => z.number().finite();
const positive = (max: number, unit: string) => finite().gt(0).lte(max).describe(unit);
const length = (unit: string) => finite().gte(CASE_LIMITS.minLength).lte(CASE_LIMITS.maxLength).describe(unit);
const nonNegative = (max: number, unit: string) => finite().gte(0).lte(max).describe(unit);

const pointMassSchema = z.object({
  kind: z.literal('point-mass'),
  length: length('m: pivot to mass'),
  mass: positive(CASE_LIMITS.maxMass, 'kg'),
});

const rodBobSchema = z.object({
  kind: z.literal('rod-bob'),
  rodLength: length('m: uniform rod hinged at one end'),
  rodMass: nonNegative(CASE_LIMITS.maxMass, 'kg'),
  bobMass: nonNegative(CASE_LIMITS.maxMass, 'kg: solid sphere'),
  bobRadius: nonNegative(CASE_LIMITS.maxLength, 'm'),
  bobDistance: nonNegative(CASE_LIMITS.maxLength, 'm: pivot to bob centre'),
});

const measuredSwingSchema = z.object({
  kind: z.literal('measured-swing'),
  swingFrequency: positive(1000, 'Hz: small free swing hanging down'),
  mass: positive(CASE_LIMITS.maxMass, 'kg'),
});

/** Per link of a chain: the joint above it and how it starts. */
const jointFields = {
  jointDamping: nonNegative(1e6, 'N m s/rad: viscous torque per unit relative rate at the joint on the pivot side of this link'),
  startBend: finite().gte(-1000).lte(1000).optional().describe('rad: start angle relative to the previous link (the first link: to start.angle); 0 when absent'),
  startBendRate: finite().gte(-1e5).lte(1e5).optional().describe('rad/s: start rate relative to the previous link (the first: to start.rate); 0 when absent'),
};

/** A chain link: a point mass at its outer hinge, or a uniform rod with an optional bob; hinge to hinge is `length` or `rodLength`. */
export const chainLinkSchema = z.discriminatedUnion('kind', [pointMassSchema.extend(jointFields), rodBobSchema.extend(jointFields)]);

/** Most and fewest links of a chain. */
export const CHAIN_LINKS = { min: 2, max: 3 } as const;

const chainSchema = z.object({
  kind: z.literal('chain'),
  links: z.array(chainLinkSchema).min(CHAIN_LINKS.min).max(CHAIN_LINKS.max).describe('links from the pivot up, hinged end to end'),
});

export const bodySchema = z.discriminatedUnion('kind', [pointMassSchema, rodBobSchema, measuredSwingSchema, chainSchema]);

const harmonicTermSchema = z.object({
  order: z.number().int().gte(1).lte(CASE_LIMITS.maxHarmonicOrder).describe('multiple of the drive frequency'),
  relAmplitude: finite().gte(-100).lte(100).describe('1: relative to drive.amplitude'),
  phase: finite().gte(-100).lte(100).describe('rad'),
});

export const waveformSchema = z.discriminatedUnion('kind', [
  z.object({ kind: z.literal('sine') }),
  z.object({
    kind: z.literal('crank-slider'),
    connectingRod: positive(CASE_LIMITS.maxLength, 'm: connecting rod length, longer than the crank radius'),
  }),
  z.object({
    kind: z.literal('harmonics'),
    terms: z.array(harmonicTermSchema).min(1).max(CASE_LIMITS.maxHarmonics),
  }),
]);

export const driveSchema = z.object({
  direction: finite().gte(-Math.PI).lte(Math.PI).describe('rad: drive line from the vertical (0 vertical, pi/2 horizontal)'),
  amplitude: nonNegative(CASE_LIMITS.maxAmplitude, 'm: sine amplitude, crank radius, or harmonics scale'),
  frequency: positive(CASE_LIMITS.maxFrequency, 'Hz'),
  waveform: waveformSchema,
  ramp: z
    .object({
      fromFrequency: nonNegative(CASE_LIMITS.maxFrequency, 'Hz: frequency at t = 0'),
      duration: positive(CASE_LIMITS.maxDuration, 's: linear rise to drive.frequency'),
    })
    .optional(),
});

export const dampingSchema = z.object({
  viscousRatio: nonNegative(10, '1: damping ratio zeta against omega0 = sqrt(g/L)'),
  quadratic: nonNegative(1e4, '1/rad: coefficient of -c*rate*|rate|'),
  friction: nonNegative(1e6, 'rad/s^2: pivot friction torque divided by the moment of inertia'),
  frictionSmoothing: positive(1e3, 'rad/s: rate scale of the tanh smoothing of friction'),
});

export const startSchema = z.object({
  angle: finite().gte(-1000).lte(1000).describe('rad from the upright, clockwise positive'),
  rate: finite().gte(-1e5).lte(1e5).describe('rad/s'),
});

export const runSettingsSchema = z.object({
  duration: positive(CASE_LIMITS.maxDuration, 's: simulated time'),
  rtol: finite().gte(1e-14).lte(1e-2).describe('1: relative tolerance of the integrator'),
  atol: finite().gte(1e-16).lte(1e-2).describe('rad, rad/s: absolute tolerance of the integrator'),
  outputPoints: z.number().int().gte(2).lte(CASE_LIMITS.maxOutputPoints).describe('count: most points kept per series'),
  strobePhase: finite().gte(0).lte(2 * Math.PI).describe('rad: drive phase at which the stroboscopic section samples'),
  transientFraction: finite().gte(0).lte(0.95).describe('1: leading share of the run ignored when classifying'),
});

/** Most tolerances a case may carry (each is one dimension of a hold-probability sample). */
export const MAX_TOLERANCES = 12;
/** Noise bandwidth at most this many times the drive frequency: the integrator resolves it within its step budget. */
export const MAX_NOISE_BANDWIDTH_RATIO = 20;

const tolerableField = z.string().refine((p) => SWEEPABLE_FIELDS.some((f) => f.path === p), {
  message: `must be one of ${SWEEPABLE_FIELDS.map((f) => f.path).join(', ')}`,
});

/**
 * A manufacturing or operating tolerance on one numeric field (a sweepable field, in its SI unit): normal about the
 * case's value with standard deviation `sigma`, or spread evenly within +- `halfWidth`.
 */
export const toleranceSchema = z.discriminatedUnion('distribution', [
  z.object({ field: tolerableField, distribution: z.literal('normal'), sigma: nonNegative(1e5, 'field unit: standard deviation') }),
  z.object({ field: tolerableField, distribution: z.literal('uniform'), halfWidth: nonNegative(1e5, 'field unit: values within +- this') }),
]);

const noiseSeed = z.number().int().gte(1).lte(4294967295).describe('MT19937 seed of the noise realisation');
/**
 * Drive noise for motion runs (Floquet analyses use the nominal drive): a random drive phase phi(t) + psi(t) with RMS
 * `rms`, or a random pivot displacement n(t) added along the drive line with flat one-sided spectral density
 * `density`; both band-limited to `bandwidth` and generated from `seed` (shared/engine/drive-noise.ts).
 */
export const noiseSchema = z.discriminatedUnion('kind', [
  z.object({
    kind: z.literal('phase-jitter'),
    rms: nonNegative(Math.PI, 'rad: RMS of the phase error'),
    bandwidth: positive(CASE_LIMITS.maxFrequency, 'Hz: highest frequency of the phase error'),
    seed: noiseSeed,
  }),
  z.object({
    kind: z.literal('amplitude'),
    density: nonNegative(1, 'm^2/Hz: one-sided spectral density of the displacement noise'),
    bandwidth: positive(CASE_LIMITS.maxFrequency, 'Hz: the noise is flat from 0 to this'),
    seed: noiseSeed,
  }),
]);

export const caseParamsSchema = z
  .object({
    schemaVersion: z.literal(CASE_SCHEMA_VERSION),
    body: bodySchema,
    drive: driveSchema,
    damping: dampingSchema,
    start: startSchema,
    gravity: positive(1000, 'm/s^2').default(STANDARD_GRAVITY),
    run: runSettingsSchema,
    tolerances: z.array(toleranceSchema).max(MAX_TOLERANCES).optional().describe('tolerances for the hold probability'),
    noise: noiseSchema.optional().describe('drive noise of motion runs'),
  })
  .superRefine((c, ctx) => {
    const { body, drive, run } = c;
    if (c.tolerances) {
      const present = new Set(sweepableFieldsFor(c).map((f) => f.path));
      const seen = new Set<string>();
      c.tolerances.forEach((t, i) => {
        if (!present.has(t.field)) {
          ctx.addIssue({ code: 'custom', path: ['tolerances', i, 'field'], message: `this case has no field ${t.field}` });
        } else if (seen.has(t.field)) {
          ctx.addIssue({ code: 'custom', path: ['tolerances', i, 'field'], message: `${t.field} already has a tolerance` });
        }
        seen.add(t.field);
      });
    }
    if (c.noise) {
      if (body.kind === 'chain') {
        ctx.addIssue({ code: 'custom', path: ['noise', 'kind'], message: 'drive noise is modelled for a single body, not a chain' });
      } else if (c.noise.bandwidth > MAX_NOISE_BANDWIDTH_RATIO * drive.frequency) {
        addBound(ctx, ['noise', 'bandwidth'], '<=', MAX_NOISE_BANDWIDTH_RATIO * drive.frequency, 'Hz',
          `the noise bandwidth may be at most ${MAX_NOISE_BANDWIDTH_RATIO} times the drive frequency`);
      }
    }
    if (body.kind === 'rod-bob') {
      const mass = body.rodMass + body.bobMass;
      if (mass <= 0) {
        ctx.addIssue({ code: 'custom', path: ['body', 'bobMass'], message: 'rod and bob masses are both zero: the body has no mass' });
        return;
      }
      if (body.rodMass * body.rodLength / 2 + body.bobMass * body.bobDistance <= 0) {
        ctx.addIssue({ code: 'custom', path: ['body', 'bobDistance'], message: 'centre of mass sits on the pivot: no pendulum' });
        return;
      }
    }
    if (body.kind === 'chain') {
      let bad = false;
      body.links.forEach((link, i) => {
        if (link.kind !== 'rod-bob') return;
        if (link.rodMass + link.bobMass <= 0) {
          ctx.addIssue({ code: 'custom', path: ['body', 'links', i, 'bobMass'], message: `link ${i + 1}: rod and bob masses are both zero: the link has no mass` });
          bad = true;
        } else if (link.rodMass * link.rodLength / 2 + link.bobMass * link.bobDistance <= 0) {
          ctx.addIssue({ code: 'custom', path: ['body', 'links', i, 'bobDistance'], message: `link ${i + 1}: centre of mass sits on its hinge` });
          bad = true;
        }
      });
      // The upright of a chain is analysed as an exact equilibrium, which needs a vertical drive line.
      if (Math.abs(drive.direction) > 0) {
        ctx.addIssue({ code: 'custom', path: ['drive', 'direction'], message: 'a chain is driven along the vertical only: set the drive direction to 0' });
      }
      const { viscousRatio, quadratic, friction } = c.damping;
      if (viscousRatio !== 0 || quadratic !== 0 || friction !== 0) {
        ctx.addIssue({ code: 'custom', path: ['damping', 'viscousRatio'], message: 'a chain is damped at each joint: set the case damping ratio, quadratic damping and friction to 0' });
      }
      if (bad) return;
    }
    if (drive.waveform.kind === 'crank-slider' && drive.waveform.connectingRod <= drive.amplitude) {
      ctx.addIssue({
        code: 'custom',
        path: ['drive', 'waveform', 'connectingRod'],
        message: `connecting rod (${drive.waveform.connectingRod} m) must be longer than the crank radius (${drive.amplitude} m)`,
      });
    }
    if (drive.ramp && drive.ramp.fromFrequency > drive.frequency) {
      ctx.addIssue({ code: 'custom', path: ['drive', 'ramp', 'fromFrequency'], message: 'ramp must rise: start frequency above the drive frequency' });
    }
    if (body.kind === 'measured-swing') {
      const omega0 = 2 * Math.PI * body.swingFrequency;
      if (c.gravity / (omega0 * omega0) > CASE_LIMITS.maxLength) {
        ctx.addIssue({ code: 'custom', path: ['body', 'swingFrequency'], message: 'swing this slow means an equivalent length above 100 m' });
        return;
      }
      const fastest = Math.sqrt(c.gravity / CASE_LIMITS.minLength) / (2 * Math.PI);
      if (body.swingFrequency > fastest) {
        addBound(ctx, ['body', 'swingFrequency'], '<=', fastest, 'Hz', 'a faster swing means an equivalent length below 1 mm');
        return;
      }
    }
    const L = bodyProperties(body, c.gravity).equivalentLength;
    if (!(L >= CASE_LIMITS.minLength)) {
      if (body.kind === 'rod-bob') {
        ctx.addIssue({ code: 'custom', path: ['body', 'bobDistance'], message: 'equivalent length below 1 mm: move the bob or the rod mass away from the pivot' });
      }
      return;
    }
    const swingHz = Math.sqrt(c.gravity / L) / (2 * Math.PI);
    const slowestDrive = CASE_LIMITS.minDriveToSwingRatio * swingHz;
    if (drive.frequency < slowestDrive) {
      addBound(ctx, ['drive', 'frequency'], '>=', slowestDrive, 'Hz', 'a drive slower than a tenth of the free swing has no slow motion to average');
    }
    const shortest = CASE_LIMITS.minDrivePeriods / drive.frequency;
    if (run.duration < shortest) {
      // A duration bound beyond the longest run would only mislead: then the frequency alone is at fault.
      if (shortest <= CASE_LIMITS.maxDuration) addBound(ctx, ['run', 'duration'], '>=', shortest, 's', `the run must span at least ${CASE_LIMITS.minDrivePeriods} drive periods`);
      addBound(ctx, ['drive', 'frequency'], '>=', CASE_LIMITS.minDrivePeriods / run.duration, 'Hz', `the run must span at least ${CASE_LIMITS.minDrivePeriods} drive periods`);
    }
    // The free swing needs no budget of its own: at most 15.8 Hz (1 mm) over the longest run stays within it.
    const longest = CASE_LIMITS.maxDrivePeriods / drive.frequency;
    if (run.duration > longest) {
      addBound(ctx, ['run', 'duration'], '<=', longest, 's', `a run may span at most ${CASE_LIMITS.maxDrivePeriods.toLocaleString('en')} drive periods`);
    }
  });

/** Which side of a limit a value must lie on. */
export type BoundRelation = '>=' | '>' | '<=' | '<';

const BOUND_WORDS: Readonly<Record<BoundRelation, string>> = { '>=': 'at least', '>': 'more than', '<=': 'at most', '<': 'less than' };

/** Words for a relation: "at least", "less than". */
export function boundWords(relation: BoundRelation): string {
  return BOUND_WORDS[relation];
}

/**
 * A limit on one field that depends on others, stated as a bound in SI (`params.bound`) with its reason, so each
 * client can say it in the unit it shows; `message` carries the same in SI for the API and the CLI.
 */
function addBound(ctx: z.RefinementCtx, path: string[], relation: BoundRelation, value: number, unit: string, reason: string): void {
  ctx.addIssue({
    code: 'custom',
    path,
    message: `must be ${BOUND_WORDS[relation]} ${Number(value.toPrecision(4))} ${unit}: ${reason}`,
    params: { bound: { relation, value }, reason },
  });
}

export type CaseParams = z.infer<typeof caseParamsSchema>;
/** Input shape before defaults are applied (gravity may be absent). */
export type CaseParamsInput = z.input<typeof caseParamsSchema>;
export type Body = CaseParams['body'];
export type ChainBody = Extract<Body, { kind: 'chain' }>;
export type ChainLink = ChainBody['links'][number];
export type Drive = CaseParams['drive'];
export type Waveform = Drive['waveform'];
export type HarmonicTerm = Extract<Waveform, { kind: 'harmonics' }>['terms'][number];
export type Damping = CaseParams['damping'];
export type RunSettings = CaseParams['run'];
export type Tolerance = NonNullable<CaseParams['tolerances']>[number];
export type DriveNoise = NonNullable<CaseParams['noise']>;
