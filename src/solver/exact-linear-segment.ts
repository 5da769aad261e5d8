// Exact where the physics is linear, adaptive where it is not: a mode given as dx/dt = A·x + b is
// advanced by its exact propagator Φ(h), one per mode and step length, with the event functions
// sampled at every step end and crossings located on the exact trajectory; any other mode goes to
// the adaptive integrator it wraps.

import type { AffineSystem } from '../model/affine.js';
import { eigenvalues } from './eigenvalues.js';
import { locateRisingRoot } from './locate-root.js';
import { augmentedExponential, propagate, spectralRadiusBound, taylorTermsFor, TaylorTrajectory } from './linear-propagator.js';
import type { SegmentIntegrator, SegmentProblem, SegmentResult, StateAt } from './segment.js';

export interface ExactLinearSettings {
  /** What integrates the modes that are not linear. */
  nonlinear: SegmentIntegrator;
  /**
   * ω·h of a step for the fastest oscillation ω in the mode: a crossing is seen where the event
   * function changes sign between step ends, a crest that touches zero where its rate does, and
   * both need at most one crest per step (0.3: about 21 steps per period).
   */
  stepTimesOscillation?: number;
  /**
   * |σ|·h for the fastest decay rate σ: a decaying part is monotone, so it only has to be resolved
   * well enough that it adds no second crest within a step (2: it falls to e⁻² in one step).
   */
  stepTimesDecay?: number;
  /** At most this many steps per problem.maxStep (half the fastest ring of the circuit). */
  stepsPerMaxStep?: number;
  /** Steps handed to the observer as one piece (the recorder's work is per piece). */
  stepsPerPiece?: number;
  maxStepsPerSegment?: number;
}

interface ModeStep {
  h: number;
  phi: Float64Array;
  /** Taylor terms for the trajectory over one step. */
  order: number;
}

/** The rates that set a mode's step, per time unit; oscillation and decay null if the eigenvalues were not found. */
interface NaturalRates { radius: number; oscillation: number | null; decay: number | null }

function naturalRates(system: AffineSystem): NaturalRates {
  const n = system.b.length;
  const radius = spectralRadiusBound(system.A, n);
  const values = eigenvalues(system.A, n);
  if (!values) return { radius, oscillation: null, decay: null };
  let oscillation = 0, decay = 0;
  for (const v of values) { oscillation = Math.max(oscillation, Math.abs(v.im)); decay = Math.max(decay, Math.abs(v.re)); }
  return { radius, oscillation, decay };
}

/**
 * An event function along a linear mode's trajectory: g(x) = c·x + c0, so its rate is
 * dg/dt = c·(A·x + b) = r·x + r0. Null where g is not affine (then only sign changes are seen).
 * The form also evaluates g itself: the model's event functions read the mode's signals, all of
 * them, where the form is one dot product (on the ideal-part demos the events' signals were 15 %
 * of a run).
 */
interface EventForm { c: Float64Array; c0: number; r: Float64Array; r0: number }

/** Reads c off g by probing and keeps it only if g is affine to rounding at a second point. */
function eventForm(g: (x: ArrayLike<number>) => number, system: AffineSystem): EventForm | null {
  const n = system.b.length;
  const x = new Array<number>(n).fill(0);
  const c0 = g(x);
  const c = new Float64Array(n);
  for (let j = 0; j < n; j++) { x[j] = 1; c[j] = g(x) - c0; x[j] = 0; }
  let predicted = c0, magnitude = Math.abs(c0);
  for (let j = 0; j < n; j++) { x[j] = 3 + j; predicted += c[j]! * x[j]!; magnitude += Math.abs(c[j]! * x[j]!); }
  if (!(Math.abs(g(x) - predicted) <= 1e-9 * magnitude)) return null;
  const r = new Float64Array(n);
  let r0 = 0;
  for (let i = 0; i < n; i++) {
    const ci = c[i]!;
    if (ci === 0) continue;
    r0 += ci * system.b[i]!;
    for (let j = 0; j < n; j++) r[j]! += ci * system.A[i * n + j]!;
  }
  return { c, c0, r, r0 };
}

function valueAt(form: EventForm, x: ArrayLike<number>): number {
  let s = form.c0;
  for (let j = 0; j < form.c.length; j++) s += form.c[j]! * x[j]!;
  return s;
}

function rateAt(form: EventForm, x: ArrayLike<number>): number {
  let s = form.r0;
  for (let j = 0; j < form.r.length; j++) s += form.r[j]! * x[j]!;
  return s;
}

/**
 * Whether a crest inside a step, where both ends are below zero and the rate turns from rising
 * to falling, may touch zero: the cubic Hermite interpolant of the ends' values g0, g1 and rates
 * times the step d0, d1 has its crest above minus a margin of a hundredth of their sum. The
 * interpolant errs by about (ωh)⁴/384 of the swing, 2e-5 at the steps' ωh ≤ 0.3, and a decay
 * (σh ≤ 2) has no crest to miss; the crests kept are located on the exact trajectory as before.
 * Most crests of a ring stand far below an event's threshold, and locating each cost a Taylor
 * trajectory and a root search.
 */
function crestMayReachZero(g0: number, g1: number, d0: number, d1: number): boolean {
  // p(θ) on [0, 1] and its derivative a·θ² + b·θ + c.
  const a = 6 * g0 + 3 * d0 - 6 * g1 + 3 * d1;
  const b = -6 * g0 - 4 * d0 + 6 * g1 - 2 * d1;
  const c = d0;
  const p = (theta: number): number => {
    const t = Math.min(1, Math.max(0, theta)), t2 = t * t, t3 = t2 * t;
    return (2 * t3 - 3 * t2 + 1) * g0 + (t3 - 2 * t2 + t) * d0 + (-2 * t3 + 3 * t2) * g1 + (t3 - t2) * d1;
  };
  let crest: number;
  if (Math.abs(a) < 1e-300) crest = Math.abs(b) < 1e-300 ? Math.max(g0, g1) : p(-c / b);
  else {
    const root = Math.sqrt(Math.max(0, b * b - 4 * a * c));
    crest = Math.max(p((-b + root) / (2 * a)), p((-b - root) / (2 * a)));
  }
  return crest > -0.01 * (Math.abs(g0) + Math.abs(g1) + Math.abs(d0) + Math.abs(d1));
}

export class ExactLinearSegmentIntegrator implements SegmentIntegrator {
  private readonly nonlinear: SegmentIntegrator;
  private readonly stepTimesOscillation: number;
  private readonly stepTimesDecay: number;
  private readonly stepsPerMaxStep: number;
  private readonly stepsPerPiece: number;
  private readonly maxSteps: number;
  private readonly modeRates = new WeakMap<AffineSystem, NaturalRates>();
  private readonly steps = new WeakMap<AffineSystem, Map<number, ModeStep>>();
  /** Each event function's affine form, per mode (null where the function is not affine). */
  private readonly eventForms = new WeakMap<AffineSystem, Map<(x: ArrayLike<number>) => number, EventForm | null>>();

  constructor(settings: ExactLinearSettings) {
    this.nonlinear = settings.nonlinear;
    this.stepTimesOscillation = settings.stepTimesOscillation ?? 0.3;
    this.stepTimesDecay = settings.stepTimesDecay ?? 2;
    this.stepsPerMaxStep = settings.stepsPerMaxStep ?? 1;
    this.stepsPerPiece = settings.stepsPerPiece ?? 8;
    this.maxSteps = settings.maxStepsPerSegment ?? 2_000_000;
  }

  private modeStep(system: AffineSystem, maxStep: number): ModeStep {
    let rates = this.modeRates.get(system);
    if (!rates) {
      rates = naturalRates(system);
      this.modeRates.set(system, rates);
    }
    let bySystem = this.steps.get(system);
    if (!bySystem) { bySystem = new Map(); this.steps.set(system, bySystem); }
    let step = bySystem.get(maxStep);
    if (!step) {
      const limits = [maxStep / this.stepsPerMaxStep];
      if (rates.oscillation !== null && rates.decay !== null) {
        if (rates.oscillation > 0) limits.push(this.stepTimesOscillation / rates.oscillation);
        if (rates.decay > 0) limits.push(this.stepTimesDecay / rates.decay);
      } else if (rates.radius > 0) {
        limits.push(this.stepTimesOscillation / rates.radius);
      }
      const h = Math.min(...limits);
      step = { h, phi: augmentedExponential(system, h), order: taylorTermsFor(rates.radius * h) };
      bySystem.set(maxStep, step);
    }
    return step;
  }

  private formsOf(system: AffineSystem, events: SegmentProblem['events']): Array<EventForm | null> {
    let bySystem = this.eventForms.get(system);
    if (!bySystem) { bySystem = new Map(); this.eventForms.set(system, bySystem); }
    return events.map((g) => {
      let form = bySystem.get(g);
      if (form === undefined) { form = eventForm(g, system); bySystem.set(g, form); }
      return form;
    });
  }

  integrate(problem: SegmentProblem): SegmentResult {
    const system = problem.system;
    if (!system) return this.nonlinear.integrate(problem);
    const n = system.b.length;
    const { events, observer, tEnd } = problem;
    const { h, phi, order } = this.modeStep(system, problem.maxStep);
    if (!(h > 0) || !Number.isFinite(h)) {
      return { status: 'failed', t: problem.t0, x: [...problem.x0], eventIndex: -1, lastStep: 0, evaluations: 0, steps: 0, message: 'the mode has no finite step length' };
    }

    let t = problem.t0;
    let x = [...problem.x0];
    let next = new Array<number>(n);
    const forms = this.formsOf(system, events);
    const valueOf = forms.map((form, e) => (form ? (y: ArrayLike<number>) => valueAt(form, y) : events[e]!));
    const gPrev = valueOf.map((g) => g(x));
    const gNow = new Array<number>(events.length);
    const ratePrev = forms.map((form) => (form ? rateAt(form, x) : 0));
    const rateNow = new Array<number>(events.length);
    const probe = new Array<number>(n);
    let steps = 0;
    let evaluations = 0;

    // The observer's current piece: the start state and time of each of its steps.
    const pieceStarts: number[][] = [];
    const pieceTimes: number[] = [];
    const trajectories: Array<TaylorTrajectory | null> = [];
    const trajectory = (k: number): TaylorTrajectory => {
      let tr = trajectories[k];
      if (!tr) { tr = new TaylorTrajectory(system, pieceStarts[k]!, order); trajectories[k] = tr; evaluations += order; }
      return tr;
    };
    const stateAt: StateAt = (tq, out) => {
      let k = pieceTimes.length - 1;
      while (k > 0 && tq < pieceTimes[k]!) k--;
      trajectory(k).at(tq - pieceTimes[k]!, out);
    };
    // Step-start states held by the piece are recycled once the piece has been handed over.
    const free: number[][] = [];
    const spare = (previous: number[]): number[] => {
      if (!pieceStarts.includes(previous)) free.push(previous);
      return free.pop() ?? new Array<number>(n);
    };
    const flush = (tPieceEnd: number): void => {
      if (observer && pieceTimes.length > 0) observer(pieceTimes[0]!, tPieceEnd, stateAt);
      for (const start of pieceStarts) if (start !== x) free.push(start);
      pieceStarts.length = 0;
      pieceTimes.length = 0;
      trajectories.length = 0;
    };

    while (t < tEnd) {
      if (++steps > this.maxSteps) {
        return { status: 'failed', t: problem.t0, x: [...problem.x0], eventIndex: -1, lastStep: h, evaluations, steps, message: `the exact stepper exceeded ${this.maxSteps} steps in one segment` };
      }
      const remaining = tEnd - t;
      const full = remaining > h * (1 + 1e-12);
      const tau = full ? h : remaining;
      if (observer) { pieceStarts.push(x); pieceTimes.push(t); trajectories.push(null); }
      let own: TaylorTrajectory | null = null;
      if (full) propagate(phi, x, next, n);
      else { own = new TaylorTrajectory(system, x, order); own.at(tau, next); evaluations += order; }
      evaluations++;
      const tNext = full ? t + h : tEnd;

      let best = Infinity, bestIndex = -1;
      const timeTolerance = 1e-13 * Math.max(1, Math.abs(tNext));
      for (let e = 0; e < events.length; e++) {
        const g = valueOf[e]!;
        gNow[e] = g(next);
        const form = forms[e]!;
        if (form) rateNow[e] = rateAt(form, next);
        if (!(gPrev[e]! < 0)) continue;
        let tCross = tNext, gCross = gNow[e]!;
        if (gCross < 0) {
          // Both ends below zero: a crest inside the step may still touch zero (a graze). Its
          // top is where the rate turns from rising to falling.
          if (!form || !(ratePrev[e]! > 0 && rateNow[e]! < 0)) continue;
          if (!crestMayReachZero(gPrev[e]!, gCross, ratePrev[e]! * tau, rateNow[e]! * tau)) continue;
          const tr = own ?? (own = new TaylorTrajectory(system, x, order));
          const tTop = locateRisingRoot((tq) => { tr.at(tq - t, probe); return -rateAt(form, probe); },
            t, tNext, -ratePrev[e]!, -rateNow[e]!, timeTolerance);
          tr.at(tTop - t, probe);
          gCross = g(probe);
          if (gCross < 0) continue;
          tCross = tTop;
        }
        const tr = own ?? (own = new TaylorTrajectory(system, x, order));
        const root = locateRisingRoot((tq) => { tr.at(tq - t, probe); return g(probe); },
          t, tCross, gPrev[e]!, gCross, timeTolerance);
        if (root < best) { best = root; bestIndex = e; }
      }
      if (bestIndex >= 0) {
        const hit = new Array<number>(n);
        own!.at(best - t, hit);
        flush(best);
        return { status: 'event', t: best, x: hit, eventIndex: bestIndex, lastStep: h, evaluations, steps };
      }
      for (let e = 0; e < events.length; e++) { gPrev[e] = gNow[e]!; ratePrev[e] = rateNow[e]!; }
      const previous = x;
      x = next;
      next = observer ? spare(previous) : previous;
      t = tNext;
      if (observer && pieceTimes.length >= this.stepsPerPiece) flush(t);
    }
    flush(tEnd);
    if (!x.every(Number.isFinite)) {
      return { status: 'failed', t: problem.t0, x: [...problem.x0], eventIndex: -1, lastStep: h, evaluations, steps, message: 'the state became non-finite' };
    }
    return { status: 'reached-end', t: tEnd, x, eventIndex: -1, lastStep: h, evaluations, steps };
  }
}
