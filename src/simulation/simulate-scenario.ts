import { availableVariants, type Scenario, type VariantName } from '../circuit/scenario.js';
import { runVariant, type RunOptions, type VariantRun } from './run-variant.js';

/** Runs the requested variants (all the scenario supports by default), one after another. */
export function simulateScenario(scenario: Scenario, variants: readonly VariantName[] = availableVariants(scenario), options: RunOptions = {}): VariantRun[] {
  return variants.map((v) => runVariant(scenario, v, options));
}
