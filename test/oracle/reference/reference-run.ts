// Independent reference model of flyclamp's switching node with real parts: public entry point.
//
// It follows the README's "The model, its assumptions and limits" and shares no code with the engine (src/model, src/solver,
// src/simulation, src/analysis, src/study, src/design, odex); only parseSiNumber is borrowed to read
// SI strings. Method: classic Runge–Kutta 4 with a fixed step (a fraction of the fastest ring and of
// the shortest time constant), switching instants landed on exactly, device events located on a
// re-integration from the step start by Illinois regula falsi to 1e-13 of the period; periodic steady
// state by Newton shooting on the period map (finite-difference Jacobian) after a few plain cycles.
//
// Readings of the spec chosen here where it is silent or ambiguous (reported to the lead):
//  1. Fixed duty: the switch opens at D·T; the turn-off delay td applies to peak-current control only
//     ("the switch opens td later" is written under the comparator). tf applies to both.
//  2. Iscale for the recovery end (qM < 1e-6·Iscale·TM) under fixed duty, where no Ipk exists:
//     Vin·D·T/(Lm + Llk), the ideal peak of the on-time ramp.
//  3. Closed switch: vd = Ron·(ip − id − ibc) with the clamp-branch current ibc included (the spec's
//     vd = Rpar·(ip + vs/Rs) leaves it out; the two agree whenever the clamp branch is idle, which is
//     the case in every demo; with Ls > 0 and Cj > 0 the Ls–Cj ring can still carry current at
//     turn-on). The channel current is isw = ip − id − ibc accordingly, and I0 of the fall is that.
//  4. Energy balance: the spec's on-state equations hold vd algebraic and give the channel ip − id,
//     so the drain-node energy change over the on-time, Enode(vd at opening) − Enode(vd after
//     turn-on), is supplied by no power term. It is charged to the switch channel (physically the
//     channel also carries Cnode·dvd/dt): switchChannel = ∫vd·isw dt − that change, and the change
//     is reported separately as switchChannelNodeEnergyCorrectionJoules (≈ ½·Cnode·(Ron·Ipk)²).
//     It is 4e-8…4e-7 of the supply energy in the demos, but 4.7e-6 in mains-aux-12v with a Coss
//     curve of 1 nF at 0 V: the spec's balance taken literally would not close to 1e-6 there.
//  5. Avalanche with Ls = 0: the spec's "the clamp diode is off while the drain avalanches" holds
//     when the free drain reaches Vav below the clamp level. It is ill-posed when a conducting
//     clamp's level Vin + vc + Vf rises to Vav, or when vc decays during the avalanche until
//     Vin + vc + Vf falls to Vav: the ideal diode would then be forward-biased by more than Vf (an
//     impulsive charge of Cc and a jump of vd when the avalanche ends). Our reading: both conduct,
//     vd = Vav holds vc = Vav − Vin − Vf, the diode carries vc/Rc and the avalanche the rest; when
//     the avalanche current falls to 0 the clamp goes on alone. Energy is conserved throughout.
//  6. A Ls = 0 clamp still conducting when the switch turns on is cut off (recovering if it holds
//     charge); it does not happen in any case tested here.
//  7. Forward recovery with Ls = 0 uses Ls = 1 nH (as the spec says the engine does); Cj is then a
//     state of that loop, not lumped with the drain. That loop is stiff (Ls/R0 ≈ 50 ps for VFP = 3 V,
//     tfr = 40 ns at 100 A/µs), so a fixed explicit step crawls there (~40 s a run).
//  8. tfr: t* = tfr/19.95 exactly as the spec writes (the root of 2s/(1 + s²) = 0.1 is 19.9499).
//  9. clampDiodePeakCurrent: maxima located inside a step from the sign change of d iD/dt (a state
//     derivative when Ls > 0; the analytic derivative of the algebraic icd when Ls = 0).
// 10. The metrics are over one recorded settled period (all settled periods are the same to 1e-9).
// 11. Chained transitions: after every transition each event of the new discrete state whose
//     condition already holds by more than 1e-9 of its scale fires at once; one that sits exactly at
//     its threshold fires only if it rises over the next step (so a diode that has just stopped does
//     not restart at the same instant unless the circuit drives it on).
// 12. The Coss curve's breakpoints are crossings the integrator steps to (no step straddles a kink).

import { equivalentCapacitances } from './capacitance.js';
import { locateRisingRoot } from './integrator.js';
import { readScenario, reflectedVolts, type ReferenceNetlist } from './netlist.js';
import {
  DEFAULT_STEP_SETTINGS, E_AVALANCHE, E_BODY, E_CHANNEL, E_CLAMP_DIODE, E_CLAMP_R, E_DAMPER_R, E_LOAD, E_OUTPUT_DIODE,
  E_LOOP_R, E_PRIMARY_R, E_SUPPLY, E_TURN_OFF, NodeAux, PHYSICAL_SIZE, Q_REVERSE, SwitchingNode, VC_INTEGRAL,
  type DiscreteState, type PeriodOutcome, type PeriodRecorder, type StepSettings, type Variant,
} from './switching-node.js';

export type { Variant } from './switching-node.js';

export interface ReferenceOptions {
  /** Steps per fastest ring period (default 200). */
  stepsPerRing?: number;
  /** Steps per shortest time constant (default 24). */
  stepsPerTimeConstant?: number;
  /** Minimum steps per switching period (default 1000). */
  minStepsPerPeriod?: number;
  /** Event location tolerance, fraction of the period (default 1e-13). */
  eventTimeTolerance?: number;
  /** Plain cycles before Newton shooting (default 4). */
  initialCycles?: number;
  /** Newton iterations at most (default 25). */
  maxNewtonIterations?: number;
  /** Scaled residual at which Newton stops (default 1e-11). */
  newtonTolerance?: number;
  /** Largest scaled change over the verification period for `settled` (default 1e-9). */
  settleTolerance?: number;
  /** Keep the recorded period's states at every step end and event (default false). */
  trace?: boolean;
}

/** The recorded settled period at full step resolution (step ends and both sides of every event). */
export interface ReferenceTrace {
  timeSeconds: number[];
  drainVolts: number[];
  /** Clamp-capacitor voltage above the rail, V. */
  clampVolts: number[];
  primaryAmps: number[];
  magnetizingAmps: number[];
  clampDiodeAmps: number[];
  events: Array<{ name: string; seconds: number }>;
}

export interface ReferenceMetrics {
  peakDrainVoltage: number;
  /** Peak vd minus Vin + vc at that instant; null without a clamp. */
  peakAboveClamp: number | null;
  clampVoltageMean: number | null;
  clampVoltageRipple: number | null;
  clampResistorPower: number | null;
  damperResistorPower: number | null;
  clampDiodePeakCurrent: number | null;
  switchTurnOnLossPower: number;
  turnOffCurrent: number;
  turnOffLossPower: number;
  avalancheEnergyPerCycle: number;
  avalanchePower: number;
  clampDiodePower: number | null;
  clampDiodeReverseCharge: number | null;
}

export interface ReferenceEnergyBalance {
  supplyJoules: number;
  loadJoules: number;
  outputDiodeJoules: number;
  primaryResistanceJoules: number;
  switchChannelJoules: number;
  switchChannelNodeEnergyCorrectionJoules: number;
  turnOffJoules: number;
  turnOnJoules: number;
  clampResistorJoules: number;
  clampDiodeJoules: number;
  bodyDiodeJoules: number;
  avalancheJoules: number;
  damperResistorJoules: number;
  clampLoopResistanceJoules: number;
  storedChangeJoules: number;
  /** supply − (every loss + load + stored change), J. */
  mismatchJoules: number;
  /** |mismatch| / supply. */
  relativeMismatch: number;
}

export interface ReferenceWork {
  derivativeEvaluations: number;
  steps: number;
  deviceEvents: number;
  periods: number;
  newtonIterations: number;
  stepSeconds: number;
  wallSeconds: number;
}

export interface ReferenceResult {
  scenario: string;
  variant: Variant;
  supplyVoltage: number;
  reflectedVoltage: number;
  /** Co(er) of the transistor's curve alone over 0…Vin + VR, F. */
  drainCapacitanceEnergyEquivalent: number;
  /** Co(tr) of the transistor's curve alone over 0…Vin + VR, F. */
  drainCapacitanceChargeEquivalent: number;
  metrics: ReferenceMetrics;
  energyBalance: ReferenceEnergyBalance;
  settled: boolean;
  /** Largest change of the period-start state over the verification period, relative to Ipk and Vin + VR. */
  periodicChange: number;
  conduction: 'CCM' | 'DCM';
  turnOffSeconds: number;
  work: ReferenceWork;
  trace?: ReferenceTrace;
}

/** Running extremes of one recorded period, maxima located inside steps on the re-integration. */
export class ExtremaRecorder implements PeriodRecorder {
  peakDrainVolts = Number.NEGATIVE_INFINITY;
  clampLevelAtPeakVolts = Number.NaN;
  clampMaxVolts = Number.NEGATIVE_INFINITY;
  clampMinVolts = Number.POSITIVE_INFINITY;
  diodePeakAmps = Number.NEGATIVE_INFINITY;
  readonly drainMaxima: Array<{ seconds: number; volts: number }> = [];
  readonly drainMinima: Array<{ seconds: number; volts: number }> = [];
  readonly events: Array<{ name: string; seconds: number; ip: number; im: number; vd: number; vc: number }> = [];
  private readonly probe = new NodeAux();
  readonly trace: ReferenceTrace | undefined;

  constructor(private readonly supplyVolts: number, keepTrace = false) {
    this.trace = keepTrace
      ? { timeSeconds: [], drainVolts: [], clampVolts: [], primaryAmps: [], magnetizingAmps: [], clampDiodeAmps: [], events: [] }
      : undefined;
  }

  point(a: Readonly<NodeAux>): void {
    if (this.trace !== undefined) {
      this.trace.timeSeconds.push(a.t);
      this.trace.drainVolts.push(a.vd);
      this.trace.clampVolts.push(a.vc);
      this.trace.primaryAmps.push(a.ip);
      this.trace.magnetizingAmps.push(a.im);
      this.trace.clampDiodeAmps.push(a.iD);
    }
    this.drain(a);
    this.clampMaxVolts = Math.max(this.clampMaxVolts, a.vc);
    this.clampMinVolts = Math.min(this.clampMinVolts, a.vc);
    this.diodePeakAmps = Math.max(this.diodePeakAmps, a.iD);
  }

  piece(start: Readonly<NodeAux>, end: Readonly<NodeAux>, at: (theta: number, out: NodeAux) => void): void {
    const locate = (value: (a: NodeAux) => number): NodeAux => {
      const g = (theta: number): number => { at(theta, this.probe); return value(this.probe); };
      const theta = locateRisingRoot(g, value(start as NodeAux), value(end as NodeAux), 1e-12);
      at(theta, this.probe);
      return this.probe;
    };
    if (start.vdDot > 0 && end.vdDot < 0) {
      const p = locate((a) => -a.vdDot);
      this.drain(p);
      this.drainMaxima.push({ seconds: p.t, volts: p.vd });
    }
    if (start.vdDot < 0 && end.vdDot > 0) {
      const p = locate((a) => a.vdDot);
      this.drainMinima.push({ seconds: p.t, volts: p.vd });
    }
    if (start.vcDot > 0 && end.vcDot < 0) this.clampMaxVolts = Math.max(this.clampMaxVolts, locate((a) => -a.vcDot).vc);
    if (start.vcDot < 0 && end.vcDot > 0) this.clampMinVolts = Math.min(this.clampMinVolts, locate((a) => a.vcDot).vc);
    if (start.iDDot > 0 && end.iDDot < 0) this.diodePeakAmps = Math.max(this.diodePeakAmps, locate((a) => -a.iDDot).iD);
  }

  event(name: string, a: Readonly<NodeAux>): void {
    this.events.push({ name, seconds: a.t, ip: a.ip, im: a.im, vd: a.vd, vc: a.vc });
    this.trace?.events.push({ name, seconds: a.t });
  }

  private drain(a: Readonly<NodeAux>): void {
    if (a.vd > this.peakDrainVolts) {
      this.peakDrainVolts = a.vd;
      this.clampLevelAtPeakVolts = this.supplyVolts + a.vc;
    }
  }
}

export function stepSettings(options: ReferenceOptions = {}): StepSettings {
  return {
    stepsPerRing: options.stepsPerRing ?? DEFAULT_STEP_SETTINGS.stepsPerRing,
    stepsPerTimeConstant: options.stepsPerTimeConstant ?? DEFAULT_STEP_SETTINGS.stepsPerTimeConstant,
    minStepsPerPeriod: options.minStepsPerPeriod ?? DEFAULT_STEP_SETTINGS.minStepsPerPeriod,
    eventTimeTolerance: options.eventTimeTolerance ?? DEFAULT_STEP_SETTINGS.eventTimeTolerance,
  };
}

interface MapResult { start: Float64Array; startMode: DiscreteState; end: Float64Array; mode: DiscreteState; outcome: PeriodOutcome }

const sameDiscrete = (a: DiscreteState, b: DiscreteState): boolean =>
  a.outputDiodeOn === b.outputDiodeOn && a.clampDiode === b.clampDiode && a.drain === b.drain;

/** Solves A·x = b in place by Gaussian elimination with partial pivoting (A is small and dense). */
function solveDense(a: number[][], b: number[]): number[] {
  const n = b.length;
  for (let col = 0; col < n; col++) {
    let pivot = col;
    for (let row = col + 1; row < n; row++) if (Math.abs(a[row]![col]!) > Math.abs(a[pivot]![col]!)) pivot = row;
    [a[col], a[pivot]] = [a[pivot]!, a[col]!];
    [b[col], b[pivot]] = [b[pivot]!, b[col]!];
    const d = a[col]![col]!;
    if (d === 0) throw new Error('reference: singular shooting Jacobian');
    for (let row = col + 1; row < n; row++) {
      const factor = a[row]![col]! / d;
      for (let k = col; k < n; k++) a[row]![k]! -= factor * a[col]![k]!;
      b[row]! -= factor * b[col]!;
    }
  }
  const x = new Array<number>(n).fill(0);
  for (let row = n - 1; row >= 0; row--) {
    let s = b[row]!;
    for (let k = row + 1; k < n; k++) s -= a[row]![k]! * x[k]!;
    x[row] = s / a[row]![row]!;
  }
  return x;
}

/** Newton shooting on the period map x(0⁻) ↦ x(T⁻), after `initialCycles` plain cycles. */
export function settle(node: SwitchingNode, options: ReferenceOptions = {}): { x: Float64Array; mode: DiscreteState; newtonIterations: number; residual: number } {
  const components = node.shootingComponents();
  const scales = components.map((c) => node.scaleOf(c));
  const map = (z: Float64Array, mode: DiscreteState): MapResult => {
    const start = Float64Array.from(z);
    node.projectStart(start, mode);
    const r = node.runPeriod(start, mode);
    return { start, startMode: mode, end: r.x, mode: r.mode, outcome: r.outcome };
  };
  const residualOf = (m: MapResult): number[] => components.map((c, i) => (m.end[c]! - m.start[c]!) / scales[i]!);
  const norm = (r: readonly number[]): number => Math.max(...r.map(Math.abs));

  let { x, mode } = node.initialState();
  let base = map(x, mode);
  for (let k = 1; k < (options.initialCycles ?? 4); k++) base = map(base.end, base.mode);
  const tolerance = options.newtonTolerance ?? 1e-11;
  let iterations = 0;
  let residual = norm(residualOf(base));
  for (; iterations < (options.maxNewtonIterations ?? 25) && residual >= tolerance; iterations++) {
    if (!sameDiscrete(base.startMode, base.mode)) {
      base = map(base.end, base.mode);
      residual = norm(residualOf(base));
      continue;
    }
    const r = residualOf(base);
    const delta = 1e-7;
    const jacobian = components.map(() => components.map(() => 0));
    components.forEach((cj, j) => {
      const z = Float64Array.from(base.start);
      z[cj]! += delta * scales[j]!;
      node.projectStart(z, base.startMode);
      if (z[cj] === base.start[cj]) return; // fixed by the discrete state: a zero column
      const perturbed = map(z, base.startMode);
      components.forEach((ci, i) => { jacobian[i]![j] = (perturbed.end[ci]! - base.end[ci]!) / scales[i]! / delta; });
    });
    // (J − I)·Δ = −r in scaled variables.
    const matrix = jacobian.map((row, i) => row.map((v, j) => v - (i === j ? 1 : 0)));
    const step = solveDense(matrix, r.map((v) => -v));
    // A short line search only: far from the orbit the map is not smooth (device events come and
    // go), and a few plain cycles then do better than a tiny Newton step.
    let accepted = false;
    let stalled = false;
    for (let lambda = 1; lambda >= 0.25; lambda /= 2) {
      const z = Float64Array.from(base.start);
      components.forEach((c, i) => { z[c]! += lambda * step[i]! * scales[i]!; });
      const trial = map(z, base.mode);
      const trialResidual = norm(residualOf(trial));
      if (trialResidual < 0.9 * residual || (residual < 100 * tolerance && trialResidual < residual)) {
        // Near the noise floor of the period map (event location, rounding) a weak step means done.
        stalled = residual < 100 * tolerance && trialResidual > 0.5 * residual;
        base = trial;
        residual = trialResidual;
        accepted = true;
        break;
      }
    }
    if (stalled) break;
    if (!accepted) {
      for (let k = 0; k < 3; k++) base = map(base.end, base.mode);
      residual = norm(residualOf(base));
    }
  }
  x = base.end;
  mode = base.mode;
  return { x, mode, newtonIterations: iterations, residual };
}

/** Settles one variant of a scenario object and measures its settled period. */
export function referenceRun(scenarioJson: unknown, variant: Variant, options: ReferenceOptions = {}): ReferenceResult {
  return referenceRunNetlist(readScenario(scenarioJson), variant, options);
}

export function referenceRunNetlist(netlist: ReferenceNetlist, variant: Variant, options: ReferenceOptions = {}): ReferenceResult {
  const started = performance.now();
  const node = new SwitchingNode(netlist, variant, stepSettings(options));
  const settled = settle(node, options);
  const recorder = new ExtremaRecorder(netlist.supplyVolts, options.trace === true);
  const start = Float64Array.from(settled.x);
  node.projectStart(start, settled.mode);
  const run = node.runPeriod(start, settled.mode, recorder);
  let change = 0;
  for (let c = 0; c < PHYSICAL_SIZE; c++) change = Math.max(change, Math.abs(run.x[c]! - start[c]!) / node.scaleOf(c));
  const settleTolerance = options.settleTolerance ?? 1e-9;

  const T = node.periodSeconds;
  const f = 1 / T;
  const e = run.x;
  const o = run.outcome;
  const clamp = node.hasClamp;
  const metrics: ReferenceMetrics = {
    peakDrainVoltage: recorder.peakDrainVolts,
    peakAboveClamp: clamp ? recorder.peakDrainVolts - recorder.clampLevelAtPeakVolts : null,
    clampVoltageMean: clamp ? e[VC_INTEGRAL]! / T : null,
    clampVoltageRipple: clamp ? recorder.clampMaxVolts - recorder.clampMinVolts : null,
    clampResistorPower: clamp ? e[E_CLAMP_R]! * f : null,
    damperResistorPower: node.hasDamper ? e[E_DAMPER_R]! * f : null,
    clampDiodePeakCurrent: clamp ? Math.max(0, recorder.diodePeakAmps) : null,
    switchTurnOnLossPower: o.turnOnLossJoules * f,
    turnOffCurrent: o.turnOffAmps,
    turnOffLossPower: e[E_TURN_OFF]! * f,
    avalancheEnergyPerCycle: e[E_AVALANCHE]!,
    avalanchePower: e[E_AVALANCHE]! * f,
    clampDiodePower: clamp ? e[E_CLAMP_DIODE]! * f : null,
    clampDiodeReverseCharge: clamp ? e[Q_REVERSE]! : null,
  };
  const balance: ReferenceEnergyBalance = {
    supplyJoules: e[E_SUPPLY]!,
    loadJoules: e[E_LOAD]!,
    outputDiodeJoules: e[E_OUTPUT_DIODE]!,
    primaryResistanceJoules: e[E_PRIMARY_R]!,
    switchChannelJoules: e[E_CHANNEL]! - o.onStateNodeEnergyJoules,
    switchChannelNodeEnergyCorrectionJoules: o.onStateNodeEnergyJoules,
    turnOffJoules: e[E_TURN_OFF]!,
    turnOnJoules: o.turnOnLossJoules,
    clampResistorJoules: e[E_CLAMP_R]!,
    clampDiodeJoules: e[E_CLAMP_DIODE]!,
    bodyDiodeJoules: e[E_BODY]!,
    avalancheJoules: e[E_AVALANCHE]!,
    damperResistorJoules: e[E_DAMPER_R]!,
    clampLoopResistanceJoules: e[E_LOOP_R]!,
    storedChangeJoules: o.storedEndJoules - o.storedStartJoules,
    mismatchJoules: 0,
    relativeMismatch: 0,
  };
  const accounted = balance.loadJoules + balance.outputDiodeJoules + balance.primaryResistanceJoules + balance.switchChannelJoules
    + balance.turnOffJoules + balance.turnOnJoules + balance.clampResistorJoules + balance.clampDiodeJoules + balance.bodyDiodeJoules
    + balance.avalancheJoules + balance.damperResistorJoules + balance.clampLoopResistanceJoules + balance.storedChangeJoules;
  balance.mismatchJoules = balance.supplyJoules - accounted;
  balance.relativeMismatch = Math.abs(balance.mismatchJoules) / Math.abs(balance.supplyJoules);

  const vr = reflectedVolts(netlist);
  const equivalents = equivalentCapacitances(netlist.coss, netlist.supplyVolts + vr);
  const result: ReferenceResult = {
    scenario: netlist.name,
    variant,
    supplyVoltage: netlist.supplyVolts,
    reflectedVoltage: vr,
    drainCapacitanceEnergyEquivalent: equivalents.energyFarads,
    drainCapacitanceChargeEquivalent: equivalents.chargeFarads,
    metrics,
    energyBalance: balance,
    settled: change < settleTolerance && sameDiscrete(settled.mode, run.mode),
    periodicChange: change,
    conduction: run.mode.outputDiodeOn ? 'CCM' : 'DCM',
    turnOffSeconds: o.openSeconds,
    work: {
      derivativeEvaluations: node.counters.evaluations,
      steps: node.counters.steps,
      deviceEvents: node.counters.events,
      periods: node.counters.periods,
      newtonIterations: settled.newtonIterations,
      stepSeconds: node.stepSeconds,
      wallSeconds: (performance.now() - started) / 1000,
    },
  };
  if (recorder.trace !== undefined) result.trace = recorder.trace;
  return result;
}

/** The variants a scenario has: bare always, clamp with a clamp block, damped with a damper block. */
export function availableVariants(scenarioJson: unknown): Variant[] {
  const n = readScenario(scenarioJson);
  const variants: Variant[] = ['bare'];
  if (n.clamp !== undefined) variants.push('clamp');
  if (n.damper !== undefined) variants.push('damped');
  return variants;
}

