// `design` for the page: the same result as `flyclamp design --json`, plus the worst-case drain
// traces reduced for the plot.

import type { Scenario, VariantName } from '../circuit/scenario.js';
import { reduceForDisplay, type ReducedTrace } from '../analysis/display-reduction.js';
import { designClamp, type DesignResult } from '../design/design-clamp.js';
import { DesignImpossible } from '../design/hand-design.js';
import { SimulationFailure } from '../simulation/run-variant.js';

/** `capMs`: the time cap, counted from when the worker starts the task. */
export interface DesignTask { scenario: Scenario; columns: number; capMs: number }
export type DesignTaskResult =
  | { ok: true; design: DesignResult; worstCaseTraces: Partial<Record<VariantName, ReducedTrace>> }
  | { ok: false; failure: string };

export function runDesignTask(task: DesignTask): DesignTaskResult {
  try {
    const { worstCaseRuns, ...design } = designClamp(task.scenario, { deadlineMs: Date.now() + task.capMs });
    const worstCaseTraces: Partial<Record<VariantName, ReducedTrace>> = {};
    for (const run of worstCaseRuns) {
      const w = run.recorder.waveform;
      worstCaseTraces[run.variant] = reduceForDisplay(w.timeSeconds, w.channels.drainVoltage, 0, w.timeSeconds[w.timeSeconds.length - 1]!, task.columns);
    }
    return { ok: true, design, worstCaseTraces };
  } catch (error) {
    if (error instanceof DesignImpossible || error instanceof SimulationFailure) return { ok: false, failure: error.message };
    throw error;
  }
}
