// The drain-node capacitance of the spec: the transistor's Coss from points with ln C linear in v
// between them (constant C0 below 0 V and Cn above the last point), plus constant extras (winding
// capacitance, and the clamp diode's junction capacitance when it is lumped with the drain).
// Integrals are by Gauss–Legendre quadrature on each segment (nodes from Newton's method on the
// Legendre recurrence), so that the tests can compare them with closed forms of the exponential.

import type { CossPoint } from './netlist.js';

export interface QuadratureRule { readonly nodes: readonly number[]; readonly weights: readonly number[] }

/** n-point Gauss–Legendre rule on [−1, 1]: nodes are roots of Pn, found by Newton from the Chebyshev-like guess. */
export function gaussLegendreRule(n: number): QuadratureRule {
  const nodes = new Array<number>(n).fill(0);
  const weights = new Array<number>(n).fill(0);
  for (let i = 0; i < Math.ceil(n / 2); i++) {
    let x = Math.cos((Math.PI * (i + 0.75)) / (n + 0.5));
    let derivative = 1;
    for (let iteration = 0; iteration < 100; iteration++) {
      let pPrevious = 1;
      let p = x;
      for (let k = 2; k <= n; k++) {
        const pNext = ((2 * k - 1) * x * p - (k - 1) * pPrevious) / k;
        pPrevious = p;
        p = pNext;
      }
      derivative = (n * (x * p - pPrevious)) / (x * x - 1);
      const dx = p / derivative;
      x -= dx;
      if (Math.abs(dx) < 1e-16) break;
    }
    const w = 2 / ((1 - x * x) * derivative * derivative);
    nodes[i] = -x;
    nodes[n - 1 - i] = x;
    weights[i] = w;
    weights[n - 1 - i] = w;
  }
  return { nodes, weights };
}

const RULE = gaussLegendreRule(24);

/** ∫ₐᵇ f by the 24-point Gauss–Legendre rule, split into `pieces` equal parts. */
export function integrate(f: (v: number) => number, a: number, b: number, pieces = 2): number {
  let sum = 0;
  const width = (b - a) / pieces;
  for (let piece = 0; piece < pieces; piece++) {
    const mid = a + (piece + 0.5) * width;
    let partial = 0;
    for (let k = 0; k < RULE.nodes.length; k++) partial += RULE.weights[k]! * f(mid + 0.5 * width * RULE.nodes[k]!);
    sum += 0.5 * width * partial;
  }
  return sum;
}

/**
 * Segments, numbered for event bookkeeping: 0 is v < V0 (= 0 V), s in 1…n is V(s−1) ≤ v < V(s),
 * n+1 is v ≥ Vn. Within a segment the capacitance is one smooth formula, extended past its ends,
 * so that a Runge–Kutta step never straddles a kink (the integrator steps to each breakpoint).
 */
export class DrainCapacitance {
  private readonly volts: number[];
  private readonly farads: number[];
  /** ln-slope of segment s (1…n), 1/V. */
  private readonly slopes: number[];
  /** ∫₀^V(k) u·Coss(u) du at each breakpoint. */
  private readonly energyAtBreakpoint: number[];
  readonly breakpointVolts: readonly number[];
  /** More than one point: the curve has kinks that the integrator must step to. */
  readonly hasKinks: boolean;

  constructor(points: readonly CossPoint[], readonly extraFarads: number) {
    this.volts = points.map((p) => p.volts);
    this.farads = points.map((p) => p.farads);
    this.breakpointVolts = this.volts;
    this.hasKinks = points.length > 1;
    this.slopes = [0];
    for (let s = 1; s < points.length; s++) {
      this.slopes.push(Math.log(this.farads[s]! / this.farads[s - 1]!) / (this.volts[s]! - this.volts[s - 1]!));
    }
    this.energyAtBreakpoint = [0];
    for (let s = 1; s < points.length; s++) {
      const a = this.volts[s - 1]!;
      const b = this.volts[s]!;
      this.energyAtBreakpoint.push(this.energyAtBreakpoint[s - 1]! + integrate((u) => u * this.cossOnSegment(s, u), a, b));
    }
  }

  get lastSegment(): number { return this.volts.length; }

  segmentOf(v: number): number {
    if (v < this.volts[0]!) return 0;
    for (let s = 1; s < this.volts.length; s++) if (v < this.volts[s]!) return s;
    return this.volts.length;
  }

  /** The transistor's Coss by the formula of segment s, F. */
  cossOnSegment(s: number, v: number): number {
    if (s <= 0) return this.farads[0]!;
    if (s >= this.volts.length) return this.farads[this.farads.length - 1]!;
    return this.farads[s - 1]! * Math.exp(this.slopes[s]! * (v - this.volts[s - 1]!));
  }

  coss(v: number): number { return this.cossOnSegment(this.segmentOf(v), v); }

  /** dCoss/dv by the formula of segment s, F/V. */
  cossSlopeOnSegment(s: number, v: number): number {
    if (s <= 0 || s >= this.volts.length) return 0;
    return this.slopes[s]! * this.cossOnSegment(s, v);
  }

  /** Cnode on segment s, F. */
  nodeOnSegment(s: number, v: number): number { return this.cossOnSegment(s, v) + this.extraFarads; }

  /** Smallest Cnode anywhere: it sets the fastest ring. */
  get minimumNodeFarads(): number { return Math.min(...this.farads) + this.extraFarads; }

  /** ∫₀ᵛ u·Coss(u) du, J. */
  cossEnergy(v: number): number {
    if (v <= 0) return 0.5 * this.farads[0]! * v * v;
    const s = this.segmentOf(v);
    const base = this.volts[s - 1]!;
    return this.energyAtBreakpoint[s - 1]! + integrate((u) => u * this.cossOnSegment(s, u), base, v);
  }

  /** Enode(v) = ∫₀ᵛ u·Cnode(u) du, J. */
  nodeEnergy(v: number): number { return this.cossEnergy(v) + 0.5 * this.extraFarads * v * v; }

  /** ∫₀ᵛ Coss(u) du, C (charge). */
  cossCharge(v: number): number {
    if (v <= 0) return this.farads[0]! * v;
    let sum = 0;
    for (let s = 1; s <= this.volts.length; s++) {
      const a = this.volts[s - 1]!;
      const b = s < this.volts.length ? Math.min(this.volts[s]!, v) : v;
      if (b > a) sum += integrate((u) => this.cossOnSegment(s, u), a, b);
      if (b >= v) break;
    }
    return sum;
  }
}

/** Co(er) = 2·∫₀ⱽ v·Coss dv / V² and Co(tr) = ∫₀ⱽ Coss dv / V, of the transistor's curve alone. */
export function equivalentCapacitances(points: readonly CossPoint[], volts: number): { energyFarads: number; chargeFarads: number } {
  const curve = new DrainCapacitance(points, 0);
  return { energyFarads: (2 * curve.cossEnergy(volts)) / (volts * volts), chargeFarads: curve.cossCharge(volts) / volts };
}
