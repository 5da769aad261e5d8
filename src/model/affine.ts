// A linear mode as dx/dt = A·x + b, for the exact propagators that advance linear modes.

/** dx/dt = A·x + b, with A stored row-major (n² for n = b.length). */
export interface AffineSystem { A: readonly number[]; b: readonly number[] }

export function applySystem(sys: AffineSystem, x: ArrayLike<number>, out: number[]): number[] {
  const n = sys.b.length;
  for (let i = 0; i < n; i++) {
    let s = sys.b[i]!;
    const row = i * n;
    for (let j = 0; j < n; j++) s += sys.A[row + j]! * x[j]!;
    out[i] = s;
  }
  return out;
}
