// A scope capture for the page, in a worker thread: read from the text the page sent (the same
// reader, checks and messages as `flyclamp fit`), reduced for display with t = 0 at the first
// turn-off edge whose ring was measured; with a scenario, the model fitted to it as `fit --json`
// answers, plus the fitted simulation's drain on the same time axis.

import type { Scenario, VariantName } from '../circuit/scenario.js';
import { reduceForDisplay, type ReducedTrace } from '../analysis/display-reduction.js';
import { CaptureError, readCaptureText, type Capture } from '../capture/read-capture.js';
import { analyseRing, RingNotFound, type RingAnalysis } from '../capture/ring-analysis.js';
import { fitModel, ModelFitFailed, runLocally } from '../capture/fit-model.js';
import { fitJson, type FitJson } from '../capture/fit-json.js';
import { signalLevels } from '../capture/signal-levels.js';
import { turnOffEdges } from '../capture/turn-off-edges.js';

export interface CaptureTask {
  captureText: string;
  /** The drain column, as `--column` takes it (a name, or a position counted from 1). */
  column?: string;
  maxSamples: number;
  /** Display columns of the reduced capture (and fitted drain). */
  columns: number;
  /** With a scenario the model is fitted; without, the capture is only read and measured. */
  scenario?: Scenario;
  /** Time cap, ms, counted from when the worker starts the task. */
  capMs: number;
}

export interface CaptureView {
  /** The capture reduced for display, s from the first measured turn-off edge, V. */
  capture: ReducedTrace;
  columnName: string;
  voltageColumns: string[];
  captureSamples: number;
  /** Where t = 0 is: the drain rising through this level (halfway from the on level to the plateau), V. */
  midpointVolts: number;
  /** The ring measured from the capture alone, or why it could not be. */
  ring: { frequency: number; decay: number } | { problem: string };
}

export type CaptureTaskResult =
  | ({ ok: true } & CaptureView & { fit?: FitJson & { variant: VariantName; simulatedDrain: ReducedTrace; offset: number } })
  /** `field`: the request field at fault (400); `ring`: no ring to fit (422); `fit`: the fit's simulations failed (422, 504 at the cap). */
  | { ok: false; kind: 'field'; field: 'body.capture' | 'body.column'; failure: string }
  | { ok: false; kind: 'ring' | 'fit'; failure: string };

/** The span shown: half a switching period before the first edge to three and a half after (the page records three cycles by default). */
const PERIODS_BEFORE = 0.5;
const PERIODS_AFTER = 3.5;

export async function runCaptureTask(task: CaptureTask): Promise<CaptureTaskResult> {
  const deadlineMs = Date.now() + task.capMs;
  let capture: Capture;
  try {
    capture = readCaptureText(task.captureText, { maxSamples: task.maxSamples, ...(task.column !== undefined ? { column: task.column } : {}) });
  } catch (error) {
    if (error instanceof CaptureError) return { ok: false, kind: 'field', field: error.flag === '--column' ? 'body.column' : 'body.capture', failure: error.message.replace(/ with --column,/, ' with "column",') };
    throw error;
  }
  const { timeSeconds: t, volts } = capture;
  let ring: RingAnalysis | null = null;
  let ringProblem = '';
  try {
    ring = analyseRing(t, volts);
  } catch (error) {
    if (!(error instanceof RingNotFound)) throw error;
    ringProblem = error.message;
  }
  // t = 0 at the first edge whose ring was measured (the one the fit's alignment refers to), else the first edge.
  const levels = ring?.levels ?? signalLevels(volts);
  const edges = ring?.edges ?? turnOffEdges(t, volts, levels);
  const zeroEdge = ring?.rings[0]?.edge ?? edges[0];
  if (!zeroEdge) return { ok: false, kind: 'ring', failure: `no turn-off edge in the capture (the drain never rises from its low level ${levels.lowVolts.toPrecision(4)} V through ${levels.midpointVolts.toPrecision(4)} V after resting there): expected a capture of at least one whole turn-off` };
  const zero = zeroEdge.timeSeconds;
  const spacings = edges.slice(1).map((e, k) => e.timeSeconds - edges[k]!.timeSeconds).sort((a, b) => a - b);
  const period = spacings.length > 0 ? spacings[Math.floor(spacings.length / 2)]! : Infinity;
  const from = Math.max(t[0]!, zero - PERIODS_BEFORE * period), to = Math.min(t[t.length - 1]!, zero + PERIODS_AFTER * period);
  const shifted = new Float64Array(t.length);
  for (let k = 0; k < t.length; k++) shifted[k] = t[k]! - zero;
  const view: CaptureView = {
    capture: reduceForDisplay(shifted, volts, from - zero, to - zero, task.columns),
    columnName: capture.columnName, voltageColumns: capture.voltageColumns, captureSamples: volts.length,
    midpointVolts: levels.midpointVolts,
    ring: ring ? { frequency: ring.frequencyHz, decay: ring.decayPerSecond } : { problem: ringProblem },
  };
  if (!task.scenario) return { ok: true, ...view };
  if (!ring) return { ok: false, kind: 'ring', failure: ringProblem };
  try {
    const fit = await fitModel(task.scenario, capture, ring, { runner: runLocally, deadlineMs });
    const d = fit.fittedDrain;
    const simTime = Float64Array.from(d.values, (_, k) => k * d.stepSeconds - d.alignSeconds);
    const simValues = Float64Array.from(d.values, (v) => v + fit.offsetVolts);
    return {
      ok: true, ...view,
      fit: {
        ...fitJson(fit, ring, volts.length),
        variant: fit.variant, offset: fit.offsetVolts,
        simulatedDrain: reduceForDisplay(simTime, simValues, from - zero, to - zero, task.columns),
      },
    };
  } catch (error) {
    // A simulation stopped at the deadline surfaces as a failed step: say so, so it is answered 504.
    if (error instanceof ModelFitFailed) return { ok: false, kind: 'fit', failure: Date.now() > deadlineMs ? `the fit reached its time cap (${error.message})` : error.message };
    throw error;
  }
}
