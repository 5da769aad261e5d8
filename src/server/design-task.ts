// `design` for the page: the same result as `flyclamp design --json`, plus the worst-case drain
// traces reduced for the plot. The design's simulations run one after another in this worker
// thread: the server's pool already spreads requests over the cores, and its admission counts a
// design as one task.

import type { Scenario, VariantName } from '../circuit/scenario.js';
import type { ReducedTrace } from '../analysis/display-reduction.js';
import { designClamp, type DesignResult } from '../design/design-clamp.js';
import { DesignImpossible } from '../design/hand-design.js';
import { SimulationFailure } from '../simulation/run-variant.js';

/** `capMs`: the time cap, counted from when the worker starts the task. */
export interface DesignTask { scenario: Scenario; columns: number; capMs: number }
export type DesignTaskResult =
  | { ok: true; design: DesignResult; worstCaseTraces: Partial<Record<VariantName, ReducedTrace>> }
  | { ok: false; failure: string };

export async function runDesignTask(task: DesignTask): Promise<DesignTaskResult> {
  try {
    const { plots, ...design } = await designClamp(task.scenario, { deadlineMs: Date.now() + task.capMs, traceColumns: task.columns });
    const worstCaseTraces: Partial<Record<VariantName, ReducedTrace>> = {};
    for (const [variant, traces] of Object.entries(plots.worstCase)) worstCaseTraces[variant as VariantName] = traces.whole;
    return { ok: true, design, worstCaseTraces };
  } catch (error) {
    if (error instanceof DesignImpossible || error instanceof SimulationFailure) return { ok: false, failure: error.message };
    throw error;
  }
}
