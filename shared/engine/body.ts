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
 * - chain: the chain with its joints locked straight (a rigid body; chainLinkProperties per link, parallel axes).
 *   It sets the scales the schema and the scans use (length, swing frequency); the chain's own slowest swing is
 *   slower (docs/physics.md, "Chains").
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
      mass = 0;
      let moment = 0;
      inertia = 0;
      let hinge = 0;
      for (const link of body.links.map(chainLinkProperties)) {
        mass += link.mass;
        moment += link.mass * (hinge + link.comDistance);
        // about the pivot: I_hinge + m ((H + c)^2 - c^2)
        inertia += link.inertia + link.mass * hinge * (hinge + 2 * link.comDistance);
        hinge += link.length;
      }
      comDistance = moment / mass;
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
