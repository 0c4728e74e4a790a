import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import { describe, expect, it } from 'vitest';
import { templateCase, type CaseParams } from '../../shared/case';
import type { ChainLink } from '../../shared/case/case-schema';
import { bodyProperties, chainLinkProperties } from '../../shared/engine/body';
import { chainModel, chainUprightLinearisation, chainUprightMonodromy } from '../../shared/engine/chain';
import { driveKinematics } from '../../shared/engine/drive';
import { driveLimits, uprightMotion } from '../../shared/engine/floquet';
import { highFrequencyUpperQ } from '../../shared/engine/mathieu';
import { modulus } from '../../shared/engine/monodromy';
import { simulateMotion } from '../../shared/engine/motion';
import { expectNear, expectRelative } from './check';

const G = 9.80665;

function pointLink(length: number, mass: number, jointDamping = 0): ChainLink {
  return { kind: 'point-mass', length, mass, jointDamping };
}

function chainCase(links: ChainLink[], amplitude: number, frequency: number, extra: Partial<CaseParams> = {}): CaseParams {
  const c = templateCase();
  return {
    ...c,
    body: { kind: 'chain', links },
    drive: { ...c.drive, amplitude, frequency },
    damping: { ...c.damping, viscousRatio: 0 },
    ...extra,
  };
}

/** Generalised eigenvalues lambda of M0 x = lambda D x for D diagonal positive, through D^-1/2 M0 D^-1/2 (symmetric). */
function generalisedEigenvalues(m0: number[][], d: number[]): number[] {
  const s = m0.map((row, i) => row.map((v, j) => v / Math.sqrt(d[i] * d[j])));
  return new EigenvalueDecomposition(new Matrix(s), { assumeSymmetric: true }).realEigenvalues.slice().sort((a, b) => a - b);
}

describe('chains of links on a vibrating pivot', () => {
  it('a one-link chain has the single body\'s multipliers to 1e-12 (same Lagrangian for N = 1; docs/physics.md, Chains)', () => {
    const c = templateCase();
    const bodies: Array<Extract<CaseParams['body'], { kind: 'point-mass' | 'rod-bob' }>> = [
      { kind: 'point-mass', length: 0.2, mass: 0.1 },
      { kind: 'rod-bob', rodLength: 0.3, rodMass: 0.05, bobMass: 0.02, bobRadius: 0.01, bobDistance: 0.25 },
    ];
    for (const body of bodies) {
      for (const [amplitude, frequency, zeta] of [[0.01, 40, 0.01], [0.02, 25, 0], [0.004, 90, 0.05]]) {
        const single: CaseParams = { ...c, body, drive: { ...c.drive, amplitude, frequency }, damping: { ...c.damping, viscousRatio: zeta } };
        const props = bodyProperties(body, G);
        // the single body's viscous term 2 zeta omega0 theta' is a joint damping b = 2 zeta omega0 I
        const link: ChainLink = { ...body, jointDamping: 2 * zeta * props.naturalFrequency * props.inertia };
        const model = chainModel([chainLinkProperties(link)], G, driveKinematics(single.drive));
        const { K } = chainUprightLinearisation(model);
        expectRelative(K[0], 1 / props.equivalentLength, 1e-15, 'N = 1 stiffness mu / a_11 = 1 / L');
        const reference = uprightMotion(single);
        if (!reference) throw new Error('no upright');
        const rows = chainUprightMonodromy(model, single.run.strobePhase / model.drive.omega, model.drive.period);
        const values = new EigenvalueDecomposition(new Matrix(rows));
        const got = values.realEigenvalues.map((re, i) => ({ re, im: values.imaginaryEigenvalues[i] })).sort((p, q) => modulus(q) - modulus(p) || q.im - p.im);
        const want = reference.multipliers.slice().sort((p, q) => modulus(q) - modulus(p) || q.im - p.im);
        got.forEach((z, i) => {
          expectNear(z.re, want[i].re, 1e-12, `${body.kind} a=${amplitude} f=${frequency}: multiplier ${i} (real part)`);
          expectNear(z.im, want[i].im, 1e-12, `${body.kind} a=${amplitude} f=${frequency}: multiplier ${i} (imaginary part)`);
        });
      }
    }
  });

  it('the undriven double pendulum of equal point masses on equal light rods swings at w^2 = (g/l)(2 -/+ sqrt 2) (textbook normal modes, e.g. Goldstein, Classical Mechanics; from memory)', () => {
    const l = 0.25;
    const model = chainModel([chainLinkProperties(pointLink(l, 0.1)), chainLinkProperties(pointLink(l, 0.1))], G, driveKinematics(templateCase().drive));
    // hanging down, theta'' = -g K theta: the squared frequencies are g times the eigenvalues of K
    const { K } = chainUprightLinearisation(model);
    const k = new EigenvalueDecomposition(new Matrix([[K[0], K[1]], [K[2], K[3]]])).realEigenvalues.map((v) => G * v).sort((a, b) => a - b);
    expectRelative(k[0], (G / l) * (2 - Math.SQRT2), 1e-14, 'slow mode w^2 = (g/l)(2 - sqrt 2)');
    expectRelative(k[1], (G / l) * (2 + Math.SQRT2), 1e-14, 'fast mode w^2 = (g/l)(2 + sqrt 2)');
    // the chain's equivalent length is that of its slowest swing
    const props = bodyProperties({ kind: 'chain', links: [pointLink(l, 0.1), pointLink(l, 0.1)] }, G);
    expectRelative(props.naturalFrequency ** 2, (G / l) * (2 - Math.SQRT2), 1e-14, 'bodyProperties: slowest swing');

    // The full nonlinear motion, started small in the slow mode shape (theta2 = sqrt 2 theta1), swings at that frequency.
    const eps = 1e-4;
    const slow = Math.sqrt((G / l) * (2 - Math.SQRT2));
    const duration = 20 * (2 * Math.PI / slow);
    const c = chainCase([pointLink(l, 0.1), { ...pointLink(l, 0.1), startBend: (Math.SQRT2 - 1) * eps }], 0, 10, {
      start: { angle: Math.PI + eps, rate: 0 },
      run: { ...templateCase().run, duration, outputPoints: 20001, rtol: 1e-11, atol: 1e-13 },
    });
    const m = simulateMotion(c);
    const chain = m.chain;
    if (!chain) throw new Error('no chain series');
    // upward crossings of theta1 through pi, refined linearly
    const t = m.series.t;
    const th = chain.theta[0];
    const crossings: number[] = [];
    for (let i = 1; i < t.length; i++) {
      const a = th[i - 1] - Math.PI;
      const b = th[i] - Math.PI;
      if (a < 0 && b >= 0) crossings.push(t[i - 1] + (t[i] - t[i - 1]) * (-a / (b - a)));
    }
    const period = (crossings[crossings.length - 1] - crossings[0]) / (crossings.length - 1);
    expectRelative(2 * Math.PI / period, slow, 1e-5, 'nonlinear run in the slow mode: swing frequency');
  });

  it('energy of the undamped, undriven double chain is conserved to the integrator tolerance over 100 swings (energy conservation of a conservative Lagrangian system)', () => {
    const links: ChainLink[] = [
      { kind: 'rod-bob', rodLength: 0.2, rodMass: 0.05, bobMass: 0.02, bobRadius: 0.01, bobDistance: 0.2, jointDamping: 0 },
      { ...pointLink(0.15, 0.03), startBend: 0.4, startBendRate: 1 },
    ];
    const swing = bodyProperties({ kind: 'chain', links }, G).swingFrequencyHz;
    const drift = (rtol: number): number => {
      const c = chainCase(links, 0, 10, {
        start: { angle: Math.PI - 0.5, rate: 0 },
        run: { ...templateCase().run, duration: 100 / swing, outputPoints: 5000, rtol, atol: rtol / 100 },
      });
      const m = simulateMotion(c);
      expect(m.status).toBe('completed');
      const e = m.series.energy;
      let worst = 0;
      for (const v of e) worst = Math.max(worst, Math.abs(v - e[0]));
      return worst / e[0];
    };
    const loose = drift(1e-10);
    const tight = drift(1e-12);
    // The drift is integration error only: it falls with the tolerance (a non-conservative term in the equations
    // would leave a floor), and stays within a few thousand times the per-step tolerance over 100 swings.
    expect(loose, `relative drift at rtol 1e-10: ${loose}`).toBeLessThan(5e-5);
    expect(tight, `relative drift at rtol 1e-12: ${tight}`).toBeLessThan(5e-7);
    expect(tight).toBeLessThan(loose / 50);
  });

  it('joint damping removes energy from the undriven chain (Rayleigh dissipation)', () => {
    const c = chainCase([pointLink(0.2, 0.1, 0.002), pointLink(0.2, 0.1, 0.002)], 0, 10, {
      start: { angle: Math.PI - 0.3, rate: 0 },
      run: { ...templateCase().run, duration: 10, outputPoints: 500 },
    });
    const e = simulateMotion(c).series.energy;
    for (let i = 1; i < e.length; i++) expect(e[i]).toBeLessThanOrEqual(e[i - 1] * (1 + 1e-9));
    expect(e[e.length - 1]).toBeLessThan(0.5 * e[0]);
  });

  // Acheson (1993), "A pendulum theorem", Proc. R. Soc. Lond. A 443, 239-245, cited from memory (see docs/physics.md, Chains): at high frequency
  // the upright N-link pendulum on a vertically vibrated pivot is stable when a w exceeds a lower bound given by
  // averaging the linearised equations, a^2 w^2 > 2 g lambda_max with lambda_max = g / Omega_min^2, Omega_min the
  // slowest small free swing of the hanging chain (i.e. a w > sqrt(2) g / Omega_min). Compared here: the exact
  // (Floquet) lower frequency limit at a / l = 0.01 against that bound, to 0.5 % (corrections are O((a/l)^2) and
  // O(g / (l w^2)) ~ 1e-3).
  for (const links of [2, 3]) {
    it(`the upright ${links}-link chain's lower frequency limit matches the averaged criterion a w > sqrt(2) g / Omega_min (Acheson, Proc. R. Soc. Lond. A 443 (1993) 239; from memory)`, () => {
      const l = 0.2;
      const m = 0.05;
      const a = 0.002;
      const chain = chainCase(Array.from({ length: links }, () => pointLink(l, m)), a, 200, {
        run: { ...templateCase().run, duration: 1 },
      });
      // independent of the engine: M0_ij = m l^2 (N - max(i, j)), D = diag(mu_i) = m l (N - i) (0-based i)
      const m0 = Array.from({ length: links }, (_, i) => Array.from({ length: links }, (_, j) => m * l * l * (links - Math.max(i, j))));
      const d = Array.from({ length: links }, (_, i) => m * l * (links - i));
      const lambdaMax = Math.max(...generalisedEigenvalues(m0, d));
      const averaged = Math.sqrt(2 * G * lambdaMax) / a / (2 * Math.PI);
      const lower = driveLimits(chain, 'drive.frequency', 1e-7).lower ?? NaN;
      expectRelative(lower, averaged, 5e-3, `${links} links: Floquet lower limit ${lower} Hz vs averaged ${averaged} Hz`);
      if (links === 2) expectRelative(lambdaMax, l * (1 + Math.SQRT1_2), 1e-14, 'two equal point masses: lambda_max = l (1 + 1/sqrt 2)');
    });
  }

  it('below the lower limit the mode that grows is the slowest hanging swing, theta2 = sqrt 2 theta1 for two equal point masses (generalised eigenvector of M0 x = lambda D x, docs/physics.md Chains)', () => {
    const l = 0.2;
    const a = 0.002;
    const lambdaMax = l * (1 + Math.SQRT1_2);
    const lower = Math.sqrt(2 * G * lambdaMax) / a / (2 * Math.PI);
    const below = uprightMotion(chainCase([pointLink(l, 0.05), pointLink(l, 0.05)], a, 0.97 * lower, { run: { ...templateCase().run, duration: 1 } }));
    const top = below?.modes?.[0];
    if (!top) throw new Error('no modes');
    expect(top.multiplier.im).toBe(0);
    expect(top.multiplier.re).toBeGreaterThan(1);
    expectNear(top.shape[0], Math.SQRT1_2, 5e-3, 'link angles 1 : sqrt 2 in the growing mode');
    expect(top.shape[1]).toBe(1);
    expect(below?.multipliers).toHaveLength(4);
  });

  // Acheson (1993), cited from memory: without damping the linearised chain splits into its normal modes, each a
  // single pendulum of length lambda_k (the roots of det(M0 - lambda D) = 0), so the upright chain holds exactly when
  // every one of those pendulums would hold. Compared: the chain's multipliers against the single bodies' (Magnus),
  // and the high-frequency upper amplitude limit against Butikov's a/L = 0.454 for the shortest lambda.
  it('the undamped chain\'s multipliers are those of single pendulums of the modal lengths lambda_k (Acheson, Proc. R. Soc. Lond. A 443 (1993) 239; from memory)', () => {
    const l = 0.2;
    for (const links of [2, 3]) {
      const m0 = Array.from({ length: links }, (_, i) => Array.from({ length: links }, (_, j) => 0.05 * l * l * (links - Math.max(i, j))));
      const d = Array.from({ length: links }, (_, i) => 0.05 * l * (links - i));
      const lambdas = generalisedEigenvalues(m0, d);
      const chain = chainCase(Array.from({ length: links }, () => pointLink(l, 0.05)), 0.008, 60);
      const got = uprightMotion(chain)?.multipliers ?? [];
      const want = lambdas.flatMap((length) => {
        const single: CaseParams = { ...chain, body: { kind: 'point-mass', length, mass: 0.1 } };
        return uprightMotion(single)?.multipliers ?? [];
      });
      const key = (z: { re: number; im: number }) => [z.re, z.im] as const;
      const sortBy = (zs: Array<{ re: number; im: number }>) => zs.map(key).sort((p, q) => p[0] - q[0] || p[1] - q[1]);
      const [g, w] = [sortBy(got), sortBy(want)];
      expect(g).toHaveLength(2 * links);
      g.forEach((z, i) => {
        expectNear(z[0], w[i][0], 1e-9, `${links} links: multiplier ${i} real part vs the modal pendulum's`);
        expectNear(z[1], w[i][1], 1e-9, `${links} links: multiplier ${i} imaginary part vs the modal pendulum's`);
      });
    }
  });

  it('the upright double chain\'s upper amplitude limit at high frequency is a = 0.454 lambda_min (Acheson 1993, from memory, with Butikov, Am. J. Phys. 69, 755 (2001))', () => {
    const l = 0.2;
    const lambdaMin = l * (1 - Math.SQRT1_2);
    const chain = chainCase([pointLink(l, 0.05), pointLink(l, 0.05)], 0.02, 2000, { run: { ...templateCase().run, duration: 0.1 } });
    const upper = driveLimits(chain, 'drive.amplitude', 1e-7).upper ?? NaN;
    expectNear(upper / lambdaMin, highFrequencyUpperQ() / 2, 1e-4, 'a_upper / lambda_min vs q*/2 = 0.454');
  });
});
