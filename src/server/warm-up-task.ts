// A worker thread's first simulation is several times slower than the next (module loading and
// the JIT). The server runs this one in each thread as it starts, so the page's first request
// finds the threads warm: a small invented circuit with the real parts' code paths (a Coss curve,
// avalanche, turn-off delay and current fall, a clamp loop, reverse and forward recovery, a
// damper), one short recorded cycle.

import { validateScenario } from '../circuit/validate-scenario.js';
import { availableVariants } from '../circuit/scenario.js';
import { runVariant } from '../simulation/run-variant.js';
import { simulationReport } from '../analysis/simulation-report.js';

const WARM_UP_SCENARIO = {
  name: 'warm-up: 20 V rail, small flyback',
  supply: { voltage: 20 },
  transformer: { magnetizingInductance: '30u', leakageInductance: '600n', turnsRatio: 2, primaryResistance: '0.1' },
  output: { voltage: 5, diodeDrop: 0.4 },
  switch: {
    frequency: '300k', peakCurrent: 0.6, drainCapacitance: [[0, '600p'], [20, '200p'], [60, '120p']], onResistance: '0.1', voltageRating: 60,
    avalancheVoltage: 70, turnOffDelay: '40n', currentFallTime: '10n',
  },
  clamp: {
    resistance: '2.2k', capacitance: '10n', diodeDrop: 0.8, loopInductance: '4n', loopResistance: 0.5, diodeRecoveryTime: '30n',
    diodeForwardRecoveryVoltage: 2, diodeForwardRecoveryTime: '20n',
  },
  damper: { resistance: 47, capacitance: '470p' },
  simulation: { recordedCycles: 1, samplesPerCycle: 200 },
};

export type WarmUpTaskResult = { ok: true; milliseconds: number } | { ok: false; failure: string };

export function runWarmUpTask(): WarmUpTaskResult {
  const started = performance.now();
  const validated = validateScenario(WARM_UP_SCENARIO);
  if (!validated.ok) return { ok: false, failure: 'the warm-up scenario is invalid' };
  const runs = availableVariants(validated.scenario).map((v) => runVariant(validated.scenario, v));
  simulationReport(validated.scenario, runs);
  return { ok: true, milliseconds: performance.now() - started };
}
