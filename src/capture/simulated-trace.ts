// The simulated drain voltage of one settled run as a function of time, for comparison with a
// capture: cubic Hermite interpolation on the recorder's uniform grid with central-difference
// slopes (Catmull–Rom; e.g. Fritsch & Carlson 1980 for the Hermite form), which keeps the
// interpolation error far below a scope's resolution at the tens of samples per ring the fit asks
// for, and gives the slope the time-shift parameters need.

import type { TraceData } from './trace-task.js';

export class SimulatedTrace {
  readonly stepSeconds: number;
  readonly values: Float64Array;
  /** Instant the switch opened in the first recorded cycle, s on the trace's axis. */
  readonly turnOffSeconds: number;
  /** Primary current when it opened, A. */
  readonly turnOffCurrent: number;

  constructor(data: TraceData) {
    this.values = Float64Array.from(data.values);
    this.stepSeconds = data.stepSeconds;
    this.turnOffSeconds = data.turnOffSeconds;
    this.turnOffCurrent = data.turnOffCurrent;
  }

  get endSeconds(): number { return (this.values.length - 1) * this.stepSeconds; }

  /** First instant after the turn-off where the drain rises through `level`, s (NaN if never). */
  risingCrossing(level: number): number {
    const v = this.values;
    for (let i = Math.max(1, Math.floor(this.turnOffSeconds / this.stepSeconds)); i < v.length; i++) {
      if (v[i - 1]! < level && v[i]! >= level) return (i - 1 + (level - v[i - 1]!) / (v[i]! - v[i - 1]!)) * this.stepSeconds;
    }
    return NaN;
  }

  /** Value and slope (V, V/s) at t; clamped to the ends. */
  at(t: number, out: { value: number; slope: number }): void {
    const v = this.values;
    const n = v.length;
    const x = t / this.stepSeconds;
    const i = Math.min(n - 2, Math.max(0, Math.floor(x)));
    const s = Math.min(1, Math.max(0, x - i));
    const p0 = v[i]!, p1 = v[i + 1]!;
    const m0 = (v[Math.min(n - 1, i + 1)]! - v[Math.max(0, i - 1)]!) / (i === 0 ? 1 : 2);
    const m1 = (v[Math.min(n - 1, i + 2)]! - v[i]!) / (i + 2 > n - 1 ? 1 : 2);
    const s2 = s * s, s3 = s2 * s;
    out.value = (2 * s3 - 3 * s2 + 1) * p0 + (s3 - 2 * s2 + s) * m0 + (-2 * s3 + 3 * s2) * p1 + (s3 - s2) * m1;
    out.slope = ((6 * s2 - 6 * s) * p0 + (3 * s2 - 4 * s + 1) * m0 + (-6 * s2 + 6 * s) * p1 + (3 * s2 - 2 * s) * m1) / this.stepSeconds;
  }
}
