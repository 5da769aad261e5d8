// The `fit --json` shape (issue 13: other tools read these names), shared by the command line and
// the server's /api/fit.

import type { ModelFit } from './fit-model.js';
import type { RingAnalysis } from './ring-analysis.js';

export interface FitJson {
  fitted: Record<string, number>;
  uncertainty: Record<string, number>;
  ringFrequency: number;
  ringDecay: number;
  residual: number;
  captureSamples: number;
  addedCapacitor?: { leakageInductance: number; drainCapacitance: number };
}

export const capacitanceKey = (fit: ModelFit): string => (fit.drainCapacitance.kind === 'constant' ? 'switch.drainCapacitance' : 'switch.drainCapacitanceScale');

export function fitJson(fit: ModelFit, ring: RingAnalysis, captureSamples: number, added?: FitJson['addedCapacitor']): FitJson {
  const key = capacitanceKey(fit);
  return {
    fitted: {
      'transformer.leakageInductance': fit.leakageInductance.value,
      [key]: fit.drainCapacitance.value,
      'transformer.primaryResistance': fit.primaryResistance.value,
    },
    uncertainty: {
      'transformer.leakageInductance': fit.leakageInductance.sigma,
      [key]: fit.drainCapacitance.sigma,
      'transformer.primaryResistance': fit.primaryResistance.sigma,
    },
    ringFrequency: ring.frequencyHz,
    ringDecay: ring.decayPerSecond,
    residual: fit.residualRmsVolts,
    captureSamples,
    ...(added ? { addedCapacitor: added } : {}),
  };
}
