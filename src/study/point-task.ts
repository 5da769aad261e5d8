// One study point (or some of its variants): validate the varied scenario, run the variants to
// the settled state, keep only the metrics (the waveforms stay in the worker).

import { validateScenario, formatIssues } from '../circuit/validate-scenario.js';
import { availableVariants, type VariantName } from '../circuit/scenario.js';
import { simulationReport, type SimulationReport } from '../analysis/simulation-report.js';
import { soundVariants } from '../analysis/result-checks.js';
import { runVariant, SimulationFailure, warmStartOptions, warmStartsOf, type Jacobians, type StartStates } from '../simulation/run-variant.js';
import { settleOperatingPoint } from '../simulation/operating-point.js';

export interface PointTask {
  scenarioJson: Record<string, unknown>;
  /** Only these variants (a point split across workers); all the scenario supports by default. */
  variants?: VariantName[];
  /** The whole study's deadline (a Date.now() value). */
  deadlineMs?: number;
  /** Time cap of this task, ms, counted from when a worker starts it, so time queued does not count. */
  capMs?: number;
  /** Per variant, a period-start state of a nearby point's orbit: a warm start only (RunOptions.startHint). */
  startHints?: StartStates;
  /** Per variant with a start hint, that point's Jacobian estimate there (RunOptions.startJacobian). */
  startJacobians?: Jacobians;
}
export type { StartStates, Jacobians };
export type PointResult = { ok: true; report: SimulationReport; startStates: StartStates; jacobians: Jacobians } | { ok: false; failure: string };

export function runPointTask(task: PointTask): PointResult {
  const validated = validateScenario(task.scenarioJson);
  if (!validated.ok) return { ok: false, failure: `invalid at this point: ${formatIssues(validated.issues).replace(/\n/g, '; ')}` };
  const deadlines = [task.deadlineMs, task.capMs === undefined ? undefined : Date.now() + task.capMs].filter((d): d is number => d !== undefined);
  // A point keeps only metrics: one recorded cycle of a settled orbit gives them all.
  const options = { recordedCyclesWhenSettled: 1, ...(deadlines.length > 0 ? { deadlineMs: Math.min(...deadlines) } : {}) };
  try {
    const scenario = settleOperatingPoint(validated.scenario, options).scenario;
    const runs = (task.variants ?? availableVariants(scenario)).map((v) => {
      return runVariant(scenario, v, { ...options, ...warmStartOptions(v, task.startHints, task.startJacobians) });
    });
    const report = simulationReport(scenario, runs);
    const { problems } = soundVariants(report.variants);
    return problems.length > 0 ? { ok: false, failure: problems.join('; ') } : { ok: true, report, ...warmStartsOf(runs) };
  } catch (error) {
    if (error instanceof SimulationFailure) return { ok: false, failure: error.message };
    throw error;
  }
}
