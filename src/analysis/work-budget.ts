// What a run will cost, estimated from the scenario before any cycle is simulated, so that a valid
// but extreme scenario (a 150 Hz switch against a 10 MHz ring, a 1 fF drain capacitance) is refused
// with the value that makes it expensive instead of running for hours or filling memory.

import type { Scenario } from '../circuit/scenario.js';
import { circuitForVariant, leakageRingPeriodSeconds } from '../model/circuit-params.js';

/**
 * Wall time per leakage-ring period integrated, s. The integrator's step is capped at half a ring
 * period, so the cost of a cycle grows with the ring periods in it. Measured on the demo scenarios
 * on one core of the two-core development machine: 38–151 µs once the JIT is warm (a ring still
 * ringing costs most), 317 µs for the very first run. Rounded up from the warm range: the estimate
 * is there to refuse what is off by orders of magnitude; the deadline catches the rest.
 */
export const SECONDS_PER_RING_PERIOD = 2e-4;
/** Cycles assumed for settling: the demo scenarios settle in 12–34 (settling jumps ahead). */
export const ESTIMATED_CYCLES = 30;
/** Variant runs a design makes at least: three variants at the worst case and at nominal (adjustments add more). */
export const DESIGN_VARIANT_RUNS = 6;
/** Samples kept per variant (recorded cycles × samples per cycle after the raise for the ring): 9 channels × 8 bytes each, 29 MB at the cap. */
export const MAX_RECORDED_SAMPLES = 400_000;

export interface WorkEstimate {
  ringPeriodSeconds: number;
  /** Leakage-ring periods in one switching period: the integrator's work per cycle. */
  ringPeriodsPerCycle: number;
  /** Samples the recorder keeps per variant. */
  recordedSamples: number;
  estimatedSeconds: number;
}

/** The estimate for `variantCount` variants run one after another. */
export function estimateWork(scenario: Scenario, variantCount: number): WorkEstimate {
  const ringPeriodSeconds = leakageRingPeriodSeconds(circuitForVariant(scenario, 'bare'));
  const periodSeconds = 1 / scenario.switch.frequency;
  const ringPeriodsPerCycle = periodSeconds / ringPeriodSeconds;
  // The recorder raises the samples per cycle to keep 24 per ring, up to 50,000 (as run-variant.ts does).
  const samplesPerCycle = Math.min(50_000, Math.max(scenario.simulation.samplesPerCycle, Math.ceil(24 * ringPeriodsPerCycle)));
  const cycles = Math.min(ESTIMATED_CYCLES, scenario.simulation.maxCycles);
  return {
    ringPeriodSeconds,
    ringPeriodsPerCycle,
    recordedSamples: scenario.simulation.recordedCycles * samplesPerCycle,
    estimatedSeconds: variantCount * cycles * ringPeriodsPerCycle * SECONDS_PER_RING_PERIOD,
  };
}

export interface BudgetRefusal { kind: 'recorded-samples' | 'time'; path: string; message: string }

/** Typical ranges of the three values that set the work per cycle; the one furthest outside is named first. */
const TYPICAL: Array<{ path: string; unit: string; low: number; high: number; read: (s: Scenario) => number }> = [
  { path: 'switch.frequency', unit: 'Hz', low: 20e3, high: 2e6, read: (s) => s.switch.frequency },
  { path: 'switch.drainCapacitance', unit: 'F', low: 10e-12, high: 10e-9, read: (s) => s.switch.drainCapacitance },
  { path: 'transformer.leakageInductance', unit: 'H', low: 50e-9, high: 500e-6, read: (s) => s.transformer.leakageInductance },
];

const fmt = (x: number): string => Number(x.toPrecision(3)).toString();

/** Refusals for a run over `maxSeconds` or over the recorded-sample budget; empty when it fits. */
export function checkWorkBudget(scenario: Scenario, variantCount: number, maxSeconds: number, liftHint: (neededSeconds: number) => string): BudgetRefusal[] {
  const estimate = estimateWork(scenario, variantCount);
  const refusals: BudgetRefusal[] = [];
  if (estimate.recordedSamples > MAX_RECORDED_SAMPLES) {
    const path = estimate.recordedSamples > scenario.simulation.recordedCycles * scenario.simulation.samplesPerCycle
      ? 'simulation.recordedCycles' : 'simulation.samplesPerCycle';
    refusals.push({
      kind: 'recorded-samples',
      path,
      message: `expected at most ${MAX_RECORDED_SAMPLES} recorded samples per variant (simulation.recordedCycles × samples per cycle), found ${scenario.simulation.recordedCycles} × ${Math.round(estimate.recordedSamples / scenario.simulation.recordedCycles)} = ${estimate.recordedSamples}${path === 'simulation.recordedCycles' ? ' (samples per cycle are raised to 24 per leakage ring): record fewer cycles' : ''}`,
    });
  }
  if (estimate.estimatedSeconds > maxSeconds) {
    const distance = (t: (typeof TYPICAL)[number]): number => {
      const v = t.read(scenario);
      return v < t.low ? Math.log10(t.low / v) : v > t.high ? Math.log10(v / t.high) : 0;
    };
    const culprit = [...TYPICAL].sort((a, b) => distance(b) - distance(a))[0]!;
    const value = culprit.read(scenario);
    refusals.push({
      kind: 'time',
      path: culprit.path,
      message: `expected a scenario that runs within ${fmt(maxSeconds)} s, found ${fmt(value)} ${culprit.unit}${distance(culprit) > 0 ? ` (typical: ${fmt(culprit.low)}–${fmt(culprit.high)} ${culprit.unit}; a wrong SI prefix?)` : ''}: `
        + `each switching period of ${fmt(1 / scenario.switch.frequency)} s holds ${fmt(estimate.ringPeriodsPerCycle)} periods of the leakage ring (${fmt(estimate.ringPeriodSeconds)} s from transformer.leakageInductance and switch.drainCapacitance), `
        + `an estimated ${fmt(estimate.estimatedSeconds)} s for ${variantCount} variant(s). Check those three values, or ${liftHint(Math.ceil(2 * estimate.estimatedSeconds))}`,
    });
  }
  return refusals;
}
