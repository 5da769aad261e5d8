// An independent reference for the odex integrator: every mode is linear, dx/dt = A·x + b, so
// its solution is exact, x(t0 + τ) = Φ(τ)·[x0; 1] with Φ(τ) = expm(τ·[[A, b], [0, 0]]). The
// propagators come from mathjs (Padé with scaling and squaring) and share no code with odex.
// Events follow the production rule (a sign change from < 0 to ≥ 0 between samples, refined by
// locateRisingRoot), but on a fixed, denser grid: by default 128 samples per leakage ring period,
// where odex takes 8 per step and its steps reach a whole period, so excursions odex can miss
// are still seen here.
//
// mathjs expm costs 0.1–1.6 ms per 6×6 call on this machine, far too slow for every event
// search and every recorder query. So Φ is computed with expm only at fixed times per system
// (the substep h, the sample fractions j·h/m, the binary fractions of the leading base-256
// digit, one base per deeper digit). Any other τ in [0, h] is written in base 256,
// τ/h = Σ d_L·256⁻ᴸ, and Φ(τ) = Π_L Φ(d_L·256⁻ᴸ·h) from tables built once per system. That is
// the semigroup property Φ(s + t) = Φ(s)·Φ(t) of the exact solution, not an approximation: the
// only error is rounding (τ is quantised to h·2⁻⁴⁸, below 1e-16 µs here and far below the
// event location tolerance).

import { expm, matrix } from 'mathjs';
import type { AffineSystem } from '../../src/model/affine.js';
import { locateRisingRoot } from '../../src/solver/locate-root.js';
import type { SegmentIntegrator, SegmentProblem, SegmentResult, StateAt } from '../../src/solver/segment.js';

/** The five states of a circuit of constant, ideal parts: the exact solver covers that model only. */
const STATE_SIZE = 5;
/** Augmented size: the constant term b rides along as a sixth state fixed at 1. */
const AUG = STATE_SIZE + 1;
/** τ/h in base 256 with this many digits: at most 6 matrix–vector products for any τ. */
const DIGITS = 6;
const DIGIT_BITS = 8;
const RADIX = 2 ** DIGIT_BITS;
const FRACTION_SCALE = 2 ** (DIGITS * DIGIT_BITS);

export interface ExpmSettings {
  /** Substeps per problem.maxStep (one leakage ring period in the cycle loop). */
  substepsPerMaxStep?: number;
  /** Points per substep (its end included) at which the event functions are sampled. */
  samplesPerSubstep?: number;
  /**
   * Substeps handed to the observer as one piece. The recorder's work is per piece (a fixed
   * minimum of samples each), so pieces of about a quarter ring, like odex's steps, keep it
   * as cheap as with odex and sample the extrema about as densely.
   */
  substepsPerPiece?: number;
}

/**
 * Top STATE_SIZE rows of an augmented propagator, row-major (STATE_SIZE × AUG); the last row
 * is always [0 … 0 1], so it is neither stored nor multiplied.
 */
type Propagator = Float64Array;

interface Propagators {
  step: number;
  /** Φ(j·h/m) for j = 1…m; the last one is Φ(h). */
  samples: Propagator[];
  /** digits[L − 1][d − 1] = Φ(d·256⁻ᴸ·h), L = 1…DIGITS, d = 1…255. */
  digits: Propagator[][];
}

/** Φ1·Φ2 of two augmented propagators (the implicit last row [0 … 0 1] included). */
function compose(phi1: Propagator, phi2: Propagator): Propagator {
  const out = new Float64Array(STATE_SIZE * AUG);
  for (let i = 0; i < STATE_SIZE; i++) {
    for (let j = 0; j < AUG; j++) {
      let s = j === STATE_SIZE ? phi1[i * AUG + STATE_SIZE]! : 0;
      for (let l = 0; l < STATE_SIZE; l++) s += phi1[i * AUG + l]! * phi2[l * AUG + j]!;
      out[i * AUG + j] = s;
    }
  }
  return out;
}

function apply(phi: Propagator, x: ArrayLike<number>, out: number[]): void {
  for (let i = 0; i < STATE_SIZE; i++) {
    const r = i * AUG;
    let s = phi[r + STATE_SIZE]!;
    for (let j = 0; j < STATE_SIZE; j++) s += phi[r + j]! * x[j]!;
    out[i] = s;
  }
}

/**
 * Diagonal similarity by powers of two (Parlett–Reinsch). Amperes against volts per µs make
 * the raw matrix badly scaled (1/Coss ≈ 5·10³ next to 1/Llk ≈ 1); balanced, the Padé step
 * needs fewer squarings and its norm-wise error no longer leaks from the volt rows into the
 * ampere rows. Powers of two keep the similarity exact in floating point.
 */
function balancing(m: number[][]): number[] {
  const d = new Array<number>(AUG).fill(1);
  const a = m.map((row) => [...row]);
  for (let sweep = 0, changed = true; changed && sweep < 100; sweep++) {
    changed = false;
    for (let i = 0; i < AUG; i++) {
      let c = 0, r = 0;
      for (let j = 0; j < AUG; j++) {
        if (j === i) continue;
        c += Math.abs(a[j]![i]!);
        r += Math.abs(a[i]![j]!);
      }
      if (c === 0 || r === 0) continue;
      const s = c + r;
      let f = 1;
      while (c < r / 2) { c *= 4; f *= 2; }
      while (c >= r * 2) { c /= 4; f /= 2; }
      if ((c + r) / f < 0.95 * s) {
        changed = true;
        d[i]! *= f;
        for (let j = 0; j < AUG; j++) { a[i]![j]! /= f; a[j]![i]! *= f; }
      }
    }
  }
  return d;
}

/** Builds Φ(τ) for one system; the augmented matrix and its balancing are fixed per system. */
class ExactExponential {
  private readonly balanced: number[][];
  private readonly d: number[];

  constructor(system: AffineSystem) {
    const m: number[][] = [];
    for (let i = 0; i < AUG; i++) {
      const row = new Array<number>(AUG).fill(0);
      if (i < STATE_SIZE) {
        for (let j = 0; j < STATE_SIZE; j++) row[j] = system.A[i * STATE_SIZE + j]!;
        row[STATE_SIZE] = system.b[i]!;
      }
      m.push(row);
    }
    this.d = balancing(m);
    this.balanced = m.map((row, i) => row.map((v, j) => (v * this.d[j]!) / this.d[i]!));
  }

  /** Memoised: the sample fractions and the leading binary digits coincide (h/4, h/2). */
  private readonly memo = new Map<number, Propagator>();

  at(tau: number): Propagator {
    const known = this.memo.get(tau);
    if (known) return known;
    const e = expm(matrix(this.balanced.map((row) => row.map((v) => v * tau)))).toArray() as number[][];
    const phi = new Float64Array(STATE_SIZE * AUG);
    for (let i = 0; i < STATE_SIZE; i++) {
      for (let j = 0; j < AUG; j++) phi[i * AUG + j] = (this.d[i]! * e[i]![j]!) / this.d[j]!;
    }
    this.memo.set(tau, phi);
    return phi;
  }
}

export class ExpmSegmentIntegrator implements SegmentIntegrator {
  readonly substepsPerMaxStep: number;
  readonly samplesPerSubstep: number;
  readonly substepsPerPiece: number;
  /** Keyed by the system object (the model builds each mode once), then by the substep length. */
  private readonly tables = new WeakMap<AffineSystem, Map<number, Propagators>>();
  private readonly scratch = [new Array<number>(STATE_SIZE).fill(0), new Array<number>(STATE_SIZE).fill(0)];
  private evaluations = 0;

  constructor(settings: ExpmSettings = {}) {
    this.substepsPerMaxStep = settings.substepsPerMaxStep ?? 32;
    this.samplesPerSubstep = settings.samplesPerSubstep ?? 4;
    this.substepsPerPiece = settings.substepsPerPiece ?? 8;
  }

  private propagators(system: AffineSystem, step: number): Propagators {
    let bySystem = this.tables.get(system);
    if (!bySystem) { bySystem = new Map(); this.tables.set(system, bySystem); }
    let p = bySystem.get(step);
    if (!p) {
      const exp = new ExactExponential(system);
      const m = this.samplesPerSubstep;
      const samples: Propagator[] = [];
      for (let j = 1; j <= m; j++) samples.push(exp.at((step * j) / m));
      const digits: Propagator[][] = [];
      for (let level = 1; level <= DIGITS; level++) {
        // Φ(2ᵇ·256⁻ᴸ·h) for each bit b: from expm for the leading digit, whose error would
        // matter most; deeper digits square up from one expm per level (each squaring at most
        // doubles an absolute error of ~1e-16, and these factors only move the state by < 2⁻⁸·ωh).
        // Every digit value is then the product of its highest bit and the tabulated rest.
        const bits: Propagator[] = [exp.at(step * 2 ** (-DIGIT_BITS * level))];
        for (let b = 1; b < DIGIT_BITS; b++) {
          bits.push(level === 1 ? exp.at(step * 2 ** (b - DIGIT_BITS)) : compose(bits[b - 1]!, bits[b - 1]!));
        }
        const table: Propagator[] = [];
        for (let d = 1; d < RADIX; d++) {
          const high = 31 - Math.clz32(d);
          const rest = d - (1 << high);
          table.push(rest === 0 ? bits[high]! : compose(bits[high]!, table[rest - 1]!));
        }
        digits.push(table);
      }
      p = { step, samples, digits };
      bySystem.set(step, p);
    }
    return p;
  }

  /** out = Φ(τ)·[x; 1] for 0 ≤ τ ≤ h, from the base-256 digits of τ/h. */
  private propagate(p: Propagators, tau: number, x: ArrayLike<number>, out: number[]): void {
    let n = Math.round((tau / p.step) * FRACTION_SCALE);
    if (n >= FRACTION_SCALE) { apply(p.samples[p.samples.length - 1]!, x, out); this.evaluations++; return; }
    let [src, dst] = this.scratch as [number[], number[]];
    for (let i = 0; i < STATE_SIZE; i++) src[i] = x[i]!;
    for (let level = DIGITS; level >= 1 && n > 0; level--) {
      const d = n % RADIX;
      n = (n - d) / RADIX;
      if (d === 0) continue;
      apply(p.digits[level - 1]![d - 1]!, src, dst);
      this.evaluations++;
      [src, dst] = [dst, src];
    }
    for (let i = 0; i < STATE_SIZE; i++) out[i] = src[i]!;
  }

  integrate(problem: SegmentProblem): SegmentResult {
    const { system, events, observer, t0, tEnd } = problem;
    if (!(tEnd - t0 >= 0) || !(problem.maxStep > 0) || !problem.x0.every(Number.isFinite)) {
      return { status: 'failed', t: t0, x: [...problem.x0], eventIndex: -1, lastStep: 0, evaluations: 0, steps: 0, message: 'bad segment problem' };
    }
    if (!system || system.b.length !== STATE_SIZE) {
      return { status: 'failed', t: t0, x: [...problem.x0], eventIndex: -1, lastStep: 0, evaluations: 0, steps: 0, message: 'the exact solver takes linear five-state modes only' };
    }
    const h = problem.maxStep / this.substepsPerMaxStep;
    const p = this.propagators(system, h);
    const m = this.samplesPerSubstep;
    const perPiece = this.substepsPerPiece;
    this.evaluations = 0;
    let steps = 0;

    // Substep k spans [t0 + k·h, t0 + (k + 1)·h] (the last one ends at tEnd); starts[i] is the
    // state at the start of substep k0 + i of the observer piece in progress, starts[count]
    // the end of the latest one. Times are recomputed from k, so they never drift.
    const starts: number[][] = Array.from({ length: perPiece + 1 }, () => new Array<number>(STATE_SIZE).fill(0));
    for (let i = 0; i < STATE_SIZE; i++) starts[0]![i] = problem.x0[i]!;
    let k0 = 0, count = 0, lastTau = 0, generation = 0;
    const sample = new Array<number>(STATE_SIZE).fill(0);
    const probe = new Array<number>(STATE_SIZE).fill(0);
    const gPrev = events.map((g) => g(starts[0]!));
    const gNow = new Array<number>(events.length).fill(0);

    // Exact state anywhere in the piece in progress, from the start of the substep holding t.
    // Like odex's dense output it is valid only until the piece is handed on.
    let memoGeneration = -1, memoT = NaN;
    const memoX = new Array<number>(STATE_SIZE).fill(0);
    const stateAt: StateAt = (t, out) => {
      if (memoGeneration !== generation || memoT !== t) {
        let i = Math.floor((t - (t0 + k0 * h)) / h);
        i = Math.min(Math.max(i, 0), count - 1);
        const tau = t - (t0 + (k0 + i) * h);
        const limit = i === count - 1 ? lastTau : h;
        if (tau < -1e-9 * h || tau > limit + 1e-9 * h) {
          throw new RangeError(`stateAt(${t}) outside the piece [${t0 + k0 * h}, ${t0 + (k0 + count - 1) * h + lastTau}]`);
        }
        this.propagate(p, Math.min(Math.max(tau, 0), limit), starts[i]!, memoX);
        memoGeneration = generation;
        memoT = t;
      }
      for (let i = 0; i < STATE_SIZE; i++) out[i] = memoX[i]!;
    };
    let g = events[0];
    const gAt = (tq: number): number => { stateAt(tq, probe); return g!(probe); };

    for (let k = 0; ; k++) {
      const a = t0 + k * h;
      const last = tEnd - a <= h;
      const b = last ? tEnd : t0 + (k + 1) * h;
      const tauEnd = last ? tEnd - a : h;
      const xa = starts[count]!;
      count++;
      lastTau = tauEnd;
      steps++;

      let hitT = Infinity, hitIndex = -1;
      let tA = a;
      for (let j = 1; j <= m; j++) {
        const isEnd = j === m || (h * j) / m >= tauEnd;
        const tau = isEnd ? tauEnd : (h * j) / m;
        const x = isEnd ? starts[count]! : sample;
        if (tau === (h * j) / m) { apply(p.samples[j - 1]!, xa, x); this.evaluations++; }
        else this.propagate(p, tau, xa, x);
        const tB = isEnd ? b : a + tau;
        for (let e = 0; e < events.length; e++) {
          gNow[e] = events[e]!(x);
          if (gPrev[e]! < 0 && gNow[e]! >= 0) {
            g = events[e]!;
            const root = locateRisingRoot(gAt, tA, tB, gPrev[e]!, gNow[e]!, 1e-13 * Math.max(1, Math.abs(tB)));
            // Several crossings in one sample interval: the earliest one happened.
            if (root < hitT) { hitT = root; hitIndex = e; }
          }
        }
        for (let e = 0; e < events.length; e++) gPrev[e] = gNow[e]!;
        if (hitIndex >= 0 || isEnd) break;
        tA = tB;
      }

      if (hitIndex >= 0) {
        lastTau = hitT - a;
        const x = new Array<number>(STATE_SIZE);
        stateAt(hitT, x);
        observer?.(t0 + k0 * h, hitT, stateAt);
        return this.finish({ status: 'event', t: hitT, x, eventIndex: hitIndex, lastStep: h, evaluations: this.evaluations, steps });
      }
      if (last) {
        observer?.(t0 + k0 * h, tEnd, stateAt);
        return this.finish({ status: 'reached-end', t: tEnd, x: [...starts[count]!], eventIndex: -1, lastStep: h, evaluations: this.evaluations, steps });
      }
      if (count === perPiece) {
        observer?.(t0 + k0 * h, b, stateAt);
        // The piece's end state starts the next piece; swap buffers instead of copying.
        [starts[0], starts[count]] = [starts[count]!, starts[0]!];
        k0 = k + 1;
        count = 0;
        generation++;
      }
    }
  }

  private finish(result: SegmentResult): SegmentResult {
    if (!result.x.every(Number.isFinite)) {
      return { ...result, status: 'failed', eventIndex: -1, message: 'the state became non-finite' };
    }
    return result;
  }
}
