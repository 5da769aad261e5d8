// Hand-written declaration for the parts of odex 2.0.4 we use: the package's own
// src/odex.ts does not pass `strict`, so the "#odex" import maps types here.
export type Derivative = (x: number, y: number[]) => number[];
export type DenseInterpolator = (component: number, x: number) => number;
export type OutputFunction = (
  stepNumber: number,
  xOld: number,
  x: number,
  y: number[],
  dense?: DenseInterpolator,
) => boolean | void;

export declare enum Outcome {
  Converged = 0,
  MaxStepsExceeded = 1,
  EarlyReturn = 2,
}

export interface SolveResult {
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
  maxSteps: number;
  initialStepSize: number;
  maxStepSize: number;
  maxExtrapolationColumns: number;
  denseOutput: boolean;
  relativeTolerance: number | number[];
  absoluteTolerance: number | number[];
  solve(f: Derivative, x: number, y0: number[], xEnd: number, solOut?: OutputFunction): SolveResult;
}
