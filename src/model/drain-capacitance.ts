// The drain node's capacitance against voltage: the transistor's Coss as a constant or as datasheet
// points (ln C linear in V between points, the last value beyond, C(0) below 0 V), plus constant
// capacitances that charge with the drain (winding, lumped junction). Charge and energy have closed
// forms per segment, so the energy balance and the turn-on loss are exact for any curve.

import type { CapacitanceCurve } from '../circuit/scenario.js';

interface Segment {
  /** Start voltage, V, and capacitance there, F. */
  v0: number;
  c0: number;
  /** d(ln C)/dV over the segment, 1/V; 0 beyond the last point. */
  k: number;
  /** ∫₀^v0 C dv (C) and ∫₀^v0 v·C dv (J) of the curve alone. */
  q0: number;
  e0: number;
}

/** (e^x − 1)/x, accurate near 0. */
const expm1OverX = (x: number): number => (Math.abs(x) < 1e-8 ? 1 + x / 2 : Math.expm1(x) / x);
/** (x·e^x − e^x + 1)/x², accurate near 0. */
const momentKernel = (x: number): number => (Math.abs(x) < 1e-3 ? 0.5 + x / 3 + (x * x) / 8 + (x * x * x) / 30 : (x * Math.exp(x) - Math.expm1(x)) / (x * x));

export class DrainCapacitance {
  private readonly segments: Segment[];
  /** True when the transistor's capacitance does not depend on voltage (a linear node). */
  readonly isConstant: boolean;

  /**
   * @param coss the transistor's capacitance, F, or its datasheet points
   * @param extra constant capacitance charged with the drain, F (winding, lumped junction)
   */
  constructor(coss: number | CapacitanceCurve, readonly extra = 0) {
    const points: ReadonlyArray<readonly [number, number]> = typeof coss === 'number' ? [[0, coss]] : coss;
    this.isConstant = points.every(([, c]) => c === points[0]![1]);
    this.segments = [];
    let q0 = 0, e0 = 0;
    for (let i = 0; i < points.length; i++) {
      const [v0, c0] = points[i]!;
      const next = points[i + 1];
      const k = next ? Math.log(next[1] / c0) / (next[0] - v0) : 0;
      this.segments.push({ v0, c0, k, q0, e0 });
      if (next) {
        const d = next[0] - v0;
        q0 += c0 * d * expm1OverX(k * d);
        e0 += c0 * (v0 * d * expm1OverX(k * d) + d * d * momentKernel(k * d));
      }
    }
  }

  private segmentAt(v: number): Segment {
    const s = this.segments;
    let i = s.length - 1;
    while (i > 0 && v < s[i]!.v0) i--;
    return s[i]!;
  }

  /** Coss(v) alone, F. */
  transistorAt(v: number): number {
    if (v <= 0) return this.segments[0]!.c0;
    const s = this.segmentAt(v);
    return s.c0 * Math.exp(s.k * (v - s.v0));
  }

  /** Node capacitance at v, F. */
  at(v: number): number {
    return this.transistorAt(v) + this.extra;
  }

  /** ∫₀ᵛ Coss dv of the transistor alone, C. */
  transistorCharge(v: number): number {
    if (v <= 0) return this.segments[0]!.c0 * v;
    const s = this.segmentAt(v);
    const d = v - s.v0;
    return s.q0 + s.c0 * d * expm1OverX(s.k * d);
  }

  /** ∫₀ᵛ u·Coss(u) du of the transistor alone, J. */
  transistorEnergy(v: number): number {
    if (v <= 0) return 0.5 * this.segments[0]!.c0 * v * v;
    const s = this.segmentAt(v);
    const d = v - s.v0;
    return s.e0 + s.c0 * (s.v0 * d * expm1OverX(s.k * d) + d * d * momentKernel(s.k * d));
  }

  /** Energy held by the node at v, J: the curve's plus ½·Cextra·v². */
  energy(v: number): number {
    return this.transistorEnergy(v) + 0.5 * this.extra * v * v;
  }

  /** The smallest node capacitance at any voltage, F: it sets the fastest ring. */
  minimum(): number {
    let c = Infinity;
    for (const s of this.segments) c = Math.min(c, s.c0);
    return c + this.extra;
  }
}

/**
 * The datasheet's equivalent constants of a Coss curve over 0…V: energy-related
 * Co(er) = 2·∫₀ⱽ v·C dv / V² and time-related (charge) Co(tr) = ∫₀ⱽ C dv / V.
 */
export function outputCapacitanceEquivalents(coss: number | CapacitanceCurve, voltage: number): { energyEquivalent: number; chargeEquivalent: number } {
  const c = new DrainCapacitance(coss);
  return {
    energyEquivalent: (2 * c.transistorEnergy(voltage)) / (voltage * voltage),
    chargeEquivalent: c.transistorCharge(voltage) / voltage,
  };
}
