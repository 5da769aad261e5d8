// The exact solution of a linear mode dx/dt = A·x + b: x(t + τ) = Φ(τ)·[x; 1] with
// Φ(τ) = exp(τ·[[A, b], [0, 0]]). One Φ(h) per mode and step length advances a whole step in one
// matrix–vector product; inside a step the solution is its Taylor series, which converges fast
// because the step keeps ρ(A)·h small.

import type { AffineSystem } from '../model/affine.js';

/**
 * An upper bound on the spectral radius ρ(A) = max |λ|: ‖Aᵏ‖^(1/k) ≥ ρ(A) for every k and tends
 * to it, so 2⁶ = 64 squarings of the normalised matrix bound it within a few per cent where a
 * plain norm of the raw matrix (1/Coss per µs next to 1/Llk) would overstate it a hundredfold.
 */
export function spectralRadiusBound(A: readonly number[], n: number): number {
  let m: Float64Array = Float64Array.from(A);
  let logScale = 0;
  let power = 1;
  for (let k = 0; k < 6; k++) {
    const norm = infinityNorm(m, n);
    if (norm === 0 || !Number.isFinite(norm)) return norm === 0 ? 0 : Infinity;
    for (let i = 0; i < m.length; i++) m[i]! /= norm;
    logScale += Math.log(norm) / power;
    m = multiply(m, m, n);
    power *= 2;
  }
  const norm = infinityNorm(m, n);
  return norm === 0 ? 0 : Math.exp(logScale + Math.log(norm) / power);
}

function infinityNorm(m: Float64Array, n: number): number {
  let best = 0;
  for (let i = 0; i < n; i++) {
    let s = 0;
    for (let j = 0; j < n; j++) s += Math.abs(m[i * n + j]!);
    if (s > best) best = s;
  }
  return best;
}

function multiply(a: Float64Array, b: Float64Array, n: number): Float64Array {
  const out = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let l = 0; l < n; l++) {
      const ail = a[i * n + l]!;
      if (ail === 0) continue;
      for (let j = 0; j < n; j++) out[i * n + j]! += ail * b[l * n + j]!;
    }
  }
  return out;
}

/**
 * Powers of two d with D⁻¹·M·D balanced (row and column sums of magnitudes alike, Parlett and
 * Reinsch, Numer. Math. 13, 1969). Amperes next to volts per µs leave M badly scaled; balanced,
 * the series for exp needs few squarings and its rounding does not leak between rows. Powers of
 * two keep the similarity exact.
 */
function balance(m: Float64Array, n: number): Float64Array {
  const d = new Float64Array(n).fill(1);
  for (let sweep = 0; sweep < 64; sweep++) {
    let changed = false;
    for (let i = 0; i < n; i++) {
      let column = 0, row = 0;
      for (let j = 0; j < n; j++) {
        if (j === i) continue;
        column += Math.abs(m[j * n + i]!);
        row += Math.abs(m[i * n + j]!);
      }
      if (column === 0 || row === 0) continue;
      let f = 1;
      let c = column;
      while (c < row / 2) { c *= 4; f *= 2; }
      while (c >= row * 2) { c /= 4; f /= 2; }
      if (f !== 1 && (c + row) / f < 0.95 * (column + row)) {
        changed = true;
        d[i]! *= f;
        for (let j = 0; j < n; j++) { m[i * n + j]! /= f; m[j * n + i]! *= f; }
      }
    }
    if (!changed) break;
  }
  return d;
}

/** Terms of the exponential's series after scaling: ‖B‖ ≤ 1/4 leaves (1/4)¹⁸/18! ≈ 1e-27. */
const SERIES_TERMS = 18;

/**
 * Φ(τ) of the augmented system, as its top n rows of n + 1 columns (the last row is [0 … 0 1]).
 * Balanced, scaled by 2⁻ˢ to a norm of at most 1/4, summed as a series, squared s times.
 */
export function augmentedExponential(system: AffineSystem, tau: number): Float64Array {
  const n = system.b.length;
  const N = n + 1;
  const m = new Float64Array(N * N);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) m[i * N + j] = system.A[i * n + j]! * tau;
    m[i * N + n] = system.b[i]! * tau;
  }
  const d = balance(m, N);
  const norm = infinityNorm(m, N);
  const squarings = norm > 0.25 ? Math.ceil(Math.log2(norm / 0.25)) : 0;
  const scale = 2 ** -squarings;
  for (let i = 0; i < m.length; i++) m[i]! *= scale;
  let sum: Float64Array = new Float64Array(N * N);
  let term: Float64Array = new Float64Array(N * N);
  for (let i = 0; i < N; i++) { sum[i * N + i] = 1; term[i * N + i] = 1; }
  for (let k = 1; k <= SERIES_TERMS; k++) {
    term = multiply(term, m, N);
    for (let i = 0; i < term.length; i++) { term[i]! /= k; sum[i]! += term[i]!; }
  }
  for (let s = 0; s < squarings; s++) sum = multiply(sum, sum, N);
  const phi = new Float64Array(n * N);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < N; j++) phi[i * N + j] = (d[i]! * sum[i * N + j]!) / d[j]!;
  }
  return phi;
}

/** out = Φ·[x; 1] for Φ in the layout of augmentedExponential. */
export function propagate(phi: Float64Array, x: ArrayLike<number>, out: number[], n: number): number[] {
  const N = n + 1;
  for (let i = 0; i < n; i++) {
    const row = i * N;
    let s = phi[row + n]!;
    for (let j = 0; j < n; j++) s += phi[row + j]! * x[j]!;
    out[i] = s;
  }
  return out;
}

/** Terms for a Taylor series of the trajectory over τ with ρ(A)·τ ≤ rhoTau: (ρτ)ᴷ/K! below 1e-15. */
export function taylorTermsFor(rhoTau: number): number {
  let term = 1;
  for (let k = 1; k <= 60; k++) {
    term *= rhoTau / k;
    if (term < 1e-15) return Math.max(k, 4);
  }
  return 60;
}

/**
 * The trajectory from x0 as its Taylor series x(τ) = Σ vₖ·τᵏ, vₖ = x⁽ᵏ⁾(0)/k! (v₁ = A·x0 + b,
 * vₖ = A·vₖ₋₁/k): exact to rounding for τ up to the step it was sized for, at one Horner sum per
 * query.
 */
export class TaylorTrajectory {
  private readonly terms: Float64Array;
  private readonly n: number;
  private readonly order: number;

  constructor(system: AffineSystem, x0: ArrayLike<number>, order: number) {
    const n = system.b.length;
    const v = new Float64Array((order + 1) * n);
    for (let i = 0; i < n; i++) v[i] = x0[i]!;
    const A = system.A;
    for (let k = 1; k <= order; k++) {
      const prev = (k - 1) * n, cur = k * n;
      for (let i = 0; i < n; i++) {
        let s = k === 1 ? system.b[i]! : 0;
        for (let j = 0; j < n; j++) s += A[i * n + j]! * v[prev + j]!;
        v[cur + i] = s / k;
      }
    }
    this.terms = v;
    this.n = n;
    this.order = order;
  }

  at(tau: number, out: number[]): void {
    const v = this.terms, n = this.n, order = this.order;
    for (let i = 0; i < n; i++) {
      let s = v[order * n + i]!;
      for (let k = order - 1; k >= 0; k--) s = s * tau + v[k * n + i]!;
      out[i] = s;
    }
  }
}
