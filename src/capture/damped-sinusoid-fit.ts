// The ring after one turn-off edge as a damped sinusoid, y(t) = c + e^(−α·t)·(a·cos ωt + b·sin ωt),
// fitted by Levenberg–Marquardt (Levenberg 1944, Marquardt 1963; Madsen, Nielsen & Tingleff,
// "Methods for non-linear least squares problems", 2004, for the damping update). One standard
// deviation per parameter from the residual: s²·(JᵀJ)⁻¹ with s² = RSS/(N − 5), the usual
// linearised covariance (the same texts), valid for white noise.

import { cholesky, choleskySolve, inverseDiagonal, normalEquations } from './small-linear-algebra.js';

export interface DampedSinusoid {
  /** Damped (observed) ring frequency ω/2π, Hz. */
  frequencyHz: number;
  /** Envelope decay rate α, 1/s. */
  decayPerSecond: number;
  /** The level the ring settles to, V. */
  centreVolts: number;
  /** Envelope amplitude at t = 0 of the window, V. */
  amplitudeVolts: number;
  /** Phase at t = 0: y − c = A·e^(−αt)·cos(ωt + φ), rad. */
  phaseRadians: number;
  frequencySigmaHz: number;
  decaySigmaPerSecond: number;
  residualRmsVolts: number;
  iterations: number;
}

export class RingFitFailed extends Error {}

const PARAMETERS = 5;
const MAX_ITERATIONS = 100;

/**
 * Fits the ring to samples at `timeSeconds` (from the window start) starting from a frequency and
 * decay estimate (within ~10 %: the least-squares surface of a sinusoid in ω has a local minimum
 * every 1/(window length) in frequency, so a far start converges to the wrong one).
 */
export function fitDampedSinusoid(timeSeconds: Float64Array, volts: Float64Array, start: { frequencyHz: number; decayPerSecond: number }): DampedSinusoid {
  const n = timeSeconds.length;
  if (n <= PARAMETERS + 2) throw new RingFitFailed(`a ring needs more than ${PARAMETERS + 2} samples, found ${n}`);
  // Time in units of the starting period keeps the normal equations well scaled.
  const unit = 1 / start.frequencyHz;
  const t = new Float64Array(n);
  for (let k = 0; k < n; k++) t[k] = timeSeconds[k]! / unit;
  let alpha = start.decayPerSecond * unit;
  let omega = 2 * Math.PI;
  const linear = linearPart(t, volts, alpha, omega);
  if (!linear) throw new RingFitFailed('the samples do not determine a ring (constant or too short)');
  let p = [linear[0]!, linear[1]!, linear[2]!, alpha, omega];

  const columns = Array.from({ length: PARAMETERS }, () => new Float64Array(n));
  const residual = new Float64Array(n);
  const evaluate = (q: readonly number[], withJacobian: boolean): number => {
    const [c, a, b, al, om] = q as [number, number, number, number, number];
    let cost = 0;
    for (let k = 0; k < n; k++) {
      const tk = t[k]!;
      const envelope = Math.exp(-al * tk);
      const cos = Math.cos(om * tk), sin = Math.sin(om * tk);
      const ring = envelope * (a * cos + b * sin);
      const r = volts[k]! - (c + ring);
      residual[k] = r;
      cost += r * r;
      if (withJacobian) {
        // Columns of ∂(model)/∂p; the residual's Jacobian is their negative, folded into the step sign.
        columns[0]![k] = 1;
        columns[1]![k] = envelope * cos;
        columns[2]![k] = envelope * sin;
        columns[3]![k] = -tk * ring;
        columns[4]![k] = tk * envelope * (-a * sin + b * cos);
      }
    }
    return cost;
  };

  let cost = evaluate(p, true);
  let lambda = 1e-3;
  let iterations = 0;
  for (; iterations < MAX_ITERATIONS; iterations++) {
    const { jtj, jtr } = normalEquations(columns, residual);
    let improved = false;
    for (let attempt = 0; attempt < 30 && !improved; attempt++) {
      const damped = jtj.map((row, i) => row.map((v, j) => (i === j ? v * (1 + lambda) + 1e-30 : v)));
      const l = cholesky(damped);
      if (!l) { lambda *= 10; continue; }
      const step = choleskySolve(l, jtr);
      const trial = p.map((v, i) => v + step[i]!);
      const trialCost = evaluate(trial, false);
      if (trialCost < cost) {
        const relativeDrop = (cost - trialCost) / Math.max(cost, 1e-300);
        p = trial;
        cost = evaluate(p, true);
        lambda = Math.max(lambda / 3, 1e-12);
        improved = true;
        const stepSmall = Math.abs(step[4]!) < 1e-12 * Math.abs(p[4]!) && Math.abs(step[3]!) < 1e-12 * Math.max(Math.abs(p[3]!), 1e-3);
        if (relativeDrop < 1e-14 || stepSmall) iterations = MAX_ITERATIONS;
      } else {
        lambda *= 4;
      }
    }
    if (!improved) break;
    evaluate(p, true);
  }
  evaluate(p, true);
  [, , , alpha, omega] = p as [number, number, number, number, number];
  if (!(omega > 0) || !Number.isFinite(alpha)) throw new RingFitFailed('the ring fit did not converge to a positive frequency');
  const { jtj } = normalEquations(columns, residual);
  const variance = cost / Math.max(1, n - PARAMETERS);
  const diagonal = inverseDiagonal(jtj);
  const [c, a, b] = p as [number, number, number];
  return {
    frequencyHz: omega / (2 * Math.PI * unit),
    decayPerSecond: alpha / unit,
    centreVolts: c,
    amplitudeVolts: Math.hypot(a, b),
    phaseRadians: Math.atan2(-b, a),
    frequencySigmaHz: diagonal ? Math.sqrt(Math.max(0, variance * diagonal[4]!)) / (2 * Math.PI * unit) : Infinity,
    decaySigmaPerSecond: diagonal ? Math.sqrt(Math.max(0, variance * diagonal[3]!)) / unit : Infinity,
    residualRmsVolts: Math.sqrt(cost / n),
    iterations,
  };
}

/** c, a, b by linear least squares for a fixed α and ω (the variable-projection idea, Golub & Pereyra 1973), or null. */
function linearPart(t: Float64Array, y: Float64Array, alpha: number, omega: number): number[] | null {
  const n = t.length;
  const columns = [new Float64Array(n), new Float64Array(n), new Float64Array(n)];
  for (let k = 0; k < n; k++) {
    const e = Math.exp(-alpha * t[k]!);
    columns[0]![k] = 1;
    columns[1]![k] = e * Math.cos(omega * t[k]!);
    columns[2]![k] = e * Math.sin(omega * t[k]!);
  }
  const { jtj, jtr } = normalEquations(columns, y instanceof Float64Array ? y : Float64Array.from(y));
  const l = cholesky(jtj);
  return l ? choleskySolve(l, jtr) : null;
}
