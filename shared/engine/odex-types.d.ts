// odex ships TypeScript source without declarations, and that source does not pass strict checks (nor lib ES2022
// without dom). TypeScript resolves 'odex' to that source before any ambient `declare module`, so tsconfigs map
// it here with `"paths": { "odex": ["<rel>/shared/engine/odex-types"] }` (extensionless on purpose: TypeScript
// finds this .d.ts, while esbuild-based resolvers find no .ts/.js there and fall back to node_modules).
export type Derivative = (x: number, y: number[]) => number[];
export type OutputFunction = (
  nr: number,
  xold: number,
  x: number,
  y: number[],
  dense?: (component: number, x: number) => number,
) => boolean | void;

export declare enum Outcome {
  Converged = 0,
  MaxStepsExceeded = 1,
  EarlyReturn = 2,
}

export interface SolverResult {
  y: number[];
  outcome: Outcome;
  nStep: number;
  xEnd: number;
  nAccept: number;
  nReject: number;
  nEval: number;
}

export declare class Solver {
  constructor(n: number);
  n: number;
  uRound: number;
  maxSteps: number;
  initialStepSize: number;
  maxStepSize: number;
  maxExtrapolationColumns: number;
  stepSizeSequence: number;
  stabilityCheckCount: number;
  stabilityCheckTableLines: number;
  denseOutput: boolean;
  denseOutputErrorEstimator: boolean;
  denseComponents: number[] | undefined;
  interpolationFormulaDegree: number;
  stepSizeReductionFactor: number;
  stepSizeFac1: number;
  stepSizeFac2: number;
  stepSizeFac3: number;
  stepSizeFac4: number;
  stepSafetyFactor1: number;
  stepSafetyFactor2: number;
  relativeTolerance: number | number[];
  absoluteTolerance: number | number[];
  debug: boolean;
  grid(dt: number, out: (xOut: number, yOut: number[]) => unknown): OutputFunction;
  solve(f: Derivative, x: number, y0: number[], xEnd: number, solOut?: OutputFunction): SolverResult;
}
