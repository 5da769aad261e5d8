// One settled simulation for the fit, as a task that can cross to a worker process: the scenario
// in, the drain waveform of the first recorded cycles out (plain numbers, so it survives IPC).

import type { Scenario, VariantName } from '../circuit/scenario.js';
import { runVariant, SimulationFailure } from '../simulation/run-variant.js';

/** `deadlineMs`: wall-clock instant (Date.now()) past which the run stops with a failure (the server's cap). */
export interface TraceTask { scenario: Scenario; variant: VariantName; deadlineMs?: number }

export interface TraceData {
  /** Drain voltage on the recorder's uniform grid, V. */
  values: number[];
  stepSeconds: number;
  /** Instant the switch opened in the first recorded cycle, s. */
  turnOffSeconds: number;
  /** Primary current when it opened, A. */
  turnOffCurrent: number;
}

export type TraceResult = { ok: true; trace: TraceData } | { ok: false; failure: string };

export function runTraceTask(task: TraceTask): TraceResult {
  try {
    const run = runVariant(task.scenario, task.variant, task.deadlineMs !== undefined ? { deadlineMs: task.deadlineMs } : {});
    const w = run.recorder.waveform;
    const first = run.recorder.cycles[0]!;
    return {
      ok: true,
      trace: {
        values: Array.from(w.channels.drainVoltage),
        stepSeconds: w.timeSeconds[1]! - w.timeSeconds[0]!,
        turnOffSeconds: first.turnOffSeconds,
        turnOffCurrent: first.turnOffCurrent,
      },
    };
  } catch (error) {
    if (error instanceof SimulationFailure) return { ok: false, failure: error.message };
    throw error;
  }
}
