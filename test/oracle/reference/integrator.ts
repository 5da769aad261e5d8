// General-purpose pieces of the reference integrator: the classic fourth-order Runge–Kutta step
// (Kutta 1901) with a fixed step, and root location of a rising crossing by the Illinois variant of
// regula falsi with bisection safeguards. Events are located on a re-integration from the step's
// start with a shorter step, so the located state has the same order of accuracy as a full step.

export type Derivative = (t: number, x: Float64Array, dx: Float64Array) => void;

export class RungeKutta4 {
  private readonly k2: Float64Array;
  private readonly k3: Float64Array;
  private readonly k4: Float64Array;
  private readonly stage: Float64Array;

  constructor(readonly size: number) {
    this.k2 = new Float64Array(size);
    this.k3 = new Float64Array(size);
    this.k4 = new Float64Array(size);
    this.stage = new Float64Array(size);
  }

  /** out = x(t + h) from x(t) with k1 = f(t, x) given (it is reused by event location and the next step). */
  step(f: Derivative, t: number, x: Float64Array, k1: Float64Array, h: number, out: Float64Array): void {
    const { k2, k3, k4, stage, size } = this;
    const half = 0.5 * h;
    for (let i = 0; i < size; i++) stage[i] = x[i]! + half * k1[i]!;
    f(t + half, stage, k2);
    for (let i = 0; i < size; i++) stage[i] = x[i]! + half * k2[i]!;
    f(t + half, stage, k3);
    for (let i = 0; i < size; i++) stage[i] = x[i]! + h * k3[i]!;
    f(t + h, stage, k4);
    const sixth = h / 6;
    for (let i = 0; i < size; i++) out[i] = x[i]! + sixth * (k1[i]! + 2 * (k2[i]! + k3[i]!) + k4[i]!);
  }
}

/**
 * The smallest θ in (0, 1] where g rises through zero, given g(0) < 0 ≤ g(1). Returns the right end
 * of the final bracket, where g ≥ 0 holds, so that the condition that caused the event is true in the
 * state the integrator restarts from. Illinois regula falsi (Dowell & Jarratt 1971) with a bisection
 * every fourth iteration, so a stalled end cannot slow it below bisection.
 */
export function locateRisingRoot(g: (theta: number) => number, gLeft: number, gRight: number, thetaTolerance: number): number {
  let a = 0, b = 1, fa = gLeft, fb = gRight;
  let lastSide = 0;
  for (let iteration = 0; iteration < 200 && b - a > thetaTolerance; iteration++) {
    let c = iteration % 4 === 3 ? 0.5 * (a + b) : (a * fb - b * fa) / (fb - fa);
    if (!(c > a && c < b)) c = 0.5 * (a + b);
    const fc = g(c);
    if (fc >= 0) {
      b = c;
      fb = fc;
      if (lastSide === 1) fa *= 0.5;
      lastSide = 1;
      if (fc === 0) break;
    } else {
      a = c;
      fa = fc;
      if (lastSide === -1) fb *= 0.5;
      lastSide = -1;
    }
  }
  return b;
}
