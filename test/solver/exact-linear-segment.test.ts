import { describe, expect, it } from 'vitest';
import { eigs, expm, matrix } from 'mathjs';
import { ExactLinearSegmentIntegrator } from '../../src/solver/exact-linear-segment.js';
import { augmentedExponential, spectralRadiusBound } from '../../src/solver/linear-propagator.js';
import { eigenvalues } from '../../src/solver/eigenvalues.js';
import type { SegmentIntegrator, SegmentProblem, SegmentResult } from '../../src/solver/segment.js';
import type { AffineSystem } from '../../src/model/affine.js';
import { circuitForVariant } from '../../src/model/circuit-params.js';
import { ModeModel, SWITCH_ON, type Mode } from '../../src/model/modes.js';
import { labScenario } from '../support/lab-scenarios.js';

// The exact stepper against closed forms (LC ring, Nilsson & Riedel, Electric Circuits: any circuits
// text) and against a general-purpose library's matrix exponential (mathjs expm, Padé with scaling
// and squaring). Time is in µs, as in the model.

/** Fails the test if a problem reaches the adaptive integrator: every problem here is linear. */
const noNonlinear: SegmentIntegrator = {
  integrate: (): SegmentResult => { throw new Error('a linear problem went to the nonlinear integrator'); },
};
const exact = (): ExactLinearSegmentIntegrator => new ExactLinearSegmentIntegrator({ nonlinear: noNonlinear });

/** An undamped LC tank: x = [i (A), v (V)], di/dt = −v/L, dv/dt = i/C, with L in µH and C in µF (so t in µs). */
function tank(l: number, c: number): AffineSystem {
  return { A: [0, -1 / l, 1 / c, 0], b: [0, 0] };
}

function problem(system: AffineSystem, x0: number[], tEnd: number, events: SegmentProblem['events'] = [], observer?: SegmentProblem['observer']): SegmentProblem {
  const derivative = (x: ArrayLike<number>, out: number[]): number[] => {
    const n = system.b.length;
    for (let i = 0; i < n; i++) { let s = system.b[i]!; for (let j = 0; j < n; j++) s += system.A[i * n + j]! * x[j]!; out[i] = s; }
    return out;
  };
  return { derivative, system, t0: 0, x0, tEnd, events, initialStep: 1e-3, maxStep: 10, ...(observer ? { observer } : {}) };
}

describe('augmentedExponential(system, τ) against mathjs expm', () => {
  // mathjs's Padé errs by up to 1.4e-11 on the series RLC below (measured against its closed form),
  // so the agreement with it is held to 1e-10; the closed form holds ours to 1e-13.
  it('agrees within 1e-10 (relative to the largest entry of its row) at ρτ = 0.03, 0.3 and 30 on every mode of the lab clamp circuit', () => {
    const p = circuitForVariant(labScenario(), 'damped');
    const modes: Mode[] = [SWITCH_ON, { ...SWITCH_ON, drain: 'free' }, { ...SWITCH_ON, drain: 'free', outputDiodeOn: true }, { ...SWITCH_ON, drain: 'clamp', outputDiodeOn: true }];
    for (const mode of modes) {
      const system = new ModeModel(p, mode).system();
      const n = system.b.length;
      const rho = spectralRadiusBound(system.A, n);
      for (const rhoTau of [0.03, 0.3, 30]) {
        const tau = rhoTau / rho;
        const m = Array.from({ length: n + 1 }, (_, i) => Array.from({ length: n + 1 }, (_, j) =>
          i === n ? 0 : (j === n ? system.b[i]! : system.A[i * n + j]!) * tau));
        const reference = expm(matrix(m)).toArray() as number[][];
        const phi = augmentedExponential(system, tau);
        for (let i = 0; i < n; i++) {
          const rowScale = Math.max(...reference[i]!.map(Math.abs));
          for (let j = 0; j <= n; j++) {
            expect(Math.abs(phi[i * (n + 1) + j]! - reference[i]![j]!) / rowScale, `${mode.drain} τ=${tau} [${i}][${j}]`).toBeLessThan(1e-10);
          }
        }
      }
    }
  });
});

describe('augmentedExponential(series RLC, τ) against its closed form', () => {
  it('matches i(τ) = e^(−aτ)(cos ωd·τ − a/ωd·sin ωd·τ) and v(τ) = e^(−aτ)·sin(ωd·τ)/(C·ωd) within 1e-13 for ω0·τ up to 30 (Nilsson & Riedel)', () => {
    const l = 2, c = 2e-5, r = 0.3;
    const w0 = 1 / Math.sqrt(l * c), a = r / (2 * l), wd = Math.sqrt(w0 * w0 - a * a);
    for (const w0Tau of [0.3, 3, 30]) {
      const tau = w0Tau / w0;
      const phi = augmentedExponential({ A: [-r / l, -1 / l, 1 / c, 0], b: [0, 0] }, tau);
      const e = Math.exp(-a * tau);
      expect(Math.abs(phi[0]! - e * (Math.cos(wd * tau) - (a / wd) * Math.sin(wd * tau)))).toBeLessThan(1e-13);
      const v = e * Math.sin(wd * tau) / (c * wd);
      expect(Math.abs(phi[3]! - v) / Math.abs(v)).toBeLessThan(1e-13);
    }
  });
});

describe('eigenvalues(A, n)', () => {
  // Newton's identities: trace(Aᵏ) = Σ λᵢᵏ for k = 1…n determine the eigenvalues (any linear
  // algebra text), so they check the QR iteration without a second eigenvalue code.
  const multiply = (a: number[], b: number[], n: number): number[] => {
    const out = new Array<number>(n * n).fill(0);
    for (let i = 0; i < n; i++) for (let l = 0; l < n; l++) for (let j = 0; j < n; j++) out[i * n + j]! += a[i * n + l]! * b[l * n + j]!;
    return out;
  };
  /** A reproducible pseudo-random stream (a linear congruential generator), so failures replay. */
  const stream = (seed: number) => () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);

  it('satisfies trace(Aᵏ) = Σ λᵏ for k = 1…n within 1e-12 on 500 random matrices of size 1–11 with entries spread over 6 decades', () => {
    const random = stream(7);
    let worst = 0, converged = 0;
    for (let trial = 0; trial < 500; trial++) {
      const n = 1 + (trial % 11);
      const A = Array.from({ length: n * n }, () => (random() < 0.3 ? 0 : (random() - 0.5) * Math.exp(14 * (random() - 0.5))));
      const values = eigenvalues(A, n);
      if (!values) continue;
      converged++;
      expect(values).toHaveLength(n);
      const scale = Math.max(1e-6, ...values.map((v) => Math.hypot(v.re, v.im)));
      let power = A.slice();
      for (let k = 1; k <= n; k++) {
        let trace = 0;
        for (let i = 0; i < n; i++) trace += power[i * n + i]!;
        let re = 0, im = 0;
        for (const v of values) {
          let pr = 1, pi = 0;
          for (let j = 0; j < k; j++) [pr, pi] = [pr * v.re - pi * v.im, pr * v.im + pi * v.re];
          re += pr; im += pi;
        }
        worst = Math.max(worst, (Math.abs(re - trace) + Math.abs(im)) / (n * scale ** k));
        power = multiply(power, A, n);
      }
    }
    expect(converged).toBeGreaterThanOrEqual(495);
    expect(worst).toBeLessThan(1e-12);
  });

  it('gives the series RLC its closed-form pair −R/(2L) ± i·ωd', () => {
    const l = 2, c = 2e-5, r = 0.3;
    const a = r / (2 * l), wd = Math.sqrt(1 / (l * c) - a * a);
    const values = eigenvalues([-r / l, -1 / l, 1 / c, 0], 2)!;
    for (const sign of [1, -1]) {
      expect(values.some((v) => Math.abs(v.re + a) < 1e-12 * wd && Math.abs(v.im - sign * wd) < 1e-12 * wd)).toBe(true);
    }
  });
});

describe('spectralRadiusBound(A, n)', () => {
  it('bounds max |λ| from above within 10 % on the lab circuit modes (eigenvalues from mathjs eigs)', () => {
    const p = circuitForVariant(labScenario(), 'damped');
    for (const mode of [SWITCH_ON, { ...SWITCH_ON, drain: 'free' as const, outputDiodeOn: true }]) {
      const { A, b } = new ModeModel(p, mode).system();
      const n = b.length;
      const values = (eigs(matrix(Array.from({ length: n }, (_, i) => A.slice(i * n, i * n + n))), { eigenvectors: false }).values as unknown as { toArray(): Array<number | { re: number; im: number }> }).toArray();
      const rho = Math.max(...values.map((v) => (typeof v === 'number' ? Math.abs(v) : Math.hypot(v.re, v.im))));
      const bound = spectralRadiusBound(A, n);
      expect(bound).toBeGreaterThanOrEqual(rho * (1 - 1e-12));
      expect(bound).toBeLessThan(rho * 1.1);
    }
  });
});

describe('ExactLinearSegmentIntegrator on an LC tank (closed form i = I0·cos ωt, v = I0·Z0·sin ωt)', () => {
  const l = 2, c = 2e-4; // 2 µH, 200 pF
  const w = 1 / Math.sqrt(l * c), z0 = Math.sqrt(l / c), i0 = 0.5;

  it('follows the ring at the step ends and inside its pieces within 1e-11 of the amplitude over ten periods', () => {
    const tEnd = 10.3 * (2 * Math.PI / w);
    let worst = 0, queries = 0;
    const result = exact().integrate(problem(tank(l, c), [i0, 0], tEnd, [], (a, b, stateAt) => {
      const x = [0, 0];
      for (const t of [a, (2 * a + b) / 3, b]) {
        stateAt(t, x);
        queries++;
        worst = Math.max(worst, Math.abs(x[0]! - i0 * Math.cos(w * t)) / i0, Math.abs(x[1]! - i0 * z0 * Math.sin(w * t)) / (i0 * z0));
      }
    }));
    expect(result.status).toBe('reached-end');
    expect(Math.abs(result.x[1]! - i0 * z0 * Math.sin(w * tEnd)) / (i0 * z0)).toBeLessThan(1e-11);
    expect(queries).toBeGreaterThan(30);
    expect(worst).toBeLessThan(1e-11);
  });

  it('locates a rising crossing at the closed-form time asin(k)/ω', () => {
    const k = 0.6;
    const result = exact().integrate(problem(tank(l, c), [i0, 0], 100, [(x) => x[1]! - k * i0 * z0]));
    expect(result.status).toBe('event');
    expect(Math.abs(result.t - Math.asin(k) / w) * w).toBeLessThan(1e-10);
  });

  it('finds a crest that grazes the threshold between two step ends (above it for 0.2 % of a period)', () => {
    // v exceeds k·I0·Z0 for 2·acos(k)/ω: with k = 1 − 2e-5 that is 0.0063 rad, far inside one step
    // (ρ·h = 0.3 rad), so both step ends around the crest are below the threshold.
    const k = 1 - 2e-5;
    const result = exact().integrate(problem(tank(l, c), [i0, 0], 100, [(x) => x[1]! - k * i0 * z0]));
    expect(result.status).toBe('event');
    expect(Math.abs(result.t - Math.asin(k) / w) * w).toBeLessThan(1e-7);
  });

  it('finds a grazing crest wherever it falls within a step (100 phases; above the threshold for 0.1 % of a period), and none 1e-6 above the crest', () => {
    // v = I0·Z0·sin(ωt + φ) from i = I0·cos φ, v = I0·Z0·sin φ: it first rises through k·I0·Z0 at
    // ωt = asin(k) − φ (mod 2π). The crests between step ends are the ones the prefilter judges.
    const k = 1 - 1.25e-5;
    for (let n = 0; n < 100; n++) {
      const phi = -Math.PI + (2 * Math.PI * (n + 0.37)) / 100;
      let phase = Math.asin(k) - phi;
      while (phase <= 0) phase += 2 * Math.PI;
      const x0 = [i0 * Math.cos(phi), i0 * z0 * Math.sin(phi)];
      const hit = exact().integrate(problem(tank(l, c), x0, 100, [(x) => x[1]! - k * i0 * z0]));
      expect(hit.status, `φ = ${phi}`).toBe('event');
      expect(Math.abs(hit.t * w - phase), `φ = ${phi}`).toBeLessThan(1e-6);
      const miss = exact().integrate(problem(tank(l, c), x0, 3 * (2 * Math.PI / w), [(x) => x[1]! - (1 + 1e-6) * i0 * z0]));
      expect(miss.status, `φ = ${phi}`).toBe('reached-end');
    }
  });

  it('reaches the end without an event when the crest stays below the threshold', () => {
    const result = exact().integrate(problem(tank(l, c), [i0, 0], 3 * (2 * Math.PI / w), [(x) => x[1]! - (1 + 1e-6) * i0 * z0]));
    expect(result.status).toBe('reached-end');
  });
});
