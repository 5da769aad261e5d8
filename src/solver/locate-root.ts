// Bracketed root finding (Illinois variant of regula falsi) for event location on an
// interpolant: superlinear, never leaves the bracket.

/**
 * Finds t in (a, b] with h(t) = 0, given h(a) < 0 ≤ h(b). Returns the smallest bracket end at
 * which h ≥ 0, so the event is never placed before the crossing.
 */
export function locateRisingRoot(h: (t: number) => number, a: number, b: number, ha: number, hb: number, timeTolerance: number): number {
  let lo = a, hi = b, hLo = ha, hHi = hb;
  let side = 0;
  for (let iter = 0; iter < 100 && hi - lo > timeTolerance; iter++) {
    let t = hi - (hHi * (hi - lo)) / (hHi - hLo);
    if (!(t > lo && t < hi)) t = 0.5 * (lo + hi);
    const ht = h(t);
    if (ht < 0) {
      lo = t; hLo = ht;
      if (side === -1) hHi *= 0.5;
      side = -1;
    } else {
      hi = t; hHi = ht;
      if (side === 1) hLo *= 0.5;
      side = 1;
    }
  }
  return hi;
}
