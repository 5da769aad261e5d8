// Fits the scenario's leakage inductance, drain capacitance (a constant, or a scale on a curve) and
// primary resistance to a captured drain waveform: least squares over the off-time after each
// turn-off edge (the ring and what follows it), the simulated settled waveform aligned at each
// edge. The three circuit values are fitted by Levenberg–Marquardt on their logarithms (positive,
// and steps in proportion) with a forward-difference Jacobian, one settled simulation per column
// (run side by side when a pool is given); the nuisance parameters (a time
// shift per edge and a voltage offset of the capture) are solved for each simulation by
// Gauss–Newton, which makes the outer problem the variable-projection one (Golub & Pereyra, SIAM J.
// Numer. Anal. 10(2), 1973) and costs no simulation. The start comes from the ring itself:
// L·C from its undamped frequency, Z0 = √(L/C) from its amplitude over the turn-off current, R from
// its decay α = R/(2L) (a series RLC ring: any circuits text).

import type { CapacitanceCurve, Scenario, VariantName } from '../circuit/scenario.js';
import { runTraceTask, type TraceResult, type TraceTask } from './trace-task.js';
import type { TracePool } from './trace-pool.js';
import { cholesky, choleskySolve, inverseDiagonal, normalEquations } from './small-linear-algebra.js';
import type { RingAnalysis } from './ring-analysis.js';
import { SimulatedTrace } from './simulated-trace.js';

export class ModelFitFailed extends Error {}

export interface FittedValue { value: number; sigma: number }

export interface ModelFit {
  variant: Extract<VariantName, 'bare' | 'clamp'>;
  leakageInductance: FittedValue;
  /** A constant Coss (F), or the factor on every point of a Coss curve. */
  drainCapacitance: FittedValue & { kind: 'constant' | 'curve-scale' };
  primaryResistance: FittedValue;
  /** RMS of capture minus fitted simulation over the fitted windows, V. */
  residualRmsVolts: number;
  /** The capture's offset against the simulation, V (a probe or scope offset). */
  offsetVolts: number;
  samplesUsed: number;
  edgesUsed: number;
  simulations: number;
  iterations: number;
  /** The scenario with the fitted values. */
  scenario: Scenario;
  /**
   * The fitted simulation's drain on its uniform grid and how it lines up with the capture: the
   * capture at `u` seconds after the first fitted edge's midpoint crossing is compared with
   * `values` at `alignSeconds + u`, plus `offsetVolts` (for display beside the capture).
   */
  fittedDrain: { stepSeconds: number; values: Float64Array; alignSeconds: number };
}

export interface FitOptions {
  /** Settled simulations at most (the "a few dozen"). */
  maxSimulations?: number;
  /** Samples per edge window kept for the fit (strided beyond). */
  samplesPerEdge?: number;
  /** Where the settled simulations run (default: this process, one after another). */
  runner?: TraceRunner;
  /** Progress lines (each accepted step), for a person watching. */
  log?: (line: string) => void;
  /** Wall-clock instant (Date.now()) past which each simulation stops (the server's time cap). */
  deadlineMs?: number;
}

/** Runs a batch of settled simulations, in order of the tasks. */
export type TraceRunner = (tasks: TraceTask[]) => Promise<TraceResult[]>;
/** In this process, one after another. */
export const runLocally: TraceRunner = async (tasks) => tasks.map(runTraceTask);
/** Side by side on worker processes. */
export const runOnPool = (pool: TracePool): TraceRunner => (tasks) => Promise.all(tasks.map((task) => pool.run(task)));

/** Default budget of settled simulations for one fit. */
export const MAX_FIT_SIMULATIONS = 40;
const MAX_FIT_EDGES = 8;
const SAMPLES_PER_EDGE = 3000;
/** Simulated samples per ring period: Hermite error ~ (2π/64)⁴/384 of the amplitude, far below 8 bits. */
const SIM_SAMPLES_PER_RING = 64;
/**
 * Forward-difference step in ln(parameter): a 0.2 % change moves the ring by volts, far above the
 * settled run's own scatter (the settle tolerance, 1e-5 of Vin + VR by default: below a millivolt).
 * A tighter settle tolerance costs ten times the cycles on a Coss curve (measured: 300 against 20).
 */
const DIFFERENCE_STEP = 2e-3;
const MAX_LOG_STEP = 0.5;

interface CaptureWindows {
  /** Time from the edge's midpoint crossing, s. */
  u: Float64Array;
  volts: Float64Array;
  edgeOf: Int32Array;
  edges: number;
}

interface Evaluation {
  theta: number[];
  trace: SimulatedTrace;
  residual: Float64Array;
  cost: number;
  shifts: number[];
  offset: number;
  /** Sim time of the capture's edge crossing, before the shift. */
  anchor: number;
}

export async function fitModel(scenario: Scenario, capture: { timeSeconds: Float64Array; volts: Float64Array }, ring: RingAnalysis, options: FitOptions = {}): Promise<ModelFit> {
  const maxSimulations = options.maxSimulations ?? MAX_FIT_SIMULATIONS;
  const windows = captureWindows(capture, ring, options.samplesPerEdge ?? SAMPLES_PER_EDGE);
  const curve = typeof scenario.switch.drainCapacitance === 'number' ? null : scenario.switch.drainCapacitance;
  const base = structuredClone(scenario) as Scenario;
  const ringPerCycle = ring.undampedFrequencyHz / scenario.switch.frequency;
  base.simulation = {
    ...base.simulation,
    recordedCycles: 2,
    samplesPerCycle: Math.min(50_000, Math.max(base.simulation.samplesPerCycle, Math.ceil(SIM_SAMPLES_PER_RING * ringPerCycle))),
  };
  const runner = options.runner ?? runLocally;
  let simulations = 0;
  /** Runs settled simulations as one batch (side by side on a pool); null where one failed. */
  const simulateMany = async (scenarios: Scenario[], variant: VariantName): Promise<Array<SimulatedTrace | string>> => {
    if (simulations + scenarios.length > maxSimulations) throw new ModelFitFailed(`the fit needed more than ${maxSimulations} settled simulations`);
    simulations += scenarios.length;
    const results = await runner(scenarios.map((scenario) => ({ scenario, variant, ...(options.deadlineMs !== undefined ? { deadlineMs: options.deadlineMs } : {}) })));
    return results.map((r) => (r.ok ? new SimulatedTrace(r.trace) : r.failure));
  };

  // Which variant the board is: with a clamp block, the one whose simulated peak is nearer the captured one.
  const capturedPeak = median(ring.rings.map((r) => capture.volts[r.peakIndex]!));
  let variant: ModelFit['variant'] = 'bare';
  const [bare, clamped] = await Promise.all([
    simulateMany([base], 'bare'),
    base.clamp ? simulateMany([base], 'clamp') : Promise.resolve([]),
  ]);
  let startTrace = bare[0]!;
  if (typeof startTrace === 'string') throw new ModelFitFailed(`the scenario as given does not simulate (bare variant): ${startTrace}`);
  const clampTrace = clamped[0];
  if (typeof clampTrace === 'string') throw new ModelFitFailed(`the scenario as given does not simulate (clamp variant): ${clampTrace}`);
  if (clampTrace && Math.abs(peakOf(clampTrace) - capturedPeak) < Math.abs(peakOf(startTrace) - capturedPeak)) {
    variant = 'clamp';
    startTrace = clampTrace;
  }

  const start = startValues(base, ring, startTrace, variant, curve);
  const scenarioAt = (theta: readonly number[]): Scenario => {
    const s = structuredClone(base) as Scenario;
    s.transformer.leakageInductance = Math.exp(theta[0]!);
    s.switch.drainCapacitance = curve ? curve.map(([v, c]) => [v, c * Math.exp(theta[1]!)] as const) : Math.exp(theta[1]!);
    s.transformer.primaryResistance = Math.exp(theta[2]!);
    return s;
  };

  const evaluateMany = async (thetas: number[][], warm: Evaluation | null): Promise<Array<Evaluation | null>> => {
    const traces = await simulateMany(thetas.map(scenarioAt), variant);
    return traces.map((trace, i) => {
      if (typeof trace === 'string') return null;
      const anchor = warm?.anchor ?? trace.risingCrossing(ring.levels.midpointVolts);
      if (!Number.isFinite(anchor)) return null;
      return solveNuisance(trace, windows, thetas[i]!, anchor, warm);
    });
  };
  const evaluate = async (theta: number[], warm: Evaluation | null): Promise<Evaluation | null> => (await evaluateMany([theta], warm))[0]!;

  const log = options.log ?? ((): void => undefined);
  const describe = (e: Evaluation): string => `L ${Math.exp(e.theta[0]!).toExponential(4)} H, C ${Math.exp(e.theta[1]!).toExponential(4)}, R ${Math.exp(e.theta[2]!).toExponential(4)} Ω: rms ${Math.sqrt(e.cost / e.residual.length).toPrecision(4)} V`;
  let current = await evaluate(start, null);
  if (!current) throw new ModelFitFailed('the simulation at the starting values failed or never crossed the capture\'s midpoint');
  if (variant === 'clamp') {
    // With the clamp fitted the free ring's amplitude says little about Z0 (the clamp took the
    // leakage energy), so L·C is kept from the ring and L is scanned over a factor of 4 (√2 steps);
    // the clamp's conduction time, about L·Ioff/(Vc − VR), then tells the candidates apart.
    const scan = [0.5, Math.SQRT1_2, Math.SQRT2, 2].map((factor) => Math.log(factor)).map((ln) => [start[0]! + ln, start[1]! - ln, start[2]! + ln]);
    for (const candidate of await evaluateMany(scan, null)) {
      if (candidate && candidate.cost < current.cost) current = candidate;
    }
  }
  log(`start (${variant}): ${describe(current)}`);
  let lambda = 1e-3;
  let iterations = 0;
  let jacobian: Float64Array[] | null = null;
  // Forward differences, the three simulations side by side.
  const jacobianAt = async (e: Evaluation): Promise<Float64Array[] | null> => {
    const thetas = [0, 1, 2].map((i) => e.theta.map((v, j) => (j === i ? v + DIFFERENCE_STEP : v)));
    const moved = await evaluateMany(thetas, e);
    if (moved.some((m) => m === null)) return null;
    return moved.map((m) => {
      const column = new Float64Array(e.residual.length);
      for (let k = 0; k < column.length; k++) column[k] = (m!.residual[k]! - e.residual[k]!) / DIFFERENCE_STEP;
      return column;
    });
  };
  for (; iterations < 15; iterations++) {
    // One Jacobian, one trial, and the final Jacobian for the uncertainty must fit in the budget.
    if (simulations + 3 + 1 + 3 > maxSimulations) break;
    jacobian = await jacobianAt(current);
    if (!jacobian) throw new ModelFitFailed('a simulation near the current values failed');
    const { jtj, jtr } = normalEquations(jacobian, current.residual);
    let accepted = false;
    let converged = false;
    for (let attempt = 0; attempt < 5 && !accepted && simulations + 3 < maxSimulations; attempt++) {
      const damped = jtj.map((row, i) => row.map((v, j) => (i === j ? v * (1 + lambda) + 1e-300 : v)));
      const l = cholesky(damped);
      if (!l) { lambda *= 10; continue; }
      const step = choleskySolve(l, jtr).map((d) => Math.max(-MAX_LOG_STEP, Math.min(MAX_LOG_STEP, -d)));
      const trial = await evaluate(current.theta.map((v, i) => v + step[i]!), current);
      if (trial && trial.cost < current.cost) {
        const drop = (current.cost - trial.cost) / current.cost;
        current = trial;
        log(`step ${iterations + 1}: ${describe(current)}`);
        jacobian = null;
        lambda = Math.max(lambda / 3, 1e-9);
        accepted = true;
        converged = drop < 1e-6 || Math.max(Math.abs(step[0]!), Math.abs(step[1]!)) < 2e-5;
      } else {
        lambda *= 4;
      }
    }
    if (!accepted || converged) { iterations++; break; }
  }
  // The uncertainty needs the Jacobian at the final point (three simulations were kept for it).
  if (!jacobian) jacobian = await jacobianAt(current);
  const n = current.residual.length;
  const dof = Math.max(1, n - 3 - windows.edges - 1);
  const variance = current.cost / dof;
  const diagonal = jacobian ? inverseDiagonal(normalEquations(jacobian, current.residual).jtj) : null;
  const sigmaOf = (i: number, value: number): number => (diagonal ? value * Math.sqrt(Math.max(0, variance * diagonal[i]!)) : Infinity);
  const theta = current.theta;
  const L = Math.exp(theta[0]!), C = Math.exp(theta[1]!), R = Math.exp(theta[2]!);
  return {
    variant,
    leakageInductance: { value: L, sigma: sigmaOf(0, L) },
    drainCapacitance: { kind: curve ? 'curve-scale' : 'constant', value: C, sigma: sigmaOf(1, C) },
    primaryResistance: { value: R, sigma: sigmaOf(2, R) },
    residualRmsVolts: Math.sqrt(current.cost / n),
    offsetVolts: current.offset,
    samplesUsed: n,
    edgesUsed: windows.edges,
    simulations,
    iterations,
    scenario: withSimulationOf(scenarioAt(theta), scenario),
    fittedDrain: { stepSeconds: current.trace.stepSeconds, values: current.trace.values, alignSeconds: current.anchor + current.shifts[0]! },
  };
}

/** The fitted values in the user's scenario, with the user's own simulation settings back. */
function withSimulationOf(fitted: Scenario, original: Scenario): Scenario {
  return { ...fitted, simulation: { ...original.simulation } };
}

function peakOf(trace: SimulatedTrace): number {
  let m = -Infinity;
  for (const v of trace.values) m = Math.max(m, v);
  return m;
}

function median(values: number[]): number {
  const s = [...values].sort((a, b) => a - b);
  return s[Math.floor(s.length / 2)]!;
}

/** ln L, ln C (or ln of the curve's scale), ln R from the ring (see the file comment). */
function startValues(s: Scenario, ring: RingAnalysis, trace: SimulatedTrace, variant: VariantName, curve: CapacitanceCurve | null): number[] {
  const omega0 = 2 * Math.PI * ring.undampedFrequencyHz;
  const alpha = ring.decayPerSecond;
  const first = ring.rings[0]!;
  const Cw = s.transformer.windingCapacitance;
  let L = s.transformer.leakageInductance;
  if (variant === 'bare' && trace.turnOffCurrent > 0) {
    // The ring starts a quarter period before its first peak at amplitude Ioff·Z0 (the leakage current
    // when the output diode takes over); the fit's amplitude is at the first trough, so undo three
    // quarters of a period of decay.
    const amplitudeAtStart = first.fit.amplitudeVolts * Math.exp(alpha * 0.75 / ring.frequencyHz);
    const z0 = amplitudeAtStart / trace.turnOffCurrent;
    const fromRing = z0 / omega0;
    if (Number.isFinite(fromRing) && fromRing > L / 20 && fromRing < L * 20) L = fromRing;
  }
  const node = 1 / (omega0 * omega0 * L);
  const reflected = s.transformer.turnsRatio * (s.output.voltage + s.output.diodeDrop);
  let cParameter: number;
  if (curve) {
    const atPlateau = curveAt(curve, s.supply.voltage + reflected);
    const scale = (node - Cw) / atPlateau;
    cParameter = scale > 0.05 && scale < 20 ? scale : 1;
  } else {
    const coss = node - Cw;
    cParameter = coss > 0 ? coss : (s.switch.drainCapacitance as number);
  }
  const R = Math.max(2 * L * alpha, 1e-3 * Math.sqrt(L / node), 1e-6);
  return [Math.log(L), Math.log(cParameter), Math.log(R)];
}

/** ln-linear interpolation of datasheet points, the last value beyond (as the model does). */
function curveAt(curve: CapacitanceCurve, v: number): number {
  for (let i = 0; i + 1 < curve.length; i++) {
    const [v0, c0] = curve[i]!, [v1, c1] = curve[i + 1]!;
    if (v <= v1) return c0 * Math.exp((Math.log(c1 / c0) * (Math.max(v, v0) - v0)) / (v1 - v0));
  }
  return curve[curve.length - 1]![1];
}

/**
 * The captured samples the fit compares: the off-time after each edge, from the midpoint crossing
 * to two ring periods before the next on-time starts (or the capture's end). Besides the leakage
 * ring this holds the plateau and, in DCM, the demagnetisation ring, whose frequency pins the node
 * capacitance through the magnetizing inductance. With the ring alone, L and C are told apart only
 * by the ring's amplitude over the turn-off current, and under fixed duty in DCM that current
 * itself depends on C (where the idle ring stands at turn-on): on a synthetic fixed-duty capture
 * the ring-only fit settled 11–14 % off in L and C, the off-time fit within 0.01 %. The margin
 * before the on-time keeps the turn-on's steep fall, whose timing the per-edge shift does not
 * align, out of the sum (it held the fit at a residual four times the noise).
 */
function captureWindows(capture: { timeSeconds: Float64Array; volts: Float64Array }, ring: RingAnalysis, samplesPerEdge: number): CaptureWindows {
  const chosen = ring.rings.slice(0, MAX_FIT_EDGES);
  const u: number[] = [], volts: number[] = [], edgeOf: number[] = [];
  chosen.forEach((r, e) => {
    const next = ring.edges.find((x) => x.index > r.edge.index);
    let offTimeEnd = (next ? next.lowSinceIndex : capture.volts.length) - 1;
    if (next) {
      const stop = capture.timeSeconds[next.lowSinceIndex]! - 2 / ring.frequencyHz;
      while (offTimeEnd > r.endIndex && capture.timeSeconds[offTimeEnd]! > stop) offTimeEnd--;
    }
    const from = r.edge.index, to = Math.max(r.endIndex, offTimeEnd);
    const stride = Math.max(1, Math.ceil((to - from + 1) / samplesPerEdge));
    for (let i = from; i <= to; i += stride) {
      u.push(capture.timeSeconds[i]! - r.edge.timeSeconds);
      volts.push(capture.volts[i]!);
      edgeOf.push(e);
    }
  });
  return { u: Float64Array.from(u), volts: Float64Array.from(volts), edgeOf: Int32Array.from(edgeOf), edges: chosen.length };
}

/** Per-edge time shifts and the offset that best align this simulation with the capture (Gauss–Newton). */
function solveNuisance(trace: SimulatedTrace, w: CaptureWindows, theta: number[], anchor: number, warm: Evaluation | null): Evaluation | null {
  const E = w.edges;
  const shifts = warm ? [...warm.shifts] : new Array<number>(E).fill(0);
  let offset = warm?.offset ?? 0;
  const n = w.u.length;
  const residual = new Float64Array(n);
  const slope = new Float64Array(n);
  const point = { value: 0, slope: 0 };
  const fill = (): number => {
    let cost = 0;
    for (let k = 0; k < n; k++) {
      trace.at(anchor + w.u[k]! + shifts[w.edgeOf[k]!]!, point);
      const r = w.volts[k]! - point.value - offset;
      residual[k] = r;
      slope[k] = point.slope;
      cost += r * r;
    }
    return cost;
  };
  let cost = fill();
  for (let iteration = 0; iteration < 12; iteration++) {
    // Normal equations in (shift_1..shift_E, offset); ∂r/∂shift = −slope, ∂r/∂offset = −1.
    const size = E + 1;
    const a = Array.from({ length: size }, () => new Array<number>(size).fill(0));
    const g = new Array<number>(size).fill(0);
    for (let k = 0; k < n; k++) {
      const e = w.edgeOf[k]!;
      const s = slope[k]!, r = residual[k]!;
      a[e]![e]! += s * s;
      a[e]![E]! += s;
      a[E]![e]! += s;
      a[E]![E]! += 1;
      g[e]! += s * r;
      g[E]! += r;
    }
    const l = cholesky(a);
    if (!l) return null;
    const step = choleskySolve(l, g);
    const oldShifts = [...shifts], oldOffset = offset;
    for (let e = 0; e < E; e++) shifts[e]! += step[e]!;
    offset += step[E]!;
    const trialCost = fill();
    if (trialCost > cost) {
      // Overshot (far from the minimum in a shift): take half steps back.
      shifts.splice(0, E, ...oldShifts.map((s0, e) => s0 + step[e]! / 4));
      offset = oldOffset + step[E]! / 4;
      cost = fill();
      continue;
    }
    const done = (cost - trialCost) <= 1e-10 * cost;
    cost = trialCost;
    if (done) break;
  }
  return { theta, trace, residual: Float64Array.from(residual), cost, shifts, offset, anchor };
}
