// Classifies the sequence of period-start states: settled (estimated within the tolerance of a
// fixed point, from the change per cycle and its rate of decrease), a period-p orbit
// (peak-current control above 50 % duty in continuous conduction doubles its period), or
// non-periodic. Distances are max-norms of the change, each component divided by its scale.

export type OrbitKind = 'settled' | 'period-2' | 'period-3' | 'period-4' | 'non-periodic' | 'cycle-cap';

const STALL_WINDOW = 100;

export class OrbitTracker {
  private readonly history: number[][] = [];
  private readonly changes: number[] = [];
  private readonly periodicHits = [0, 0, 0, 0, 0];
  private settledHits = 0;
  /** Latest cycle-to-cycle change, relative to the scales. */
  lastChange = Infinity;
  /** Estimated distance from the steady state, relative to the scales. */
  remaining = Infinity;

  constructor(private readonly scales: readonly number[], private readonly tolerance: number, private readonly maxCycles: number) {}

  private distance(a: readonly number[], b: readonly number[]): number {
    let d = 0;
    for (let i = 0; i < a.length; i++) d = Math.max(d, Math.abs(a[i]! - b[i]!) / this.scales[i]!);
    return d;
  }

  /** Adds the state at the start of a new cycle; returns a verdict, or null to keep going. */
  push(startState: readonly number[]): OrbitKind | null {
    const h = this.history;
    h.push([...startState]);
    if (h.length > 5) h.shift();
    const k = h.length - 1;
    if (k >= 1) {
      const change = this.distance(h[k]!, h[k - 1]!);
      const previous = this.changes[this.changes.length - 1];
      this.lastChange = change;
      this.changes.push(change);
      // Distance still to go, if the changes keep shrinking by ρ per cycle: change·ρ/(1 − ρ) plus
      // this cycle's change. ρ is clipped at 0.99 so that solver noise cannot block the verdict.
      const rho = previous && previous > 0 ? Math.min(0.99, Math.max(0, change / previous)) : 0;
      this.remaining = change / (1 - rho);
      this.settledHits = this.remaining < this.tolerance ? this.settledHits + 1 : 0;
      if (this.settledHits >= 2) return 'settled';
      for (let p = 2; p <= 4; p++) {
        if (k < p) continue;
        const recurs = this.distance(h[k]!, h[k - p]!) < this.tolerance;
        this.periodicHits[p] = recurs ? this.periodicHits[p]! + 1 : 0;
        // A slowly converging alternating sequence also recurs every two cycles: only a one-step
        // change that has stopped shrinking makes it an orbit of its own.
        const earlier = this.changes[this.changes.length - 1 - 2 * p];
        const stalled = earlier !== undefined && change >= 0.95 * earlier;
        if (this.periodicHits[p]! >= p + 1 && stalled) return `period-${p}` as OrbitKind;
      }
    }
    const n = this.changes.length;
    if (n >= 3 * STALL_WINDOW) {
      const recent = Math.min(...this.changes.slice(n - STALL_WINDOW));
      const before = Math.min(...this.changes.slice(n - 2 * STALL_WINDOW, n - STALL_WINDOW));
      if (recent > 0.9 * before) return 'non-periodic';
    }
    if (n + 1 >= this.maxCycles) return 'cycle-cap';
    return null;
  }
}
