// The JSON shape of a simulation (what `simulate --json` prints and the HTTP API returns).

import type { Scenario, VariantName } from '../circuit/scenario.js';
import { reflectedVoltage } from '../circuit/scenario.js';
import type { VariantRun } from '../simulation/run-variant.js';
import { outputCapacitanceEquivalents } from '../model/drain-capacitance.js';
import { variantMetrics, type VariantMetrics } from './variant-metrics.js';

/** Drain-voltage derating: keep the peak at or below 80 % of the rating (common practice). */
export const DEFAULT_DRAIN_DERATING = 0.8;

export interface SimulationReport {
  scenario: string;
  voltageRating: number;
  deratedLimit: number;
  supplyVoltage: number;
  reflectedVoltage: number;
  /** The transistor's Coss curve as the datasheet's equivalent constants over 0…Vin + VR, F. */
  drainCapacitanceEnergyEquivalent: number;
  drainCapacitanceChargeEquivalent: number;
  variants: Partial<Record<VariantName, VariantMetrics & { marginToDeratedLimit: number }>>;
}

/** The scenario's design derating when it has a design block, else the common-practice 80 %. */
export function drainDerating(scenario: Scenario): number {
  return scenario.design?.drainDerating ?? DEFAULT_DRAIN_DERATING;
}

export function simulationReport(scenario: Scenario, runs: readonly VariantRun[], derating = drainDerating(scenario)): SimulationReport {
  const rating = scenario.switch.voltageRating;
  const deratedLimit = rating * derating;
  const variants: SimulationReport['variants'] = {};
  for (const run of runs) {
    const m = variantMetrics(run, rating);
    variants[run.variant] = { ...m, marginToDeratedLimit: deratedLimit - m.peakDrainVoltage };
  }
  const vr = reflectedVoltage(scenario);
  const equivalents = outputCapacitanceEquivalents(scenario.switch.drainCapacitance, scenario.supply.voltage + vr);
  return {
    scenario: scenario.name,
    voltageRating: rating,
    deratedLimit,
    supplyVoltage: scenario.supply.voltage,
    reflectedVoltage: vr,
    drainCapacitanceEnergyEquivalent: equivalents.energyEquivalent,
    drainCapacitanceChargeEquivalent: equivalents.chargeEquivalent,
    variants,
  };
}
