// One study point (or some of its variants): validate the varied scenario, run the variants to
// the settled state, keep only the metrics (the waveforms stay in the worker).

import { validateScenario, formatIssues } from '../circuit/validate-scenario.js';
import { availableVariants, type VariantName } from '../circuit/scenario.js';
import { simulationReport, type SimulationReport } from '../analysis/simulation-report.js';
import { runVariant, SimulationFailure } from '../simulation/run-variant.js';
import { settleOperatingPoint } from '../simulation/operating-point.js';

export interface PointTask {
  scenarioJson: Record<string, unknown>;
  /** Only these variants (a point split across workers); all the scenario supports by default. */
  variants?: VariantName[];
  deadlineMs?: number;
}
export type PointResult = { ok: true; report: SimulationReport } | { ok: false; failure: string };

export function runPointTask(task: PointTask): PointResult {
  const validated = validateScenario(task.scenarioJson);
  if (!validated.ok) return { ok: false, failure: `invalid at this point: ${formatIssues(validated.issues).replace(/\n/g, '; ')}` };
  try {
    const options = task.deadlineMs === undefined ? {} : { deadlineMs: task.deadlineMs };
    const scenario = settleOperatingPoint(validated.scenario, options).scenario;
    const runs = (task.variants ?? availableVariants(scenario)).map((v) => runVariant(scenario, v, options));
    return { ok: true, report: simulationReport(scenario, runs) };
  } catch (error) {
    if (error instanceof SimulationFailure) return { ok: false, failure: error.message };
    throw error;
  }
}
