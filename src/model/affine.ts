// The model is piecewise linear: in every mode dx/dt = A·x + b, and every event function and
// device current is an affine form c·x + k. These helpers keep that structure explicit.

export const STATE_SIZE = 5;
/** State vector indices: primary (leakage) current, magnetizing current, drain, clamp cap above the rail, damper cap. */
export const IP = 0, IM = 1, VD = 2, VC = 3, VS = 4;
export type State = Float64Array | number[];

/** An affine scalar function of the state: c·x + k. */
export interface AffineForm { c: readonly number[]; k: number }

/** dx/dt = A·x + b, with A stored row-major (STATE_SIZE²). */
export interface AffineSystem { A: readonly number[]; b: readonly number[] }

export const form = (c: number[], k = 0): AffineForm => ({ c, k });
export const unit = (i: number, scale = 1): AffineForm => {
  const c = new Array<number>(STATE_SIZE).fill(0);
  c[i] = scale;
  return { c, k: 0 };
};
export const constant = (k: number): AffineForm => ({ c: new Array<number>(STATE_SIZE).fill(0), k });

export function combine(...terms: Array<[number, AffineForm]>): AffineForm {
  const c = new Array<number>(STATE_SIZE).fill(0);
  let k = 0;
  for (const [w, f] of terms) {
    for (let i = 0; i < STATE_SIZE; i++) c[i]! += w * f.c[i]!;
    k += w * f.k;
  }
  return { c, k };
}

export function evaluate(f: AffineForm, x: State): number {
  let s = f.k;
  for (let i = 0; i < STATE_SIZE; i++) s += f.c[i]! * x[i]!;
  return s;
}

/** Builds a system from one derivative form per state component. */
export function systemFromRows(rows: readonly AffineForm[]): AffineSystem {
  const A: number[] = [];
  const b: number[] = [];
  for (const row of rows) {
    A.push(...row.c);
    b.push(row.k);
  }
  return { A, b };
}

/** The time derivative of an affine form along the system: d(c·x + k)/dt = (c·A)·x + c·b. */
export function rateOf(f: AffineForm, sys: AffineSystem): AffineForm {
  const c = new Array<number>(STATE_SIZE).fill(0);
  let k = 0;
  for (let i = 0; i < STATE_SIZE; i++) {
    const ci = f.c[i]!;
    if (ci === 0) continue;
    for (let j = 0; j < STATE_SIZE; j++) c[j]! += ci * sys.A[i * STATE_SIZE + j]!;
    k += ci * sys.b[i]!;
  }
  return { c, k };
}

export function applySystem(sys: AffineSystem, x: State, out: number[]): number[] {
  for (let i = 0; i < STATE_SIZE; i++) {
    let s = sys.b[i]!;
    const row = i * STATE_SIZE;
    for (let j = 0; j < STATE_SIZE; j++) s += sys.A[row + j]! * x[j]!;
    out[i] = s;
  }
  return out;
}
