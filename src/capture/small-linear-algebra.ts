// Dense symmetric solves for the small normal equations of the least-squares fits (at most a few
// dozen unknowns), by Cholesky factorisation (Golub & Van Loan, "Matrix Computations", §4.2).

/** A square matrix as rows. */
export type Matrix = number[][];

/**
 * Lower-triangular L with A = L·Lᵀ, or null when A is not numerically positive definite (a
 * parameter the data cannot determine), so the caller can report it instead of dividing by zero.
 */
export function cholesky(a: Matrix): Matrix | null {
  const n = a.length;
  const l: Matrix = Array.from({ length: n }, () => new Array<number>(n).fill(0));
  for (let j = 0; j < n; j++) {
    let diagonal = a[j]![j]!;
    for (let k = 0; k < j; k++) diagonal -= l[j]![k]! ** 2;
    if (!(diagonal > 1e-300) || !Number.isFinite(diagonal)) return null;
    const root = Math.sqrt(diagonal);
    l[j]![j] = root;
    for (let i = j + 1; i < n; i++) {
      let s = a[i]![j]!;
      for (let k = 0; k < j; k++) s -= l[i]![k]! * l[j]![k]!;
      l[i]![j] = s / root;
    }
  }
  return l;
}

/** Solves L·Lᵀ·x = b for a factor from `cholesky`. */
export function choleskySolve(l: Matrix, b: readonly number[]): number[] {
  const n = l.length;
  const y = new Array<number>(n).fill(0);
  for (let i = 0; i < n; i++) {
    let s = b[i]!;
    for (let k = 0; k < i; k++) s -= l[i]![k]! * y[k]!;
    y[i] = s / l[i]![i]!;
  }
  const x = new Array<number>(n).fill(0);
  for (let i = n - 1; i >= 0; i--) {
    let s = y[i]!;
    for (let k = i + 1; k < n; k++) s -= l[k]![i]! * x[k]!;
    x[i] = s / l[i]![i]!;
  }
  return x;
}

/** Diagonal of A⁻¹ (the variances, once scaled by the residual variance), or null if A is singular. */
export function inverseDiagonal(a: Matrix): number[] | null {
  const l = cholesky(a);
  if (!l) return null;
  const n = a.length;
  const out = new Array<number>(n).fill(0);
  for (let i = 0; i < n; i++) {
    const e = new Array<number>(n).fill(0);
    e[i] = 1;
    out[i] = choleskySolve(l, e)[i]!;
  }
  return out;
}

/** JᵀJ and Jᵀr from Jacobian columns and a residual vector of equal length. */
export function normalEquations(columns: readonly Float64Array[], residual: Float64Array): { jtj: Matrix; jtr: number[] } {
  const p = columns.length;
  const jtj: Matrix = Array.from({ length: p }, () => new Array<number>(p).fill(0));
  const jtr = new Array<number>(p).fill(0);
  for (let a = 0; a < p; a++) {
    const ca = columns[a]!;
    let g = 0;
    for (let k = 0; k < residual.length; k++) g += ca[k]! * residual[k]!;
    jtr[a] = g;
    for (let b = 0; b <= a; b++) {
      const cb = columns[b]!;
      let s = 0;
      for (let k = 0; k < residual.length; k++) s += ca[k]! * cb[k]!;
      jtj[a]![b] = s;
      jtj[b]![a] = s;
    }
  }
  return { jtj, jtr };
}
