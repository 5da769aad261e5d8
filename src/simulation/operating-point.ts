// With the load given (output.power), the peak current that delivers it: the energy relation's
// estimate first (made at validation), then the settled simulation's own delivered power, by the
// secant method on the peak current. The delivered power counted is what reaches the secondary
// (load and output diode), which must equal output.power / output.efficiency.

import { POWER_TERMS } from '../model/power.js';
import type { Scenario } from '../circuit/scenario.js';
import { runVariant, SimulationFailure, type RunOptions } from './run-variant.js';

/** Relative agreement of the delivered power with the target: far below any tolerance a design carries. */
const POWER_TOLERANCE = 1e-3;
const MAX_ITERATIONS = 8;

export interface OperatingPoint { peakCurrent: number; deliveredPower: number; targetPower: number; iterations: number }

const withPeakCurrent = (s: Scenario, peakCurrent: number): Scenario => (s.switch.control.kind === 'peak-current'
  ? { ...s, switch: { ...s.switch, control: { ...s.switch.control, peakCurrent } } }
  : s);

/** Power into the secondary over the last settled period of the bare circuit at this peak current, W. */
function secondaryPower(s: Scenario, peakCurrent: number, options: RunOptions): number {
  const run = runVariant(withPeakCurrent(s, peakCurrent), 'bare', options);
  const last = run.recorder.cycles[run.recorder.cycles.length - 1]!;
  const energy = last.energy[POWER_TERMS.indexOf('load')]! + last.energy[POWER_TERMS.indexOf('outputDiode')]!;
  return energy / run.params.periodSeconds;
}

/** The scenario with its peak current settled on the load, or unchanged when it gives no load. */
export function settleOperatingPoint(s: Scenario, options: RunOptions = {}): { scenario: Scenario; point: OperatingPoint | null } {
  if (s.output.power === undefined || s.switch.control.kind !== 'peak-current') return { scenario: s, point: null };
  const target = s.output.power / s.output.efficiency;
  let i0 = s.switch.control.peakCurrent;
  let p0 = secondaryPower(s, i0, options);
  // The power grows about as Ipk² (DCM): the second guess scales by the square root.
  let i1 = i0 * Math.sqrt(target / p0);
  let iterations = 1;
  for (; iterations < MAX_ITERATIONS; iterations++) {
    const p1 = secondaryPower(s, i1, options);
    if (Math.abs(p1 / target - 1) < POWER_TOLERANCE) {
      return { scenario: withPeakCurrent(s, i1), point: { peakCurrent: i1, deliveredPower: p1, targetPower: target, iterations: iterations + 1 } };
    }
    const next = i1 + ((target - p1) * (i1 - i0)) / (p1 - p0);
    i0 = i1; p0 = p1;
    i1 = Number.isFinite(next) && next > 0 ? next : i1 * Math.sqrt(target / p1);
  }
  throw new SimulationFailure(`output.power: no peak current delivered ${target.toPrecision(4)} W to the secondary within ${MAX_ITERATIONS} settled runs (last ${i1.toPrecision(4)} A gave ${p0.toPrecision(4)} W); check the load against the transformer and the switching frequency`);
}
