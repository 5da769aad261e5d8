// The only importer of odex. Integrates one mode with the Gragg–Bulirsch–Stoer extrapolation
// code and finds events on its dense output, sampling inside each step so that a threshold
// crossed and re-crossed within one step is still seen.

import { Outcome, Solver } from '#odex';
import { locateRisingRoot } from './locate-root.js';
import type { SegmentIntegrator, SegmentProblem, SegmentResult, StateAt } from './segment.js';

export interface OdexSettings {
  stateSize: number;
  relativeTolerance: number;
  absoluteTolerance: readonly number[];
  /** Points inside each step at which event functions are sampled. */
  eventSamplesPerStep?: number;
  maxStepsPerSegment?: number;
  /** Highest extrapolation order (odex's KM, 9 by default); a lower order steps over kinks in the field more cheaply. */
  maxExtrapolationColumns?: number;
}

export class OdexSegmentIntegrator implements SegmentIntegrator {
  private readonly solver: Solver;
  private readonly samplesPerStep: number;
  private readonly size: number;

  constructor(settings: OdexSettings) {
    this.size = settings.stateSize;
    this.solver = new Solver(this.size);
    this.solver.denseOutput = true;
    this.solver.relativeTolerance = settings.relativeTolerance;
    this.solver.absoluteTolerance = [...settings.absoluteTolerance];
    this.solver.maxSteps = settings.maxStepsPerSegment ?? 200_000;
    if (settings.maxExtrapolationColumns !== undefined) this.solver.maxExtrapolationColumns = settings.maxExtrapolationColumns;
    this.samplesPerStep = settings.eventSamplesPerStep ?? 12;
  }

  integrate(problem: SegmentProblem): SegmentResult {
    const { events, observer } = problem;
    const n = this.size;
    const span = problem.tEnd - problem.t0;
    const solver = this.solver;
    solver.initialStepSize = Math.min(problem.initialStep, span);
    solver.maxStepSize = Math.min(problem.maxStep, span);
    // odex copies the returned values at once, so one array serves every call of this segment.
    const rates = new Array<number>(n);
    const field = problem.derivative;
    const derivative = (_t: number, y: number[]): number[] => field(y, rates);

    // The samples keep a density in time of samplesPerStep per maxStep (half the fastest ring): a
    // step cut short by accuracy needs fewer of them.
    const density = this.samplesPerStep / problem.maxStep;
    const probe = new Array<number>(n);
    const gPrev = new Array<number>(events.length);
    const gNow = new Array<number>(events.length);
    let lastStep = problem.initialStep;
    let hit: { t: number; x: number[]; index: number } | null = null;

    const onStep = (stepNumber: number, tOld: number, t: number, _y: number[], dense?: (c: number, x: number) => number): boolean | void => {
      if (stepNumber === 1 || !dense) return;
      const stateAt: StateAt = (tq, out) => {
        for (let i = 0; i < n; i++) out[i] = dense(i, tq);
      };
      if (events.length > 0) {
        const m = Math.min(this.samplesPerStep, Math.max(2, Math.ceil(density * (t - tOld))));
        stateAt(tOld, probe);
        for (let e = 0; e < events.length; e++) gPrev[e] = events[e]!(probe);
        let tA = tOld;
        for (let j = 1; j <= m && !hit; j++) {
          const tB = j === m ? t : tOld + ((t - tOld) * j) / m;
          stateAt(tB, probe);
          let best = Infinity, bestIndex = -1;
          for (let e = 0; e < events.length; e++) {
            gNow[e] = events[e]!(probe);
            if (gPrev[e]! < 0 && gNow[e]! >= 0) {
              const g = events[e]!;
              const root = locateRisingRoot((tq) => { stateAt(tq, probe); return g(probe); },
                tA, tB, gPrev[e]!, gNow[e]!, 1e-13 * Math.max(1, Math.abs(tB)));
              if (root < best) { best = root; bestIndex = e; }
            }
          }
          if (bestIndex >= 0) {
            const x = new Array<number>(n);
            stateAt(best, x);
            hit = { t: best, x, index: bestIndex };
          }
          for (let e = 0; e < events.length; e++) gPrev[e] = gNow[e]!;
          tA = tB;
        }
      }
      if (hit) {
        observer?.(tOld, hit.t, stateAt);
        return false;
      }
      lastStep = t - tOld;
      observer?.(tOld, t, stateAt);
    };

    const result = solver.solve(derivative, problem.t0, [...problem.x0], problem.tEnd, onStep);
    const stats = { evaluations: result.nEval, steps: result.nStep, lastStep };
    const found = hit as { t: number; x: number[]; index: number } | null;
    if (found) return { status: 'event', t: found.t, x: found.x, eventIndex: found.index, ...stats };
    if (result.outcome !== Outcome.Converged) {
      return {
        status: 'failed', t: problem.t0, x: [...problem.x0], eventIndex: -1, ...stats,
        message: result.outcome === Outcome.MaxStepsExceeded
          ? `the solver exceeded ${solver.maxSteps} steps in one segment`
          : 'the solver stopped early',
      };
    }
    if (!result.y.every(Number.isFinite)) {
      return { status: 'failed', t: problem.t0, x: [...problem.x0], eventIndex: -1, ...stats, message: 'the state became non-finite' };
    }
    return { status: 'reached-end', t: problem.tEnd, x: result.y, eventIndex: -1, ...stats };
  }
}
