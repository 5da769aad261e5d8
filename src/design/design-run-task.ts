// One simulation step of a design as a task that can cross to a worker process: a scenario placed
// at a corner with a set of parts in, the metrics (and, when asked, the drain traces reduced for the
// plots) out. Plain data both ways, so that it survives IPC; the waveforms stay where they ran.

import type { Scenario, VariantName } from '../circuit/scenario.js';
import { simulationReport, type SimulationReport } from '../analysis/simulation-report.js';
import { reduceForDisplay, type ReducedTrace } from '../analysis/display-reduction.js';
import { runVariant, SimulationFailure, type VariantRun } from '../simulation/run-variant.js';
import { settleOperatingPoint } from '../simulation/operating-point.js';

/** The turn-off window kept for the zoomed plot: from a little before the switch opens to a quarter period after. */
const TURN_OFF_BEFORE_PERIODS = 0.02;
const TURN_OFF_AFTER_PERIODS = 0.25;

export interface DesignRunTask {
  scenario: Scenario;
  /**
   * Settle the peak current on the load first (output.power; the bare circuit's delivered power,
   * which the clamp parts do not change) and report it; no variant needs to run with it.
   */
  settle?: boolean;
  variants: VariantName[];
  /** The drain-voltage derating the metrics' margins are against. */
  drainDerating: number;
  /** Keep the drain traces for the plots, this many pixel columns over the whole recording. */
  traceColumns?: number;
  /** Wall-clock instant (Date.now()) past which a run stops with a failure. */
  deadlineMs?: number;
}

/** Drain voltage of one variant: the whole recording, and the first recorded turn-off with time counted from it. */
export interface DrainTraces { whole: ReducedTrace; turnOff: ReducedTrace }

export type DesignRunResult =
  | { ok: true; peakCurrent: number | null; variants: SimulationReport['variants']; traces?: Partial<Record<VariantName, DrainTraces>> }
  | { ok: false; failure: string };

export function drainTraces(run: VariantRun, columns: number): DrainTraces {
  const w = run.recorder.waveform;
  const end = w.timeSeconds[w.timeSeconds.length - 1]!;
  const period = run.params.periodSeconds;
  const off = run.recorder.cycles[0]!.turnOffSeconds;
  const turnOff = reduceForDisplay(w.timeSeconds, w.channels.drainVoltage, off - TURN_OFF_BEFORE_PERIODS * period, off + TURN_OFF_AFTER_PERIODS * period, columns);
  return {
    whole: reduceForDisplay(w.timeSeconds, w.channels.drainVoltage, 0, end, columns),
    turnOff: { timeSeconds: turnOff.timeSeconds.map((t) => t - off), values: turnOff.values },
  };
}

export function runDesignRunTask(task: DesignRunTask): DesignRunResult {
  const options = task.deadlineMs === undefined ? {} : { deadlineMs: task.deadlineMs };
  try {
    const settled = task.settle ? settleOperatingPoint(task.scenario, options) : { scenario: task.scenario, point: null };
    // A run kept for its metrics alone records one cycle of a settled orbit, which gives them all.
    const recording = task.traceColumns === undefined ? { recordedCyclesWhenSettled: 1 } : {};
    const runs = task.variants.map((v) => runVariant(settled.scenario, v, { ...options, ...recording }));
    const report = simulationReport(settled.scenario, runs, task.drainDerating);
    const columns = task.traceColumns;
    const traces = columns === undefined ? undefined : Object.fromEntries(runs.map((r) => [r.variant, drainTraces(r, columns)]));
    return { ok: true, peakCurrent: settled.point?.peakCurrent ?? null, variants: report.variants, ...(traces ? { traces } : {}) };
  } catch (error) {
    if (error instanceof SimulationFailure) return { ok: false, failure: error.message };
    throw error;
  }
}
