// The variants of a page request as parallel tasks on the worker pool: on two cores the three
// variants come back in about the time of the slowest instead of their sum. A scenario given by
// its output power has its peak current settled once, first; the variants then run at it.

import type { VariantName } from '../circuit/scenario.js';
import type { OperatingPointTaskResult, SimulateTask, SimulateTaskResult } from './simulate-task.js';
import type { ServerTask, ServerTaskResult } from './server-worker.js';

export type RunTask = (task: ServerTask) => Promise<ServerTaskResult>;

export async function simulateVariantsInParallel(run: RunTask, task: SimulateTask): Promise<SimulateTaskResult> {
  let scenario = task.scenario;
  if (scenario.output.power !== undefined && !task.operatingPointSettled) {
    const point = await run({ kind: 'operating-point', scenario, capMs: task.capMs, ...(task.stopFlag ? { stopFlag: task.stopFlag } : {}) }) as OperatingPointTaskResult;
    if (!point.ok) return point;
    scenario = point.scenario;
  }
  const parts = await Promise.all(task.variants.map((variant: VariantName) =>
    run({ kind: 'simulate', ...task, scenario, variants: [variant], operatingPointSettled: true }) as Promise<SimulateTaskResult>));
  const failure = parts.find((p): p is Extract<SimulateTaskResult, { ok: false }> => !p.ok);
  if (failure) return failure;
  const done = parts as Array<Extract<SimulateTaskResult, { ok: true }>>;
  const first = done[0]!;
  return {
    ...first,
    // The report's scenario-level fields come from the request's scenario, as one task would give them.
    report: { ...first.report, scenario: task.scenario.name, variants: Object.assign({}, ...done.map((p) => p.report.variants)) },
    traces: Object.assign({}, ...done.map((p) => p.traces)),
    startStates: Object.assign({}, ...done.map((p) => p.startStates)),
    jacobians: Object.assign({}, ...done.map((p) => p.jacobians)),
  };
}
