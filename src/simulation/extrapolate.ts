// Convergence acceleration for slow settling. Near the steady state the period map contracts
// along its slowest eigenvector: x_{k+1} − x* ≈ ρ·(x_k − x*). The clamp capacitor (R·C of many
// periods) is the usual slow mode. When ρ, estimated from successive differences, holds steady,
// jump to the limit of the geometric series, x* ≈ x_k + Δ_k·ρ/(1 − ρ) (vector Aitken Δ²).

export class SettlingExtrapolator {
  private readonly starts: number[][] = [];
  private readonly ratios: number[] = [];
  private cyclesSinceJump = 0;
  jumps = 0;

  constructor(private readonly scales: readonly number[], private readonly enabled = true) {}

  /** Given the latest period-start state, returns a state to continue from (the same one, or a jump). */
  next(x: readonly number[]): number[] {
    this.cyclesSinceJump++;
    this.starts.push([...x]);
    if (this.starts.length > 3) this.starts.shift();
    if (!this.enabled || this.starts.length < 3) return [...x];
    const [a, b, c] = this.starts as [number[], number[], number[]];
    const d1 = b.map((v, i) => (v - a[i]!) / this.scales[i]!);
    const d2 = c.map((v, i) => (v - b[i]!) / this.scales[i]!);
    const dot = (u: number[], w: number[]): number => u.reduce((s, ui, i) => s + ui * w[i]!, 0);
    const denom = dot(d1, d1);
    if (denom === 0) return [...x];
    const rho = dot(d2, d1) / denom;
    // The two steps must point the same way: one slow mode dominates.
    const aligned = dot(d1, d2) / Math.sqrt(denom * dot(d2, d2));
    this.ratios.push(rho);
    if (this.ratios.length > 3) this.ratios.shift();
    const steady = this.ratios.length === 3 && this.ratios.every((r) => Math.abs(r - rho) < 0.01);
    if (steady && aligned > 0.999 && rho > 0.5 && rho < 0.998 && this.cyclesSinceJump >= 4) {
      const gain = rho / (1 - rho);
      this.cyclesSinceJump = 0;
      this.jumps++;
      this.starts.length = 0;
      this.ratios.length = 0;
      return c.map((v, i) => v + (v - b[i]!) * gain);
    }
    return [...x];
  }
}
