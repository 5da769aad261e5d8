// Eigenvalues of a small real matrix (a linear mode's A): reduction to upper Hessenberg form by
// stabilised elementary similarity transforms, then Francis's implicit double-shift QR iteration
// (Golub & Van Loan, Matrix Computations, 4th ed., §7.5). The exact stepper needs only the rates they
// imply (the fastest oscillation and the fastest decay), so a few per cent would do; the method
// gives them to rounding.

export interface Eigenvalue { re: number; im: number }

/** Row-major n×n in, its n eigenvalues out (complex pairs as conjugates); null if QR did not converge. */
export function eigenvalues(matrixRowMajor: readonly number[], n: number): Eigenvalue[] | null {
  const a: number[][] = Array.from({ length: n }, (_, i) => matrixRowMajor.slice(i * n, i * n + n));
  toHessenberg(a, n);
  return hessenbergQr(a, n);
}

/** In place: a ← L⁻¹·a·L, upper Hessenberg, choosing the largest pivot below each subdiagonal. */
function toHessenberg(a: number[][], n: number): void {
  for (let col = 1; col < n - 1; col++) {
    let pivotRow = col, pivot = 0;
    for (let i = col; i < n; i++) {
      if (Math.abs(a[i]![col - 1]!) > Math.abs(pivot)) { pivot = a[i]![col - 1]!; pivotRow = i; }
    }
    if (pivotRow !== col) {
      [a[pivotRow], a[col]] = [a[col]!, a[pivotRow]!];
      for (let i = 0; i < n; i++) { const t = a[i]![pivotRow]!; a[i]![pivotRow] = a[i]![col]!; a[i]![col] = t; }
    }
    if (pivot === 0) continue;
    for (let i = col + 1; i < n; i++) {
      const f = a[i]![col - 1]! / pivot;
      if (f === 0) continue;
      for (let j = col - 1; j < n; j++) a[i]![j]! -= f * a[col]![j]!;
      for (let j = 0; j < n; j++) a[j]![col]! += f * a[j]![i]!;
    }
  }
}

const MAX_SWEEPS_PER_EIGENVALUE = 60;

/** Francis double-shift QR on an upper Hessenberg matrix, deflating from the bottom. */
function hessenbergQr(a: number[][], n: number): Eigenvalue[] | null {
  const out: Eigenvalue[] = [];
  let norm = 0;
  for (let i = 0; i < n; i++) for (let j = Math.max(0, i - 1); j < n; j++) norm += Math.abs(a[i]![j]!);
  if (norm === 0) return Array.from({ length: n }, () => ({ re: 0, im: 0 }));
  let hi = n - 1;
  let sweeps = 0;
  while (hi >= 0) {
    // The lowest negligible subdiagonal entry splits off the active block [lo, hi].
    let lo = hi;
    while (lo > 0) {
      const s = Math.abs(a[lo - 1]![lo - 1]!) + Math.abs(a[lo]![lo]!) || norm;
      if (Math.abs(a[lo]![lo - 1]!) <= Number.EPSILON * s) { a[lo]![lo - 1] = 0; break; }
      lo--;
    }
    if (lo === hi) {
      out.push({ re: a[hi]![hi]!, im: 0 });
      hi--; sweeps = 0;
      continue;
    }
    if (lo === hi - 1) {
      out.push(...twoByTwo(a[hi - 1]![hi - 1]!, a[hi - 1]![hi]!, a[hi]![hi - 1]!, a[hi]![hi]!));
      hi -= 2; sweeps = 0;
      continue;
    }
    if (++sweeps > MAX_SWEEPS_PER_EIGENVALUE) return null;
    // Shifts: the eigenvalues of the trailing 2×2 block, through their sum and product (an
    // exceptional shift now and then breaks a cycle).
    let trace = a[hi - 1]![hi - 1]! + a[hi]![hi]!;
    let det = a[hi - 1]![hi - 1]! * a[hi]![hi]! - a[hi - 1]![hi]! * a[hi]![hi - 1]!;
    if (sweeps % 11 === 10) {
      const s = Math.abs(a[hi]![hi - 1]!) + Math.abs(a[hi - 1]![hi - 2]!);
      trace = 1.5 * s;
      det = s * s;
    }
    // First column of (H − σ1)(H − σ2), which the bulge chase then restores to Hessenberg form.
    let x = a[lo]![lo]! * a[lo]![lo]! + a[lo]![lo + 1]! * a[lo + 1]![lo]! - trace * a[lo]![lo]! + det;
    let y = a[lo + 1]![lo]! * (a[lo]![lo]! + a[lo + 1]![lo + 1]! - trace);
    let z = lo + 2 <= hi ? a[lo + 2]![lo + 1]! * a[lo + 1]![lo]! : 0;
    for (let k = lo; k <= hi - 1; k++) {
      const rows = k + 2 <= hi ? 3 : 2;
      const v = householder(x, y, rows === 3 ? z : 0);
      if (v) {
        const [v0, v1, v2, beta] = v;
        const first = Math.max(lo, k - 1);
        for (let j = first; j < n; j++) {
          const dot = v0 * a[k]![j]! + v1 * a[k + 1]![j]! + (rows === 3 ? v2 * a[k + 2]![j]! : 0);
          const f = beta * dot;
          a[k]![j]! -= f * v0; a[k + 1]![j]! -= f * v1;
          if (rows === 3) a[k + 2]![j]! -= f * v2;
        }
        const last = Math.min(hi, k + 3);
        for (let i = 0; i <= last; i++) {
          const dot = v0 * a[i]![k]! + v1 * a[i]![k + 1]! + (rows === 3 ? v2 * a[i]![k + 2]! : 0);
          const f = beta * dot;
          a[i]![k]! -= f * v0; a[i]![k + 1]! -= f * v1;
          if (rows === 3) a[i]![k + 2]! -= f * v2;
        }
      }
      x = a[k + 1]![k]!;
      y = k + 2 <= hi ? a[k + 2]![k]! : 0;
      z = k + 3 <= hi ? a[k + 3]![k]! : 0;
    }
  }
  return out;
}

/** A Householder reflector I − β·v·vᵀ taking (x, y, z) to a multiple of e1; null if it is zero. */
function householder(x: number, y: number, z: number): [number, number, number, number] | null {
  const scale = Math.abs(x) + Math.abs(y) + Math.abs(z);
  if (scale === 0) return null;
  const xs = x / scale, ys = y / scale, zs = z / scale;
  const alpha = (xs >= 0 ? 1 : -1) * Math.hypot(xs, ys, zs);
  const v0 = xs + alpha;
  const vv = v0 * v0 + ys * ys + zs * zs;
  if (vv === 0) return null;
  return [v0, ys, zs, 2 / vv];
}

/** Eigenvalues of [[p, q], [r, s]]. */
function twoByTwo(p: number, q: number, r: number, s: number): Eigenvalue[] {
  const half = (p - s) / 2;
  const disc = half * half + q * r;
  const mid = (p + s) / 2;
  if (disc >= 0) {
    const root = Math.sqrt(disc);
    // The larger root from the sum, the smaller from the product: no cancellation.
    const big = mid + (mid >= 0 ? root : -root);
    const det = p * s - q * r;
    const small = big !== 0 ? det / big : mid - (mid >= 0 ? root : -root);
    return [{ re: big, im: 0 }, { re: small, im: 0 }];
  }
  const im = Math.sqrt(-disc);
  return [{ re: mid, im }, { re: mid, im: -im }];
}
