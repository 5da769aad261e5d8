// Classifies the sequence of period-start states: settled (the change per cycle below the
// tolerance, and the estimated distance still to go too), a period-p orbit
// (peak-current control above 50 % duty in continuous conduction doubles its period), or
// non-periodic. Distances are max-norms of the change, each component divided by its scale.

export type OrbitKind = 'settled' | 'period-2' | 'period-3' | 'period-4' | 'non-periodic' | 'cycle-cap';

const STALL_WINDOW = 100;
const FIT_WINDOW = 8;

/**
 * The rest of a geometric tail after the latest change, when the last FIT_WINDOW changes fall
 * on a line in log scale (R² > 0.9, ρ < 1); zero when they scatter instead.
 */
function remainingTail(changes: readonly number[]): number {
  if (changes.length < FIT_WINDOW) return Infinity;
  const ys = changes.slice(-FIT_WINDOW).map((c) => Math.log(Math.max(c, 1e-300)));
  const n = ys.length;
  const xMean = (n - 1) / 2;
  const yMean = ys.reduce((a, b) => a + b, 0) / n;
  let sxy = 0, sxx = 0, syy = 0;
  ys.forEach((y, i) => { sxy += (i - xMean) * (y - yMean); sxx += (i - xMean) ** 2; syy += (y - yMean) ** 2; });
  const slope = sxy / sxx;
  const r2 = syy === 0 ? 1 : (sxy * sxy) / (sxx * syy);
  const rho = Math.exp(slope);
  if (!(rho < 1) || r2 < 0.9) return 0;
  return (changes[changes.length - 1]! * rho) / (1 - rho);
}

export class OrbitTracker {
  private readonly history: number[][] = [];
  private readonly changes: number[] = [];
  private readonly periodicHits = [0, 0, 0, 0, 0];
  private settledHits = 0;
  private pushes = 0;
  private readonly componentChanges: number[][] = [];
  /** Latest cycle-to-cycle change, relative to the scales. */
  lastChange = Infinity;
  /** Estimated distance from the steady state, relative to the scales (the change itself when not contracting). */
  remaining = Infinity;

  constructor(private readonly scales: readonly number[], private readonly tolerance: number, private readonly maxCycles: number) {}

  private distance(a: readonly number[], b: readonly number[]): number {
    let d = 0;
    for (let i = 0; i < a.length; i++) d = Math.max(d, Math.abs(a[i]! - b[i]!) / this.scales[i]!);
    return d;
  }

  /**
   * The cycle loop moved the latest state (an extrapolation jump): the next change is measured
   * from the new state, and the rate of decrease is estimated afresh.
   */
  replaceLatest(state: readonly number[]): void {
    if (this.history.length > 0) this.history[this.history.length - 1] = [...state];
    this.history.splice(0, this.history.length - 1);
    this.changes.length = 0;
    this.componentChanges.length = 0;
    this.settledHits = 0;
    this.periodicHits.fill(0);
  }

  /** Adds the state at the start of a new cycle; returns a verdict, or null to keep going. */
  push(startState: readonly number[]): OrbitKind | null {
    this.pushes++;
    const h = this.history;
    h.push([...startState]);
    if (h.length > 5) h.shift();
    const k = h.length - 1;
    if (k >= 1) {
      const change = this.distance(h[k]!, h[k - 1]!);
      this.lastChange = change;
      this.changes.push(change);
      // Settled: the change stayed below the tolerance three cycles running, and the distance
      // still to go is below it too. Over the last cycles the change either falls geometrically
      // (a slow mode: ρ from a straight-line fit of log(change), the tail change·ρ/(1 − ρ) still
      // to come) or scatters at a floor set by solver noise or a lossless ring (the change itself
      // is the measure).
      // Per component: the ring's scatter in one must not hide the slow clamp voltage in another.
      const perComponent = h[k]!.map((v, i) => Math.abs(v - h[k - 1]![i]!) / this.scales[i]!);
      this.componentChanges.push(perComponent);
      if (this.componentChanges.length > FIT_WINDOW) this.componentChanges.shift();
      this.remaining = Math.max(...perComponent.map((c, i) => c + remainingTail(this.componentChanges.map((row) => row[i]!))));
      this.settledHits = change < this.tolerance ? this.settledHits + 1 : 0;
      if (this.settledHits >= 3 && this.componentChanges.length >= FIT_WINDOW && this.remaining < this.tolerance) return 'settled';
      for (let p = 2; p <= 4; p++) {
        if (k < p) continue;
        const recurs = this.distance(h[k]!, h[k - p]!) < this.tolerance;
        this.periodicHits[p] = recurs ? this.periodicHits[p]! + 1 : 0;
        // A slowly converging alternating sequence also recurs every two cycles: only a one-step
        // change that has stopped shrinking makes it an orbit of its own.
        const earlier = this.changes[this.changes.length - 1 - 2 * p];
        const stalled = earlier !== undefined && change >= 0.95 * earlier;
        // …and the alternate states must differ clearly, not by noise below the tolerance.
        if (change < 10 * this.tolerance) continue;
        if (this.periodicHits[p]! >= p + 1 && stalled) return `period-${p}` as OrbitKind;
      }
    }
    const n = this.changes.length;
    if (n >= 3 * STALL_WINDOW) {
      const recent = Math.min(...this.changes.slice(n - STALL_WINDOW));
      const before = Math.min(...this.changes.slice(n - 2 * STALL_WINDOW, n - STALL_WINDOW));
      if (recent > 0.9 * before) return 'non-periodic';
    }
    if (this.pushes >= this.maxCycles) return 'cycle-cap';
    return null;
  }
}
