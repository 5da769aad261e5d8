// Compares the engine's metrics of one variant with the independent reference model's: each metric
// against a scale of its own kind, so that a metric near zero is judged against the circuit's size.

import type { VariantMetrics } from '../../src/analysis/variant-metrics.js';
import type { ReferenceResult } from '../oracle/reference/reference-run.js';

export const COMPARED_METRICS = [
  'peakDrainVoltage', 'peakAboveClamp', 'clampVoltageMean', 'clampVoltageRipple', 'clampResistorPower',
  'damperResistorPower', 'clampDiodePeakCurrent', 'switchTurnOnLossPower', 'turnOffCurrent', 'turnOffLossPower',
  'avalancheEnergyPerCycle', 'avalanchePower', 'clampDiodePower', 'clampDiodeReverseCharge',
] as const;
export type ComparedMetric = (typeof COMPARED_METRICS)[number];

export interface Disagreement { metric: string; engine: number | null; reference: number | null; error: number }

/**
 * Scales: voltages against Vin + VR, currents against the reference's turn-off current, powers
 * against the reference's input power, energies and charges per cycle against the same per cycle.
 */
export function compareWithReference(engine: VariantMetrics, ref: ReferenceResult, frequency: number, tolerance: number): Disagreement[] {
  const volts = ref.supplyVoltage + ref.reflectedVoltage;
  const amps = Math.abs(ref.metrics.turnOffCurrent);
  const watts = Math.abs(ref.energyBalance.supplyJoules) * frequency;
  const scale: Record<ComparedMetric, number> = {
    peakDrainVoltage: volts, peakAboveClamp: volts, clampVoltageMean: volts, clampVoltageRipple: volts,
    clampResistorPower: watts, damperResistorPower: watts, clampDiodePeakCurrent: amps, switchTurnOnLossPower: watts,
    turnOffCurrent: amps, turnOffLossPower: watts, avalancheEnergyPerCycle: watts / frequency, avalanchePower: watts,
    clampDiodePower: watts, clampDiodeReverseCharge: amps / frequency,
  };
  const out: Disagreement[] = [];
  for (const metric of COMPARED_METRICS) {
    const r = ref.metrics[metric];
    const e = (engine as unknown as Record<string, number | undefined>)[metric] ?? null;
    if (r === null && e === null) continue;
    const error = r === null || e === null ? Infinity : Math.abs(e - r) / scale[metric];
    if (!(error <= tolerance)) out.push({ metric, engine: e, reference: r, error });
  }
  return out;
}
