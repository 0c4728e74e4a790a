import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import type { Body, ChainLink } from '../case/case-schema';

export interface BodyProperties {
  /** kg */
  mass: number;
  /** m: pivot to centre of mass */
  comDistance: number;
  /** kg m^2: about the pivot */
  inertia: number;
  /** m: L = I / (m d), the length of the point pendulum with the same swing */
  equivalentLength: number;
  /** rad/s: sqrt(g / L), small free swing hanging down */
  naturalFrequency: number;
  /** Hz */
  swingFrequencyHz: number;
}

/**
 * Mass, centre-of-mass distance, moment of inertia about the pivot and equivalent length of a rigid body.
 *
 * Method (rigid/physical pendulum, any mechanics handbook): L = I / (m d).
 * - point mass: d = L = length, I = m L^2.
 * - rod-bob: uniform rod hinged at one end, I = m_r l^2 / 3 with its centre at l/2, plus a solid sphere of radius R
 *   centred at D: I = (2/5) m_b R^2 + m_b D^2 (parallel axes).
 * - measured-swing: L = g / (2 pi f)^2 from the small free swing frequency f; modelled as a point mass at L.
 * - chain: the pendulum equivalent to the chain's slowest small free swing hanging down: L = lambda_max, the
 *   largest root of det(M0 - lambda D) = 0 (M0 the mass matrix at rest, D = diag(mu); docs/physics.md, "Chains"),
 *   so sqrt(g / L) is that swing and the averaged lower limit <s'^2> = g L is the chain's (Acheson's bound). Mass is
 *   the total, the centre of mass that of the straight chain, and I = m d L keeps L = I / (m d).
 */
export function bodyProperties(body: Body, g: number): BodyProperties {
  let mass: number;
  let comDistance: number;
  let inertia: number;
  switch (body.kind) {
    case 'point-mass':
      mass = body.mass;
      comDistance = body.length;
      inertia = body.mass * body.length * body.length;
      break;
    case 'rod-bob':
      mass = body.rodMass + body.bobMass;
      comDistance = (body.rodMass * body.rodLength * 0.5 + body.bobMass * body.bobDistance) / mass;
      inertia =
        (body.rodMass * body.rodLength * body.rodLength) / 3 +
        0.4 * body.bobMass * body.bobRadius * body.bobRadius +
        body.bobMass * body.bobDistance * body.bobDistance;
      break;
    case 'measured-swing': {
      const w = 2 * Math.PI * body.swingFrequency;
      mass = body.mass;
      comDistance = g / (w * w);
      inertia = mass * comDistance * comDistance;
      break;
    }
    case 'chain': {
      const slowest = chainSlowestLength(body.links.map(chainLinkProperties));
      mass = slowest.mass;
      comDistance = slowest.firstMoment / mass;
      inertia = mass * comDistance * slowest.length;
      break;
    }
  }
  const equivalentLength = inertia / (mass * comDistance);
  const naturalFrequency = Math.sqrt(g / equivalentLength);
  return { mass, comDistance, inertia, equivalentLength, naturalFrequency, swingFrequencyHz: naturalFrequency / (2 * Math.PI) };
}

/** One chain link as a rigid body about its inner hinge (the one towards the pivot). */
export interface ChainLinkProperties {
  /** kg */
  mass: number;
  /** m: inner hinge to centre of mass */
  comDistance: number;
  /** kg m^2: about the inner hinge */
  inertia: number;
  /** m: inner hinge to outer hinge (the next link's pivot) */
  length: number;
  /** N m s/rad: viscous damping of the joint above the link */
  jointDamping: number;
}

/** A chain link's mass, centre of mass and inertia about its inner hinge (as the single bodies above). */
export function chainLinkProperties(link: ChainLink): ChainLinkProperties {
  if (link.kind === 'point-mass') {
    return { mass: link.mass, comDistance: link.length, inertia: link.mass * link.length * link.length, length: link.length, jointDamping: link.jointDamping };
  }
  const { rodLength, rodMass, bobMass, bobRadius, bobDistance } = link;
  const mass = rodMass + bobMass;
  return {
    mass,
    comDistance: (rodMass * rodLength * 0.5 + bobMass * bobDistance) / mass,
    inertia: (rodMass * rodLength * rodLength) / 3 + 0.4 * bobMass * bobRadius * bobRadius + bobMass * bobDistance * bobDistance,
    length: rodLength,
    jointDamping: link.jointDamping,
  };
}

/**
 * Length of the pendulum with the chain's slowest small free swing: the largest generalised eigenvalue of
 * M0 x = lambda D x, from the symmetric D^-1/2 M0 D^-1/2 (ml-matrix: arithmetic and sqrt only, the same bits in every
 * runtime). M0 and mu as in chain.ts. Also the total mass and the straight chain's first moment sum(mu).
 */
export function chainSlowestLength(links: readonly ChainLinkProperties[]): { length: number; mass: number; firstMoment: number } {
  const n = links.length;
  const beyond = new Array<number>(n + 1).fill(0);
  for (let i = n - 1; i >= 0; i--) beyond[i] = beyond[i + 1] + links[i].mass;
  const mu = links.map((link, i) => link.mass * link.comDistance + link.length * beyond[i + 1]);
  const rows = links.map((li, i) =>
    links.map((_, j) => {
      const a = i === j ? li.inertia + li.length * li.length * beyond[i + 1] : links[Math.min(i, j)].length * mu[Math.max(i, j)];
      return a / Math.sqrt(mu[i] * mu[j]);
    }),
  );
  const lambda = new EigenvalueDecomposition(new Matrix(rows), { assumeSymmetric: true }).realEigenvalues;
  return { length: Math.max(...lambda), mass: beyond[0], firstMoment: mu.reduce((sum, m) => sum + m, 0) };
}
