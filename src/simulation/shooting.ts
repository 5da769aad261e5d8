// Periodic steady state by shooting: find x with P(x) = x for the period map P (one switching
// cycle from the period-start state x) by Broyden's method on F(x) = P(x) − x. Its Jacobian starts
// as −I (the first step is one plain cycle) and learns the slow directions, the clamp capacitor's
// and the damper's, from the steps themselves by rank-one updates (Broyden, Math. Comp. 19, 1965):
// one cycle per iteration, where cycle after cycle needs many on a slow clamp. The map is only
// smooth while the sequence of modes stays the same, so anything unexpected hands back to the
// cycle loop, which keeps its own verdicts (settled, period-p, non-periodic).

import { eigenvalues } from '../solver/eigenvalues.js';

export interface PeriodMapResult {
  /** The state one period later. */
  end: number[];
  /** The next period starts in the same devices' state as this one did (the map stays smooth). */
  sameStart: boolean;
  /** Evaluated at the looser tolerance (see PeriodMap): it steers, but never settles the orbit. */
  rough?: boolean;
}

/**
 * The period map: the state one period after x. `mayBeLast`: if this evaluation is quiet too, the
 * shooting settles with it, and x is then within the tolerance of the orbit as well (its change and
 * the step still to go were below it): the caller may record the cycle it runs and keep it as the
 * first cycle on the orbit. `rough`: x is still far from the orbit (the last change was above
 * ROUGH_ABOVE × the tolerance), so a looser solver tolerance serves.
 */
export type PeriodMap = (x: number[], mayBeLast: boolean, rough: boolean) => PeriodMapResult;

export interface ShootingResult {
  /**
   * 'settled': x is on the orbit; 'handed-back': continue cycle by cycle from x, the end state of
   * the last cycle run (so the devices' state the caller holds matches it).
   */
  outcome: 'settled' | 'handed-back';
  x: number[];
  /** Period-map evaluations spent. */
  cycles: number;
  /** max |P(x) − x| / scale at the last evaluation. */
  lastChange: number;
  /** When settled: the largest multiplier of the map's Jacobian estimate (≥ 1 suggests an unstable orbit). */
  largestMultiplier?: number;
  /**
   * The Jacobian estimate of P(x) − x at the end, scaled, row-major (see initialJacobian): when
   * settled, and when bound by noise (to shoot again from, with a more accurate map).
   */
  jacobian?: number[];
  /**
   * Handed back because the change stayed near the tolerance without settling (see
   * NOISE_BOUND_EVALUATIONS): the map's own error is about the tolerance, so a more accurate map is
   * needed, not more steps.
   */
  noiseBound?: boolean;
  reason?: string;
}

export interface ShootingOptions {
  scales: readonly number[];
  /** The settle tolerance: both the last change and the predicted distance to the orbit below it. */
  tolerance: number;
  maxIterations?: number;
  /**
   * Components the period map does not read (the period start overwrites them, as the switch
   * pins the drain): their columns of ∂F/∂x are exactly −I and stay so; the secant updates learn
   * the others only. Learning those columns from noise coupled the drain's large row (its ring
   * phase at the next turn-on) into every step.
   */
  forgotten?: readonly boolean[];
  /** Called after each evaluation with the count so far and the change. */
  onCycle?: (cycles: number, change: number) => void;
  /**
   * P(start) when the caller has it already (its last plain cycle ran from start in the same
   * devices' state): the shooting begins there, one evaluation and one secant ahead.
   */
  startEvaluated?: PeriodMapResult;
  /**
   * A Jacobian estimate to start from instead of −I (a nearby orbit's `jacobian`): the secant
   * updates then refine what it learned. Ignored unless it has n² finite entries; the forgotten
   * components' columns stay −I.
   */
  initialJacobian?: readonly number[];
}

/**
 * Above this many tolerances of change, the next evaluation may be rough (see PeriodMap). On the
 * demos' edits and cold starts, 30 and 300 took about as many evaluations; nearer the tolerance
 * the rough map's error spoils the secant updates and costs extra cycles.
 */
const ROUGH_ABOVE = 100;
/** Steps shorter than this fraction of the settle tolerance do not update the Jacobian estimate. */
const NOISE_STEP_FRACTION = 0.3;
/**
 * Full-accuracy evaluations with a change below NOISE_BAND × the tolerance, but never two quiet
 * ones running: after this many the map's error is taken as the floor (a converging shooting gets
 * from the band to quiet in two or three). bias-48v's clamp at its worst-case corner with a
 * larger clamp resistor scattered at 0.2–5 tolerances for 40 evaluations at rtol 1e-7, and
 * settled in 9 cycles at 1e-8.
 */
const NOISE_BOUND_EVALUATIONS = 6;
const NOISE_BAND = 30;

const maxAbs = (v: readonly number[]): number => v.reduce((m, x) => Math.max(m, Math.abs(x)), 0);

export function shootPeriodicOrbit(start: readonly number[], periodMap: PeriodMap, options: ShootingOptions): ShootingResult {
  const { scales, tolerance, forgotten } = options;
  const n = start.length;
  const maxIterations = options.maxIterations ?? 40;
  const toScaled = (x: readonly number[]): number[] => x.map((v, i) => v / scales[i]!);
  const fromScaled = (u: readonly number[]): number[] => u.map((v, i) => v * scales[i]!);

  let cycles = 0;
  type Evaluation = { f: number[]; end: number[]; ok: boolean; rough: boolean };
  const evaluated = (u: readonly number[], r: PeriodMapResult): Evaluation => {
    const f = toScaled(r.end).map((v, i) => v - u[i]!);
    return { f, end: r.end, ok: r.sameStart && f.every(Number.isFinite), rough: r.rough === true };
  };
  let quietSteps = 0;
  const evaluate = (u: number[], rough: boolean): Evaluation => {
    const result = evaluated(u, periodMap(fromScaled(u), quietSteps === 1, rough));
    cycles++;
    options.onCycle?.(cycles, maxAbs(result.f));
    return result;
  };

  // B ≈ ∂F/∂u in scaled units, row-major; −I at first.
  const B = new Array<number>(n * n).fill(0);
  for (let i = 0; i < n; i++) B[i * n + i] = -1;
  const given = options.initialJacobian;
  if (given && given.length === n * n && given.every(Number.isFinite)) {
    for (let j = 0; j < n; j++) if (!forgotten?.[j]) for (let i = 0; i < n; i++) B[i * n + j] = given[i * n + j]!;
  }
  let u = toScaled(start);
  let current = options.startEvaluated ? evaluated(u, options.startEvaluated) : evaluate(u, false);
  // Progress is judged on the components the map reads: a forgotten one only follows them (its
  // change swings with a ring's phase at the next turn-on).
  const readChange = (f: readonly number[]): number => maxAbs(forgotten ? f.filter((_, i) => !forgotten[i]) : f);
  let nearEvaluations = 0;
  for (let iteration = 0; iteration < maxIterations; iteration++) {
    const change = maxAbs(current.f);
    if (!current.ok) return { outcome: 'handed-back', x: current.end, cycles, lastChange: change, reason: 'the devices at the period start changed' };
    const step = solve(B, current.f.map((v) => -v), n);
    if (!step) return { outcome: 'handed-back', x: current.end, cycles, lastChange: change, reason: 'the Jacobian estimate became singular' };
    const predicted = maxAbs(step);
    // On the orbit: this cycle's change and the distance still to go are both below the
    // tolerance, twice running (one lucky step proves nothing).
    quietSteps = change < tolerance && predicted < tolerance && !current.rough ? quietSteps + 1 : 0;
    if (quietSteps >= 2) {
      return { outcome: 'settled', x: fromScaled(u.map((v, i) => v + step[i]!)), cycles, lastChange: change, largestMultiplier: largestMultiplier(B, n), jacobian: [...B] };
    }
    if (!current.rough && change < NOISE_BAND * tolerance && ++nearEvaluations >= NOISE_BOUND_EVALUATIONS) {
      return { outcome: 'handed-back', x: current.end, cycles, lastChange: change, jacobian: [...B], noiseBound: true, reason: `the change stayed within ${NOISE_BAND} tolerances for ${NOISE_BOUND_EVALUATIONS} evaluations without settling: the period map's error` };
    }
    // Halve a step that made the change much larger: far from the orbit the rank-one model of the
    // map can overshoot (a mode sequence that changes mid-way).
    const changeRead = readChange(current.f);
    const rough = changeRead > ROUGH_ABOVE * tolerance;
    let du = step;
    let uNext = u.map((v, i) => v + du[i]!);
    let next = evaluate(uNext, rough);
    for (let halvings = 0; halvings < 3 && next.ok && readChange(next.f) > 2 * Math.max(changeRead, tolerance); halvings++) {
      du = du.map((v) => v / 2);
      uNext = u.map((v, i) => v + du[i]!);
      next = evaluate(uNext, rough);
    }
    // Broyden's update: B += (ΔF − B·Δu)·Δuᵀ / (Δuᵀ·Δu), Δu over the components the map reads.
    // Not from a step below a third of the tolerance: there ΔF is mostly the solver's error, and
    // the secant it gives is noise (bias-48v's bare variant learned a multiplier of 3 that way,
    // and its orbit was tried with three cycles).
    const learned = du.map((v, j) => (forgotten?.[j] ? 0 : v));
    const duNorm2 = learned.reduce((sum, v) => sum + v * v, 0);
    if (duNorm2 > 0 && maxAbs(learned) >= NOISE_STEP_FRACTION * tolerance) {
      for (let i = 0; i < n; i++) {
        let bdu = 0;
        for (let j = 0; j < n; j++) bdu += B[i * n + j]! * du[j]!;
        const r = (next.f[i]! - current.f[i]! - bdu) / duNorm2;
        for (let j = 0; j < n; j++) B[i * n + j]! += r * learned[j]!;
      }
    }
    if (readChange(next.f) > 10 * Math.max(changeRead, tolerance) && iteration > 2) {
      return { outcome: 'handed-back', x: next.end, cycles, lastChange: maxAbs(next.f), reason: 'the steps stopped converging' };
    }
    u = uNext;
    current = next;
  }
  return { outcome: 'handed-back', x: current.end, cycles, lastChange: maxAbs(current.f), reason: `no convergence in ${maxIterations} iterations` };
}

/**
 * The largest |eigenvalue| of ∂P/∂x ≈ B + I: below 1 the orbit attracts. Broyden's B is exact
 * only along the directions the steps explored, so this is a hint to check, not a verdict.
 */
function largestMultiplier(B: readonly number[], n: number): number {
  const J = B.map((v, k) => v + (k % (n + 1) === 0 ? 1 : 0));
  const values = eigenvalues(J, n);
  return values ? Math.max(...values.map((v) => Math.hypot(v.re, v.im))) : Infinity;
}

/** Gaussian elimination with partial pivoting; null when singular. */
function solve(matrix: readonly number[], rhs: readonly number[], n: number): number[] | null {
  const a = [...matrix];
  const b = [...rhs];
  for (let col = 0; col < n; col++) {
    let pivot = col;
    for (let r = col + 1; r < n; r++) if (Math.abs(a[r * n + col]!) > Math.abs(a[pivot * n + col]!)) pivot = r;
    if (!(Math.abs(a[pivot * n + col]!) > 1e-14)) return null;
    if (pivot !== col) {
      for (let j = 0; j < n; j++) { const t = a[col * n + j]!; a[col * n + j] = a[pivot * n + j]!; a[pivot * n + j] = t; }
      const t = b[col]!; b[col] = b[pivot]!; b[pivot] = t;
    }
    for (let r = col + 1; r < n; r++) {
      const f = a[r * n + col]! / a[col * n + col]!;
      if (f === 0) continue;
      for (let j = col; j < n; j++) a[r * n + j]! -= f * a[col * n + j]!;
      b[r]! -= f * b[col]!;
    }
  }
  const x = new Array<number>(n).fill(0);
  for (let r = n - 1; r >= 0; r--) {
    let s = b[r]!;
    for (let j = r + 1; j < n; j++) s -= a[r * n + j]! * x[j]!;
    x[r] = s / a[r * n + r]!;
  }
  return x;
}
