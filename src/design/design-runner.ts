// Where a design's simulations run: on a pool of worker processes (the candidates and corners are
// independent, and two processes scale to about 1.9× on two cores where threads reach 1.3–1.5×,
// see src/workers/process-pool.ts), or one after another in this process for a job too small to
// pay for starting the children, and in the server's worker thread.

import { availableParallelism } from 'node:os';
import type { Scenario } from '../circuit/scenario.js';
import { estimateWork } from '../analysis/work-budget.js';
import { ProcessPool } from '../workers/process-pool.js';
import { SimulationFailure } from '../simulation/run-variant.js';
import { runDesignRunTask, type DesignRunResult, type DesignRunTask } from './design-run-task.js';

export type DesignRunSuccess = Extract<DesignRunResult, { ok: true }>;

export interface DesignRunner {
  /** Worker processes behind it (0: this process). */
  readonly workers: number;
  /** The task's result; a run that failed (did not settle in time, an impossible circuit) throws SimulationFailure. */
  run(task: DesignRunTask): Promise<DesignRunSuccess>;
  close(): Promise<void>;
}

const succeeded = (result: DesignRunResult): DesignRunSuccess => {
  if (!result.ok) throw new SimulationFailure(result.failure);
  return result;
};

/** One task after another in this process; each waits a turn of the event loop first (a Ctrl-C gets through). */
export function inProcessRunner(): DesignRunner {
  return {
    workers: 0,
    run: async (task) => {
      await new Promise<void>((ok) => setImmediate(ok));
      return succeeded(runDesignRunTask(task));
    },
    close: async () => undefined,
  };
}

export function processRunner(workers: number): DesignRunner {
  const fromSource = import.meta.url.endsWith('.ts');
  const pool = new ProcessPool<DesignRunTask, DesignRunResult>(new URL(`./design-process.${fromSource ? 'ts' : 'js'}`, import.meta.url), workers);
  return {
    workers,
    run: async (task) => succeeded(await pool.run(task)),
    close: () => pool.destroy(),
  };
}

/**
 * Estimated single-process time of a design below which worker processes do not pay: starting a
 * child and warming its JIT costs a few hundred milliseconds (measured in `npm run bench`).
 */
export const IN_PROCESS_BELOW_SECONDS = 1.5;
/** Variant runs a design makes about (search and corners), for that estimate. */
const DESIGN_RUNS_ESTIMATE = 20;

/** Worker processes for a design of this scenario: none for a small one, else one per core. */
export function designWorkers(scenario: Scenario): number {
  const perRun = estimateWork(scenario, ['bare']).estimatedSeconds;
  const cores = availableParallelism();
  return cores < 2 || perRun * DESIGN_RUNS_ESTIMATE < IN_PROCESS_BELOW_SECONDS ? 0 : cores;
}
