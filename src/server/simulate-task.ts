// One simulation request as the page needs it: the report (exact metrics from the full
// resolution) plus display-reduced traces. Runs inside a worker thread.

import type { Scenario, VariantName } from '../circuit/scenario.js';
import { simulationReport, type SimulationReport } from '../analysis/simulation-report.js';
import { reduceForDisplay, repeatCycle, roundForDisplay, type ReducedTrace } from '../analysis/display-reduction.js';
import { settleOperatingPoint } from '../simulation/operating-point.js';
import { stopRequestedBy } from './stop-flag.js';
import { runVariant, SimulationFailure, warmStartOptions, warmStartsOf, type Jacobians, type StartStates, type VariantRun } from '../simulation/run-variant.js';

export interface SimulateTask {
  scenario: Scenario;
  variants: VariantName[];
  /** Window within the recorded cycles, seconds from their start; default all of them. */
  window?: { startSeconds: number; endSeconds: number };
  columns: number;
  /** Time cap of the run, ms, counted from when the worker starts it (time queued does not count). */
  capMs: number;
  /** The scenario's peak current is already the one that delivers its output power. */
  operatingPointSettled?: boolean;
  /** Per variant, a period-start state to start from (an earlier answer's startStates): a warm start only. */
  startHints?: { [V in VariantName]?: number[] | undefined };
  /** Per variant with a start hint, the Jacobian estimate of the run that answered it (VariantRun.jacobian). */
  startJacobians?: Jacobians;
  /** Set to 1 by the request thread when the request closed: the runs stop at the next cycle (WorkControl). */
  stopFlag?: Int32Array;
}

export interface OperatingPointTask { scenario: Scenario; capMs: number; stopFlag?: Int32Array }
export type OperatingPointTaskResult = { ok: true; scenario: Scenario } | { ok: false; failure: string };

/** The scenario with the peak current that delivers its output power (unchanged when it gives none). */
export function runOperatingPointTask(task: OperatingPointTask): OperatingPointTaskResult {
  try {
    return { ok: true, scenario: settleOperatingPoint(task.scenario, { deadlineMs: Date.now() + task.capMs, ...stopRequestedBy(task.stopFlag) }).scenario };
  } catch (error) {
    if (error instanceof SimulationFailure) return { ok: false, failure: error.message };
    throw error;
  }
}

export interface DisplayTraces {
  drainVoltage: ReducedTrace;
  clampVoltage?: ReducedTrace;
  /** Turn-off instants within the window (seconds), for "zoom to a turn-off". */
  turnOffSeconds: number[];
}

// The start states are answered (the simulator's own units and order); the Jacobians are kept by the server.
export type { StartStates, Jacobians };

export type SimulateTaskResult =
  | { ok: true; report: SimulationReport; traces: Partial<Record<VariantName, DisplayTraces>>; periodSeconds: number; recordedSeconds: number; startStates: StartStates; jacobians: Jacobians }
  | { ok: false; failure: string };

export function runSimulateTask(task: SimulateTask): SimulateTaskResult {
  const runs: VariantRun[] = [];
  const deadlineMs = Date.now() + task.capMs;
  const stop = stopRequestedBy(task.stopFlag);
  try {
    const scenario = task.operatingPointSettled ? task.scenario : settleOperatingPoint(task.scenario, { deadlineMs, ...stop }).scenario;
    for (const v of task.variants) {
      // One recorded cycle of a settled orbit gives every metric and, repeated, the plot (see
      // repeatCycle): recording the scenario's cycles took a fifth to a quarter of an edit's work.
      runs.push(runVariant(scenario, v, { deadlineMs, ...stop, recordedCyclesWhenSettled: 1, ...warmStartOptions(v, task.startHints, task.startJacobians) }));
    }
  } catch (error) {
    if (error instanceof SimulationFailure) return { ok: false, failure: error.message };
    throw error;
  }
  const period = 1 / task.scenario.switch.frequency;
  const recordedSeconds = task.scenario.simulation.recordedCycles * period;
  const start = task.window?.startSeconds ?? 0;
  const end = task.window?.endSeconds ?? recordedSeconds;
  const traces: Partial<Record<VariantName, DisplayTraces>> = {};
  const drawnCycles = task.scenario.simulation.recordedCycles;
  for (const run of runs) {
    const { timeSeconds, channels } = run.recorder.waveform;
    const copies = run.recordedCycles === 1 ? drawnCycles : 1;
    const shown = (values: ArrayLike<number>): ReducedTrace => {
      const drawn = copies > 1 ? repeatCycle(timeSeconds, values, period, copies) : { time: timeSeconds, values };
      return roundForDisplay(reduceForDisplay(drawn.time, drawn.values, start, end, task.columns), end - start, task.columns);
    };
    const cycles = run.recorder.cycles;
    const entry: DisplayTraces = {
      drainVoltage: shown(channels.drainVoltage),
      turnOffSeconds: Array.from({ length: drawnCycles }, (_, k) => k * period + cycles[k % cycles.length]!.turnOffSeconds)
        .filter((t) => t >= start && t <= end),
    };
    if (run.params.clamp) entry.clampVoltage = shown(channels.clampVoltage);
    traces[run.variant] = entry;
  }
  return { ok: true, report: simulationReport(task.scenario, runs), traces, periodSeconds: period, recordedSeconds, ...warmStartsOf(runs) };
}
