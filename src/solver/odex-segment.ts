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
  private readonly settings: OdexSettings;
  private readonly samplesPerStep: number;
  private readonly size: number;
  /**
   * One solver per set of moving components: odex's work per step (the extrapolation tableau, the
   * error norm, the dense output) grows with the components it carries, and a mode moves 3 to 7 of
   * a real-part circuit's 10 (bias-48v's bare variant: the currents and the drain).
   */
  private readonly solvers = new Map<string, Solver>();

  constructor(settings: OdexSettings) {
    this.settings = settings;
    this.size = settings.stateSize;
    this.samplesPerStep = settings.eventSamplesPerStep ?? 12;
  }

  private solverFor(moving: readonly number[]): Solver {
    const key = moving.join(',');
    let solver = this.solvers.get(key);
    if (!solver) {
      const s = this.settings;
      solver = new Solver(moving.length);
      solver.denseOutput = true;
      // odex's error norm is a root mean square over the components it carries; the components
      // left out had no error, so widening the tolerances by √(n/m) accepts exactly the steps the
      // whole state did.
      const widen = Math.sqrt(this.size / moving.length);
      solver.relativeTolerance = s.relativeTolerance * widen;
      solver.absoluteTolerance = moving.map((i) => s.absoluteTolerance[i]! * widen);
      solver.maxSteps = s.maxStepsPerSegment ?? 200_000;
      if (s.maxExtrapolationColumns !== undefined) solver.maxExtrapolationColumns = s.maxExtrapolationColumns;
      this.solvers.set(key, solver);
    }
    return solver;
  }

  integrate(problem: SegmentProblem): SegmentResult {
    const { events, observer } = problem;
    const n = this.size;
    const moving = problem.moving && problem.moving.length > 0 ? problem.moving : allComponents(n);
    const m = moving.length;
    const span = problem.tEnd - problem.t0;
    const solver = this.solverFor(moving);
    solver.initialStepSize = Math.min(problem.initialStep, span);
    solver.maxStepSize = Math.min(problem.maxStep, span);
    // The full state the field reads: the components odex does not carry keep x0's values.
    const full = [...problem.x0];
    const rates = new Array<number>(n);
    const reduced = new Array<number>(m);
    const field = problem.derivative;
    // odex copies the returned values at once, so one array serves every call of this segment.
    const derivative = (_t: number, y: number[]): number[] => {
      for (let k = 0; k < m; k++) full[moving[k]!] = y[k]!;
      field(full, rates);
      for (let k = 0; k < m; k++) reduced[k] = rates[moving[k]!]!;
      return reduced;
    };
    const expand = (y: readonly number[], out: number[]): number[] => {
      for (let i = 0; i < n; i++) out[i] = problem.x0[i]!;
      for (let k = 0; k < m; k++) out[moving[k]!] = y[k]!;
      return out;
    };

    // The samples keep a density in time of samplesPerStep per maxStep (half the fastest ring): a
    // step cut short by accuracy needs fewer of them. A step's end values are the ones odex
    // accepted, and its start values the previous end's, so only the inner samples use the dense output.
    const density = this.samplesPerStep / problem.maxStep;
    const probe = [...problem.x0];
    const endState = [...problem.x0];
    const gPrev = events.map((g) => g(endState));
    const gNow = new Array<number>(events.length);
    let lastStep = problem.initialStep;
    let hit: { t: number; x: number[]; index: number } | null = null;

    const onStep = (stepNumber: number, tOld: number, t: number, y: number[], dense?: (c: number, x: number) => number): boolean | void => {
      if (stepNumber === 1 || !dense) return;
      const stateAt: StateAt = (tq, out) => {
        // The probe holds x0's values where odex carries nothing; another array gets them here.
        if (out !== probe) for (let i = 0; i < n; i++) out[i] = problem.x0[i]!;
        for (let k = 0; k < m; k++) out[moving[k]!] = dense(k, tq);
      };
      expand(y, endState);
      if (events.length > 0) {
        const samples = Math.min(this.samplesPerStep, Math.max(2, Math.ceil(density * (t - tOld))));
        let tA = tOld;
        for (let j = 1; j <= samples && !hit; j++) {
          const last = j === samples;
          const tB = last ? t : tOld + ((t - tOld) * j) / samples;
          const at = last ? endState : probe;
          if (!last) stateAt(tB, probe);
          let best = Infinity, bestIndex = -1;
          for (let e = 0; e < events.length; e++) {
            gNow[e] = events[e]!(at);
            if (gPrev[e]! < 0 && gNow[e]! >= 0) {
              const g = events[e]!;
              const root = locateRisingRoot((tq) => { stateAt(tq, probe); return g(probe); },
                tA, tB, gPrev[e]!, gNow[e]!, 1e-13 * Math.max(1, Math.abs(tB)));
              if (root < best) { best = root; bestIndex = e; }
            }
          }
          if (bestIndex >= 0) {
            const x = [...problem.x0];
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

    const y0 = moving.map((i) => problem.x0[i]!);
    const result = solver.solve(derivative, problem.t0, y0, problem.tEnd, onStep);
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
    const x = expand(result.y, new Array<number>(n));
    if (!x.every(Number.isFinite)) {
      return { status: 'failed', t: problem.t0, x: [...problem.x0], eventIndex: -1, ...stats, message: 'the state became non-finite' };
    }
    return { status: 'reached-end', t: problem.tEnd, x, eventIndex: -1, ...stats };
  }
}

const everyComponent = new Map<number, number[]>();
function allComponents(n: number): readonly number[] {
  let all = everyComponent.get(n);
  if (!all) { all = Array.from({ length: n }, (_, i) => i); everyComponent.set(n, all); }
  return all;
}
