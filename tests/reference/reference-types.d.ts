// Declarations for the reference libraries the engine is checked against (they ship no TypeScript types).
declare module 'ode45-cash-karp' {
  interface CashKarpIntegrator {
    y: number[];
    t: number;
    dt: number;
    step(tLimit?: number): boolean;
    steps(n: number, tLimit?: number): boolean;
  }
  function ode45(
    y0: number[],
    deriv: (dydt: number[], y: number[], t: number) => void,
    t0: number,
    dt0: number,
    options?: { tol?: number; dtMaxMag?: number; dtMinMag?: number; verbose?: boolean },
  ): CashKarpIntegrator;
  export = ode45;
}
