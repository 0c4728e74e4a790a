import { CASE_SCHEMA_VERSION, STANDARD_GRAVITY, type CaseParams } from './case-schema';

/** A complete, valid case: a 20 cm point mass held upright by a 10 mm, 40 Hz vertical sine drive. */
export function templateCase(): CaseParams {
  return {
    schemaVersion: CASE_SCHEMA_VERSION,
    body: { kind: 'point-mass', length: 0.2, mass: 0.1 },
    drive: { direction: 0, amplitude: 0.01, frequency: 40, waveform: { kind: 'sine' } },
    damping: { viscousRatio: 0.01, quadratic: 0, friction: 0, frictionSmoothing: 0.01 },
    start: { angle: 0.1, rate: 0 },
    gravity: STANDARD_GRAVITY,
    run: { duration: 20, rtol: 1e-8, atol: 1e-10, outputPoints: 4000, strobePhase: 0, transientFraction: 0.5 },
  };
}

export interface DemoRig {
  id: string;
  title: string;
  description: string;
  /** Outcome the demo is built to show (for a chain: every link's). */
  expectedOutcome: 'holds-upright' | 'settles-tilted';
  params: CaseParams;
}

/** Invented demonstration rigs. Each call returns fresh objects so callers may not share state by accident. */
export const DEMO_RIGS: readonly DemoRig[] = [
  {
    id: 'bench-crank-rig',
    title: 'Bench rig: motor and crank',
    description:
      'A 20 cm rod with a 50 g ball near its tip on a slider driven by a 20 mm crank and a 100 mm connecting rod at 25 rev/s; the upright holds.',
    expectedOutcome: 'holds-upright',
    params: {
      schemaVersion: CASE_SCHEMA_VERSION,
      body: { kind: 'rod-bob', rodLength: 0.2, rodMass: 0.02, bobMass: 0.05, bobRadius: 0.01, bobDistance: 0.18 },
      drive: { direction: 0, amplitude: 0.02, frequency: 25, waveform: { kind: 'crank-slider', connectingRod: 0.1 } },
      damping: { viscousRatio: 0.02, quadratic: 0.01, friction: 0.2, frictionSmoothing: 0.05 },
      start: { angle: 0.15, rate: 0 },
      gravity: STANDARD_GRAVITY,
      run: { duration: 10, rtol: 1e-8, atol: 1e-10, outputPoints: 4000, strobePhase: 0, transientFraction: 0.5 },
    },
  },
  {
    id: 'shaker-tall-rod',
    title: 'Tall rod on an electrodynamic shaker',
    description:
      'A 50 cm uniform rod hinged at its foot on a long-stroke shaker, 8 mm at 60 Hz (about 116 g peak); the upright holds with a modest margin.',
    expectedOutcome: 'holds-upright',
    params: {
      schemaVersion: CASE_SCHEMA_VERSION,
      body: { kind: 'rod-bob', rodLength: 0.5, rodMass: 0.1, bobMass: 0, bobRadius: 0, bobDistance: 0 },
      drive: { direction: 0, amplitude: 0.008, frequency: 60, waveform: { kind: 'sine' } },
      damping: { viscousRatio: 0.01, quadratic: 0, friction: 0, frictionSmoothing: 0.01 },
      start: { angle: 0.1, rate: 0 },
      gravity: STANDARD_GRAVITY,
      // 16 s: the slow swing (about 0.54 Hz) fits 4 times into the judged second half, so it is measured.
      run: { duration: 16, rtol: 1e-8, atol: 1e-10, outputPoints: 4000, strobePhase: 0, transientFraction: 0.5 },
    },
  },
  {
    id: 'horizontal-arm',
    title: 'Horizontally shaken arm',
    description:
      'A 25 cm arm shaken sideways, 10 mm at 40 Hz; starting near hanging down it swings out and settles tilted about 39 degrees from the downward vertical.',
    expectedOutcome: 'settles-tilted',
    params: {
      schemaVersion: CASE_SCHEMA_VERSION,
      body: { kind: 'point-mass', length: 0.25, mass: 0.2 },
      drive: { direction: Math.PI / 2, amplitude: 0.01, frequency: 40, waveform: { kind: 'sine' } },
      damping: { viscousRatio: 0.05, quadratic: 0, friction: 0, frictionSmoothing: 0.01 },
      start: { angle: Math.PI - 0.1, rate: 0 },
      gravity: STANDARD_GRAVITY,
      run: { duration: 12, rtol: 1e-8, atol: 1e-10, outputPoints: 4000, strobePhase: 0, transientFraction: 0.6 },
    },
  },
  {
    id: 'two-link-shaker',
    title: 'Two hinged rods on a shaker',
    description:
      'A 20 cm rod with a 15 cm rod hinged on its tip, 10 mm at 50 Hz vertical; both links stay upright, inside an amplitude window of about 6.8 to 16.7 mm.',
    expectedOutcome: 'holds-upright',
    params: {
      schemaVersion: CASE_SCHEMA_VERSION,
      body: {
        kind: 'chain',
        links: [
          { kind: 'rod-bob', rodLength: 0.2, rodMass: 0.03, bobMass: 0, bobRadius: 0, bobDistance: 0, jointDamping: 2e-4 },
          { kind: 'rod-bob', rodLength: 0.15, rodMass: 0.02, bobMass: 0, bobRadius: 0, bobDistance: 0, jointDamping: 2e-4, startBend: 0.05 },
        ],
      },
      drive: { direction: 0, amplitude: 0.01, frequency: 50, waveform: { kind: 'sine' } },
      damping: { viscousRatio: 0, quadratic: 0, friction: 0, frictionSmoothing: 0.01 },
      start: { angle: 0.05, rate: 0 },
      gravity: STANDARD_GRAVITY,
      run: { duration: 10, rtol: 1e-8, atol: 1e-10, outputPoints: 4000, strobePhase: 0, transientFraction: 0.5 },
    },
  },
  {
    id: 'three-link-beads',
    title: 'Three beads on light hinged links',
    description:
      'Three 50 g masses on 10 cm light links, 5 mm at 100 Hz vertical; the zigzag start settles back upright, inside an amplitude window of about 3.5 to 7.3 mm.',
    expectedOutcome: 'holds-upright',
    params: {
      schemaVersion: CASE_SCHEMA_VERSION,
      body: {
        kind: 'chain',
        links: [
          { kind: 'point-mass', length: 0.1, mass: 0.05, jointDamping: 2e-4 },
          { kind: 'point-mass', length: 0.1, mass: 0.05, jointDamping: 2e-4, startBend: -0.04 },
          { kind: 'point-mass', length: 0.1, mass: 0.05, jointDamping: 2e-4, startBend: 0.04 },
        ],
      },
      drive: { direction: 0, amplitude: 0.005, frequency: 100, waveform: { kind: 'sine' } },
      damping: { viscousRatio: 0, quadratic: 0, friction: 0, frictionSmoothing: 0.01 },
      start: { angle: 0.05, rate: 0 },
      gravity: STANDARD_GRAVITY,
      run: { duration: 10, rtol: 1e-8, atol: 1e-10, outputPoints: 4000, strobePhase: 0, transientFraction: 0.5 },
    },
  },
];

/** A deep copy of a demo rig's parameters by id, or undefined. */
export function demoRigCase(id: string): CaseParams | undefined {
  const rig = DEMO_RIGS.find((r) => r.id === id);
  return rig ? (JSON.parse(JSON.stringify(rig.params)) as CaseParams) : undefined;
}
