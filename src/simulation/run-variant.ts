// The cycle loop: switch on at each period start, integrate mode by mode through the device
// events, and repeat until the period-start state settles (or the orbit is classified), then
// record a few settled cycles at full resolution.

import { applySystem } from '../model/affine.js';
import { circuitForVariant, fastestRingPeriodSeconds, leakageRingPeriodSeconds, type CircuitParams } from '../model/circuit-params.js';
import { SwitchingNodeModel, type DeviceName, type ModeEntry, type ModeEvent } from '../model/events.js';
import { SECONDS_PER_TIME_UNIT, SWITCH_ON, type Mode } from '../model/modes.js';
import { ICH, IM, IP, KF, VC, VS, stateSizeFor } from '../model/state.js';
import { settledClampVoltage } from '../equations/rcd-clamp.js';
import type { Scenario, SimulationSettings, VariantName } from '../circuit/scenario.js';
import { ExactLinearSegmentIntegrator } from '../solver/exact-linear-segment.js';
import { OdexSegmentIntegrator } from '../solver/odex-segment.js';
import type { SegmentIntegrator, SegmentProblem, SegmentResult } from '../solver/segment.js';
import { OrbitTracker, type OrbitKind } from './orbit.js';
import { CycleRecorder } from './recorder.js';
import { SettlingExtrapolator } from './extrapolate.js';
import { shootPeriodicOrbit } from './shooting.js';

export class SimulationFailure extends Error {}

/**
 * Waveform samples kept per recorded cycle: the setting, raised to 24 per leakage ring so that the
 * ring is drawn, at most 50,000 (the request budgets count with the same rule).
 */
export function recordedSamplesPerCycle(samplesSetting: number, period: number, leakageRingPeriod: number): number {
  return Math.min(50_000, Math.max(samplesSetting, Math.ceil((24 * period) / leakageRingPeriod)));
}

export interface RunStats {
  derivativeEvaluations: number;
  steps: number;
  events: number;
  wallTimeMs: number;
  /** odex's relative tolerance on the orbit: the scenario's, or tighter where its noise kept the shooting from settling. */
  relativeTolerance: number;
}

export interface VariantRun {
  variant: VariantName;
  params: CircuitParams;
  orbit: OrbitKind;
  /** Cycles simulated in all, the recorded ones included. */
  cycles: number;
  recordedCycles: number;
  /** Last cycle-to-cycle change of the period-start state, relative to the state scales. */
  finalChange: number;
  /** The period-start state of the first recorded cycle (on the orbit when settled): a start hint for a nearby run. */
  startState: number[];
  /** The run started from RunOptions.startHint. */
  startedFromHint: boolean;
  /**
   * When the shooting settled the orbit: its Jacobian estimate of the period map (scaled,
   * row-major), a RunOptions.startJacobian for a nearby run from startState.
   */
  jacobian?: number[];
  recorder: CycleRecorder;
  stats: RunStats;
}

export interface RunOptions {
  /** Integrator factory; the default is odex. Tests pass an exact one. */
  integrator?: (absoluteTolerance: number[], settings: SimulationSettings, stateSize: number) => SegmentIntegrator;
  /** Stop with a failure once Date.now() passes this. */
  deadlineMs?: number;
  /**
   * Asked with the deadline (between cycles, and every 64 events within one): true stops the run
   * with a failure. The server's way to drop a request whose page has moved on, without ending the
   * worker thread (a new thread took 1.2 s before its next answer).
   */
  stopRequested?: () => boolean;
  /** Starting state [ip, im, vd, vc, vs]; by default the hand-formula clamp voltage and Vin on the damper. */
  initialState?: number[];
  /**
   * A period-start state to start from instead, as a run of a nearby circuit settled at
   * (VariantRun.startState): a warm start. Only a guess: it is ignored unless it has this
   * variant's state size, finite values and every value within START_HINT_SCALES of its state
   * scale, and a run from it that does not settle (or fails) is made again from the usual start,
   * so that the answer does not depend on it beyond the settle tolerance.
   */
  startHint?: readonly number[];
  /** With startHint: the Jacobian estimate of the run it came from (VariantRun.jacobian), only a guess too. */
  startJacobian?: readonly number[];
  /**
   * Accelerate the settling (default true): shooting for the periodic orbit after a few cycles,
   * and, cycle by cycle, jumps ahead along the slowest mode. False: plain cycle after cycle.
   */
  extrapolate?: boolean;
  /** Run exactly this many cycles before recording, whatever the settle test says (benchmarks). */
  exactCycles?: number;
  /**
   * Cycles to record when the orbit settled (at most simulation.recordedCycles): a study point keeps
   * only metrics, and one settled cycle gives them all; other orbits record them all.
   */
  recordedCyclesWhenSettled?: number;
  /** Called after each settling cycle with the count so far and the last change of the period-start state. */
  onCycle?: (cycles: number, change: number) => void;
}

/** Per variant whose orbit settled, its period-start state on the orbit (VariantRun.startState). */
export type StartStates = Partial<Record<VariantName, number[]>>;
/** Per variant whose shooting settled its orbit, the Jacobian estimate at that state (VariantRun.jacobian). */
export type Jacobians = Partial<Record<VariantName, number[]>>;

/** Numbers per variant as a request may carry them (a key present with no value). */
type PerVariantNumbers = { [V in VariantName]?: number[] | undefined };

/** What settled runs hand nearby runs as warm starts. */
export function warmStartsOf(runs: readonly VariantRun[]): { startStates: StartStates; jacobians: Jacobians } {
  const startStates: StartStates = {};
  const jacobians: Jacobians = {};
  for (const run of runs) {
    if (run.orbit !== 'settled') continue;
    startStates[run.variant] = run.startState;
    if (run.jacobian) jacobians[run.variant] = run.jacobian;
  }
  return { startStates, jacobians };
}

/** A variant's warm start as run options: its start state and, with it, the Jacobian estimate there. */
export function warmStartOptions(variant: VariantName, startStates?: PerVariantNumbers, jacobians?: PerVariantNumbers): Pick<RunOptions, 'startHint' | 'startJacobian'> {
  const startHint = startStates?.[variant];
  if (!startHint) return {};
  const startJacobian = jacobians?.[variant];
  return startJacobian ? { startHint, startJacobian } : { startHint };
}

const MAX_EVENTS_PER_CYCLE = 20_000;

/**
 * Each point of a Coss curve is a kink in the field that odex's high orders pay for: at order 4
 * (4 extrapolation columns) the demos' curve variants took 45–55 % of the evaluations and half the
 * cycles of order 9 (solver noise at the kinks also slows the settling). A clamp loop's fast smooth
 * ring favours the high orders again (+17 % at order 4), so it keeps odex's default.
 */
const KINKED_FIELD_EXTRAPOLATION_COLUMNS = 4;
const kinkedField = (p: CircuitParams): boolean => !p.drainNode.isConstant && !(p.clamp && p.clamp.loopInductance > 0);
const MAX_CHAINED_TRANSITIONS = 8;
/**
 * Plain cycles before the shooting starts: the mode sequence of a cycle has found its pattern. The
 * second is the shooting's first evaluation when it ends in the devices' state it started in; on
 * the demos two took 78 cycles in all against 85 with three.
 */
const SHOOTING_WARM_UP_CYCLES = 2;
/** …from a start hint, near the orbit already: one cycle sets the devices' state at the period start. */
const SHOOTING_WARM_UP_CYCLES_FROM_HINT = 1;
/**
 * Cycles far from the orbit (the warm-up, the shooting's first steps) run at the relative tolerance
 * times this, at most ROUGH_RELATIVE_TOLERANCE_MAX: their solver error is far below the change
 * they correct, and at 100× odex takes about half the evaluations (bias-48v's clamp variant 10,900
 * per period against 20,400). The orbit is settled on cycles at the scenario's tolerance only.
 */
const ROUGH_TOLERANCE_FACTOR = 100;
const ROUGH_RELATIVE_TOLERANCE_MAX = 1e-4;
/**
 * A shooting bound by the map's noise (see ShootingResult.noiseBound) shoots again with odex's
 * relative tolerance divided by this, at most MAX_TIGHTENINGS times and not below
 * TIGHTEST_RELATIVE_TOLERANCE: an orbit that does not settle at 100× the scenario's accuracy keeps
 * the cycle loop's verdict. Below 1e-10 rounding, not the tolerance, sets the floor of the noise,
 * and odex's cost only grows. (100 Monte Carlo samples of bias-48v at rtol 1e-9 and a settle
 * tolerance of 1e-7: 8 clamp orbits still not settled at 1e-10, against 42 without the tightening.)
 */
const TIGHTENING_FACTOR = 10;
const MAX_TIGHTENINGS = 2;
const TIGHTEST_RELATIVE_TOLERANCE = 1e-10;
/** A start hint's values may be at most this many state scales in size (an orbit's are a few at most). */
export const START_HINT_SCALES = 20;
/** Below this largest multiplier the shooting's orbit is taken as attracting without a try. */
const MULTIPLIER_TRUSTED = 0.995;
/** The nudge of the period-start currents in that try, relative to their scale. */
const ORBIT_NUDGE = 1e-3;

export function runVariant(scenario: Scenario, variant: VariantName, options: RunOptions = {}): VariantRun {
  const started = performance.now();
  const params = circuitForVariant(scenario, variant);
  const model = new SwitchingNodeModel(params);
  const stateSize = stateSizeFor(params);
  const scales = stateScales(params, model);
  const setup: RunSetup = { scenario, variant, params, model, stateSize, scales, started };
  const hint = options.startHint ? usableStartHint(options.startHint, params, scales) : null;
  if (hint) {
    try {
      const run = settle(setup, options, hint);
      if (run.orbit === 'settled') return run;
    } catch (error) {
      if (!(error instanceof SimulationFailure) || (options.deadlineMs !== undefined && Date.now() > options.deadlineMs) || options.stopRequested?.()) throw error;
    }
  }
  return settle(setup, options, null);
}

/** A cycle recorded by one of the shooting's evaluations, from `start`. */
interface ShootingRecording { recorder: CycleRecorder; start: number[] }

interface RunSetup {
  scenario: Scenario;
  variant: VariantName;
  params: CircuitParams;
  model: SwitchingNodeModel;
  stateSize: number;
  scales: number[];
  started: number;
}

/**
 * The hint when it fits this variant's state (its size, finite, within START_HINT_SCALES), else
 * null. A part the variant lacks keeps the usual start: nothing moves its voltage, so a value there
 * would stay in the answer (its waveform channel) whatever the run does.
 */
function usableStartHint(hint: readonly number[], params: CircuitParams, scales: readonly number[]): number[] | null {
  if (hint.length !== scales.length) return null;
  const fits = hint.every((v, i) => Number.isFinite(v) && Math.abs(v) <= START_HINT_SCALES * scales[i]!);
  if (!fits) return null;
  const usual = initialState(params, scales.length);
  return hint.map((v, i) => ((i === VC && !params.clamp) || (i === VS && !params.damper) ? usual[i]! : v));
}

/** Cycles from the start (the hint, or the usual one) until the orbit is known, then the recorded cycles. */
function settle(setup: RunSetup, options: RunOptions, hint: number[] | null): VariantRun {
  const { scenario, variant, params, model, stateSize, scales, started } = setup;
  const settings = scenario.simulation;
  const roughTolerance = Math.min(ROUGH_RELATIVE_TOLERANCE_MAX, settings.relativeTolerance * ROUGH_TOLERANCE_FACTOR);
  const roughHelps = roughTolerance > settings.relativeTolerance;
  // The exact propagators serve rough and full cycles alike (one set of matrix exponentials);
  // only odex, for the nonlinear modes, runs at the cycle's tolerance (see runCycle).
  const odexAt = (relativeTolerance: number): SegmentIntegrator => new OdexSegmentIntegrator({
    stateSize, relativeTolerance, absoluteTolerance: scales.map((s) => s * relativeTolerance),
    ...(kinkedField(params) ? { maxExtrapolationColumns: KINKED_FIELD_EXTRAPOLATION_COLUMNS } : {}),
  });
  const givenAt = (relativeTolerance: number): SegmentIntegrator | undefined =>
    options.integrator?.(scales.map((s) => s * relativeTolerance), { ...settings, relativeTolerance }, stateSize);
  let fullTolerance = settings.relativeTolerance;
  let fullNonlinear = odexAt(fullTolerance);
  let roughNonlinear: SegmentIntegrator | null = null;
  const nonlinear = { current: fullNonlinear, integrate(problem: SegmentProblem): SegmentResult { return this.current.integrate(problem); } };
  let fullIntegrator = givenAt(fullTolerance) ?? new ExactLinearSegmentIntegrator({ nonlinear });
  let roughGiven: SegmentIntegrator | undefined;
  let integrator = fullIntegrator;
  /** The integrator of a cycle, at the rough tolerance or at the scenario's. */
  const useTolerance = (rough: boolean): void => {
    const isRough = rough && roughHelps;
    if (options.integrator) { integrator = isRough ? (roughGiven ??= givenAt(roughTolerance)!) : fullIntegrator; return; }
    nonlinear.current = isRough ? (roughNonlinear ??= odexAt(roughTolerance)) : fullNonlinear;
  };
  /**
   * The full-accuracy cycles from now on at a tighter tolerance (the rough ones stay as they are);
   * false when the tightenings are spent or would pass the floor (allowing for the divisions'
   * rounding, so that 1e-9 reaches 1e-10).
   */
  let tightenings = 0;
  const tighten = (): boolean => {
    const next = fullTolerance / TIGHTENING_FACTOR;
    if (tightenings >= MAX_TIGHTENINGS || next < TIGHTEST_RELATIVE_TOLERANCE * (1 - 1e-9)) return false;
    tightenings++;
    fullTolerance = next;
    fullNonlinear = odexAt(fullTolerance);
    if (options.integrator) fullIntegrator = givenAt(fullTolerance)!;
    useTolerance(false);
    stats.relativeTolerance = fullTolerance;
    return true;
  };

  const period = params.periodSeconds / SECONDS_PER_TIME_UNIT;
  const leakageRingPeriod = leakageRingPeriodSeconds(params) / SECONDS_PER_TIME_UNIT;
  // Steps, event sampling and the recorder's searches follow the fastest ring; the waveform grid the leakage ring.
  const ringPeriod = fastestRingPeriodSeconds(params) / SECONDS_PER_TIME_UNIT;
  const control = params.control;
  const turnOffAt = (control.kind === 'fixed-duty' ? control.dutyCycle : control.maxDutyCycle) * period;
  const boundaryCause = control.kind === 'fixed-duty' ? 'fixed-duty' : 'max-duty';
  const turnOffDelay = params.turnOffDelay / SECONDS_PER_TIME_UNIT;
  const samplesPerCycle = recordedSamplesPerCycle(settings.samplesPerCycle, period, leakageRingPeriod);
  // Made once the orbit is known (a settled one may need fewer recorded cycles, see RunOptions), or
  // for an evaluation of the shooting that may be its last.
  let recorder: CycleRecorder | undefined;
  const newRecorder = (cycleCount: number): CycleRecorder => new CycleRecorder(params, period, cycleCount, samplesPerCycle, ringPeriod);

  const stats: RunStats = { derivativeEvaluations: 0, steps: 0, events: 0, wallTimeMs: 0, relativeTolerance: fullTolerance };
  // Each mode's last step, a cycle's first step in it when it comes back. Cleared at each period
  // start: a step carried over from an earlier cycle made the period map depend on the cycles run
  // before, not on its start state alone. Near the orbit that scatter (in the drain voltage at the
  // period start, on the ring) was as large as the settle tolerance and misled the shooting's
  // secant updates: bias-48v's clamp variant took 29 cycles to settle, 15 with the map a function.
  const lastStepByMode = new Map<string, number>();

  // Fire every transition whose condition already holds (or is at zero and rising) at this
  // instant. A device toggled in this instant is not toggled back, so a tangency cannot ping-pong.
  // A state right at a threshold takes its sign from a short probe ahead along the field.
  const probeRates = new Array<number>(stateSize);
  const probeState = new Array<number>(stateSize);
  const rising = (entry: ModeEntry, e: ModeEvent, x: number[]): boolean => {
    const h = 1e-4 * ringPeriod;
    entry.model.derivative(x, probeRates);
    for (let i = 0; i < stateSize; i++) probeState[i] = x[i]! + h * probeRates[i]!;
    return e.g(probeState) > 1e-10 * e.scale;
  };
  const resolveInstant = (entry: ModeEntry, x: number[], toggled: Set<DeviceName>): ModeEntry => {
    for (let n = 0; n < MAX_CHAINED_TRANSITIONS; n++) {
      const due = entry.events.find((e) => {
        if (toggled.has(e.device) || (e.device === 'switch' && tripped)) return false;
        const g = e.g(x);
        if (g > 1e-9 * e.scale) return true;
        return Math.abs(g) <= 1e-9 * e.scale && rising(entry, e, x);
      });
      if (!due) return entry;
      toggled.add(due.device);
      stats.events++;
      if (due.device === 'switch') {
        entry = comparatorTripped(entry, x, cycleTime);
        continue;
      }
      entry = model.enter(due.next, x);
    }
    throw new SimulationFailure(`devices kept switching at one instant (mode ${entry.model.key})`);
  };

  // The switch opens: with a fall time the channel current ramps down from its value now.
  /** Time into the cycle of the instant being resolved, µs. */
  let cycleTime = 0;
  let turnOffCurrent = NaN;
  const openSwitch = (entry: ModeEntry, x: number[]): ModeEntry => {
    const channel = entry.model.signals(x).switchCurrent;
    turnOffCurrent = x[IP]!;
    const falling = params.currentFallTime > 0 && channel > 0;
    if (falling) { x[ICH] = channel; x[KF] = channel / params.currentFallTime; }
    return model.enter({ ...entry.model.mode, drain: 'free', channelFalling: falling }, x);
  };
  // The comparator trips at the peak current; the switch opens at once or after the delay.
  let tripped = false;
  let openAt = turnOffAt;
  const comparatorTripped = (entry: ModeEntry, x: number[], t: number): ModeEntry => {
    tripped = true;
    if (turnOffDelay > 0) {
      openAt = Math.min(turnOffAt, t + turnOffDelay);
      return entry;
    }
    if (recordingNow) { recorder!.point(entry, x); recorder!.turnOff(t, 'peak-current'); }
    return openSwitch(entry, x);
  };
  let recordingNow = false;

  let x = hint ?? (options.initialState ? [...options.initialState] : initialState(params, stateSize));
  let mode: Mode = SWITCH_ON;
  const tracker = new OrbitTracker(scales, settings.settleTolerance, settings.maxCycles);
  let verdict: OrbitKind | null = null;
  let cycles = 0;

  const checkDeadline = (): void => {
    if (options.deadlineMs !== undefined && Date.now() > options.deadlineMs) {
      throw new SimulationFailure(`the run took longer than its time cap (stopped after ${cycles} cycles)`);
    }
    if (options.stopRequested?.()) throw new SimulationFailure(`the run was withdrawn (stopped after ${cycles} cycles)`);
  };
  // A task that waited in the pool's queue may have been withdrawn meanwhile.
  checkDeadline();

  // A linear mode's field as its matrix: a 5×5 product is several times cheaper than the general
  // field's closures (measured: constant-part runs took 1.45× the time through them).
  const fields = new Map<ModeEntry, (y: ArrayLike<number>, out: number[]) => number[]>();
  const fieldOf = (entry: ModeEntry): ((y: ArrayLike<number>, out: number[]) => number[]) => {
    let f = fields.get(entry);
    if (!f) {
      const system = entry.model.linear ? entry.model.system() : null;
      f = system ? (y, out) => applySystem(system, y, out) : (y, out) => entry.model.derivative(y, out);
      fields.set(entry, f);
    }
    return f;
  };

  /** One period from x in `mode`; `rough`: at the looser tolerance (a state far from the orbit). */
  const runCycle = (recording: boolean, rough = false): void => {
    useTolerance(rough);
    lastStepByMode.clear();
    recordingNow = recording;
    tripped = false;
    openAt = turnOffAt;
    turnOffCurrent = NaN;
    const entryBefore = model.entry(mode);
    const vdBefore = entryBefore.model.signals(x).drainVoltage;
    const before = recording ? { entry: entryBefore, x: [...x] } : null;
    mode = switchOnFrom(mode);
    let entry = model.enter(mode, x);
    const vdAfter = entry.model.signals(x).drainVoltage;
    // The difference, not the energy at vd alone: in CCM the channel holds Ron·ip right after turn-on.
    const turnOnLoss = params.drainNode.energy(vdBefore) - params.drainNode.energy(vdAfter);
    entry = resolveInstant(entry, x, new Set<DeviceName>(['switch']));
    if (before) recorder!.startCycle(before, entry, x, turnOnLoss);
    let t = 0;
    cycleTime = 0;
    let eventsThisCycle = 0;
    const observer = recording
      ? (a: number, b: number, stateAt: (t: number, out: number[]) => void) => recorder!.piece(entry, a, b, stateAt)
      : undefined;
    while (t < period) {
      const switchOn = entry.model.mode.drain === 'switch';
      const tEnd = switchOn ? Math.max(t, openAt) : period;
      if (tEnd > t) {
        const key = entry.model.key;
        const events = tripped ? entry.events.filter((e) => e.device !== 'switch') : entry.events;
        const result = integrator.integrate({
          derivative: fieldOf(entry),
          system: entry.model.linear ? entry.model.system() : null,
          moving: entry.model.movingComponents,
          t0: t, x0: x, tEnd,
          events: events.map((e) => e.g),
          initialStep: lastStepByMode.get(key) ?? ringPeriod / 50,
          maxStep: ringPeriod / 2,
          ...(observer ? { observer } : {}),
        });
        stats.derivativeEvaluations += result.evaluations;
        stats.steps += result.steps;
        if (result.status === 'failed') {
          throw new SimulationFailure(`${result.message ?? 'integration failed'} at t = ${(t * SECONDS_PER_TIME_UNIT).toExponential(3)} s into cycle ${cycles + 1}`);
        }
        if (result.lastStep > 0) lastStepByMode.set(key, result.lastStep);
        t = result.t;
        x = result.x;
        cycleTime = t;
        if (result.status === 'event') {
          const event = events[result.eventIndex]!;
          if (recording) recorder!.point(entry, x);
          stats.events++;
          // A slow cycle (a fast ring at a tight tolerance) must not outlive the deadline by much.
          if (eventsThisCycle % 64 === 63) checkDeadline();
          if (++eventsThisCycle > MAX_EVENTS_PER_CYCLE) {
            throw new SimulationFailure(`more than ${MAX_EVENTS_PER_CYCLE} device events in cycle ${cycles + 1}: the mode is chattering`);
          }
          entry = event.device === 'switch' ? comparatorTripped(entry, x, t) : model.enter(event.next, x);
          entry = resolveInstant(entry, x, new Set<DeviceName>([event.device]));
          if (recording) recorder!.point(entry, x);
          continue;
        }
      }
      if (switchOn) {
        // A known opening instant: fixed duty, the maximum duty, or the end of the turn-off delay.
        const cause = control.kind === 'fixed-duty' ? 'fixed-duty' : tripped ? 'peak-current' : boundaryCause;
        if (recording) { recorder!.point(entry, x); recorder!.turnOff(t, cause); }
        entry = openSwitch(entry, x);
        entry = resolveInstant(entry, x, new Set<DeviceName>(['switch']));
        stats.events++;
      }
    }
    mode = entry.model.mode;
    if (recording) recorder!.endCycle(entry, x, turnOffCurrent);
  };


  // The devices' state a cycle starts in (what runCycle keeps of the previous cycle's end): the
  // period map the shooting solves is smooth only while it stays the same.
  const startKey = (m: Mode): string => `${m.outputDiodeOn}/${m.drain === 'clamp' ? 'off' : m.clampDiode}`;
  // A doubtful orbit (the shooting's Jacobian estimate has a multiplier near or above 1) is tried:
  // the primary current at the period start is nudged and three plain cycles must bring it back.
  // Peak-current control above 50 % duty in CCM has an orbit that repels it (a subharmonic).
  const attracts = (orbit: number[], startMode: Mode): boolean => {
    const distance = (a: readonly number[]): number => Math.max(...a.map((v, i) => Math.abs(v - orbit[i]!) / scales[i]!));
    x = [...orbit];
    x[IP]! += ORBIT_NUDGE * scales[IP]!;
    x[IM]! += ORBIT_NUDGE * scales[IM]!;
    mode = startMode;
    const before = distance(x);
    for (let k = 0; k < 3; k++) { runCycle(false); cycles++; checkDeadline(); }
    return startKey(mode) === startKey(startMode) && distance(x) < before;
  };
  const extrapolator = new SettlingExtrapolator(scales, options.extrapolate ?? true);
  let shootAfter = (options.extrapolate ?? true) && options.exactCycles === undefined
    ? (hint ? SHOOTING_WARM_UP_CYCLES_FROM_HINT : SHOOTING_WARM_UP_CYCLES) : Infinity;
  // A hint far from the orbit may hand the first shooting back: a second one follows the usual warm-up.
  let shootingsLeft = hint ? 2 : 1;
  // The shooting's first Jacobian estimate: the hint's, or that of a shooting bound by noise.
  let shootingJacobian = hint ? options.startJacobian : undefined;
  let finalChange: number | null = null;
  let jacobian: number[] | undefined;
  // The last plain cycle's start and devices' state: the shooting's first evaluation when the cycle
  // ended in the state it started in.
  let lastPlain: { start: number[]; key: string; rough: boolean } | null = null;
  // The plain cycles before the first shooting start far from the orbit: they run rough. Without
  // the shooting (plain cycles only, or a fixed count) every cycle runs at the tolerance.
  const roughBefore = Number.isFinite(shootAfter) ? shootAfter : 0;
  // How many cycles a settled orbit records, and the first of them when the shooting's last
  // evaluation recorded it (see PeriodMap: one cycle less per run).
  const settledRecordCount = options.recordedCyclesWhenSettled !== undefined
    ? Math.min(settings.recordedCycles, options.recordedCyclesWhenSettled) : settings.recordedCycles;
  let recordedByShooting: ShootingRecording | null = null;
  while (verdict === null) {
    verdict = tracker.push(x);
    if (options.exactCycles !== undefined) verdict = cycles >= options.exactCycles ? 'cycle-cap' : null;
    if (verdict !== null) break;
    if (cycles >= shootAfter) {
      shootAfter = Infinity;
      shootingsLeft--;
      const startMode = mode;
      const forgotten = forgottenAtTurnOn(model, switchOnFrom(startMode), x, scales);
      const reuse = lastPlain?.key === startKey(startMode) ? lastPlain : null;
      // Set by the map (TypeScript does not follow assignments inside the callback).
      const last: { recording: ShootingRecording | null } = { recording: null };
      const shot = shootPeriodicOrbit(reuse ? reuse.start : x, (start, mayBeLast, rough) => {
        x = [...start];
        mode = startMode;
        last.recording = mayBeLast ? { recorder: newRecorder(settledRecordCount), start: [...start] } : null;
        if (last.recording) recorder = last.recording.recorder;
        runCycle(last.recording !== null, rough);
        checkDeadline();
        return { end: [...x], sameStart: startKey(mode) === startKey(startMode), rough };
      }, {
        scales, tolerance: settings.settleTolerance, forgotten,
        ...(shootingJacobian ? { initialJacobian: shootingJacobian } : {}),
        ...(reuse ? { startEvaluated: { end: [...x], sameStart: true, rough: reuse.rough } } : {}),
        onCycle: (n, change) => options.onCycle?.(cycles + n, change),
      });
      cycles += shot.cycles;
      if (shot.outcome === 'settled' && shot.largestMultiplier! < MULTIPLIER_TRUSTED && last.recording) {
        // The last evaluation was recorded (see PeriodMap): it is the first recorded cycle.
        recordedByShooting = last.recording;
        verdict = 'settled';
        finalChange = shot.lastChange;
        jacobian = shot.jacobian;
        break;
      }
      if (shot.outcome === 'settled' && (shot.largestMultiplier! < MULTIPLIER_TRUSTED || attracts(shot.x, startMode))) {
        x = shot.x;
        mode = startMode;
        verdict = 'settled';
        finalChange = shot.lastChange;
        jacobian = shot.jacobian;
        break;
      }
      // Cycle by cycle from where the shooting (or the try) stopped; the tracker measures changes from there.
      if (shot.outcome === 'handed-back') x = shot.x;
      tracker.replaceLatest(x);
      if (shot.noiseBound && tighten()) {
        // Near the orbit already: one cycle at the tighter tolerance, then the shooting again from
        // what it learned (that cycle is its first evaluation).
        shootingJacobian = shot.jacobian;
        shootingsLeft++;
        shootAfter = cycles + 1;
      } else if (shootingsLeft > 0) shootAfter = cycles + SHOOTING_WARM_UP_CYCLES;
      if (cycles >= settings.maxCycles) { verdict = 'cycle-cap'; break; }
    }
    const jumpsBefore = extrapolator.jumps;
    x = extrapolator.next(x);
    if (extrapolator.jumps !== jumpsBefore) tracker.replaceLatest(x);
    const rough = cycles < roughBefore;
    lastPlain = { start: [...x], key: startKey(mode), rough };
    runCycle(false, rough);
    cycles++;
    options.onCycle?.(cycles, tracker.lastChange);
    checkDeadline();
  }
  const startState = recordedByShooting ? recordedByShooting.start : [...x];
  const made = recordedByShooting?.recorder ?? newRecorder(verdict === 'settled' ? settledRecordCount : settings.recordedCycles);
  recorder = made;
  while (!made.done) {
    runCycle(true);
    cycles++;
    checkDeadline();
  }
  stats.wallTimeMs = performance.now() - started;
  return {
    variant, params, orbit: verdict, cycles, recordedCycles: made.cycles.length,
    finalChange: finalChange ?? tracker.lastChange, startState, startedFromHint: hint !== null, recorder: made, stats,
    ...(jacobian ? { jacobian } : {}),
  };
}

/** The mode a period starts in: the switch on; an ideal clamp diode pinning the drain lets go as the switch pulls the drain down. */
function switchOnFrom(previous: Mode): Mode {
  const clampDiode = previous.drain === 'clamp' ? 'off' : previous.clampDiode;
  return { ...SWITCH_ON, outputDiodeOn: previous.outputDiodeOn, clampDiode };
}

/**
 * The components of a period-start state that the turn-on overwrites whatever their value (the
 * drain, held by the switch; the magnetizing current, equal to the primary's with the output diode
 * off; a stopped diode's charge): a component is forgotten when a nudge of it leaves the state
 * entered unchanged. The period map does not read them, which the shooting uses.
 */
function forgottenAtTurnOn(model: SwitchingNodeModel, start: Mode, x: readonly number[], scales: readonly number[]): boolean[] {
  const entered = (v: number[]): number[] => { model.enter(start, v); return v; };
  const base = entered([...x]);
  return x.map((value, i) => {
    const nudged = [...x];
    nudged[i] = value + 1e-3 * scales[i]! + 1e-3 * Math.abs(value);
    const after = entered(nudged);
    return after.every((v, k) => v === base[k]);
  });
}

/** The scales the settle tolerance is relative to, per state component (as VariantRun.startState). */
export function stateScales(params: CircuitParams, model: SwitchingNodeModel = new SwitchingNodeModel(params)): number[] {
  return stateScaleVector(params, model.scales, stateSizeFor(params));
}

/** Per-state scales: currents, voltages, the diode's charge, the channel's rate of fall. */
function stateScaleVector(p: CircuitParams, s: { current: number; voltage: number }, size: number): number[] {
  const charge = s.current * (p.clamp?.recovery?.lifetime ?? p.periodSeconds);
  const all = [s.current, s.current, s.voltage, s.voltage, s.voltage, s.current, s.voltage, charge, s.current, s.current / Math.max(p.currentFallTime, 1e-12)];
  return all.slice(0, size);
}

/** Start at zero current, the hand-formula clamp voltage and the supply voltage on the damper. */
function initialState(p: CircuitParams, size: number): number[] {
  const x = new Array<number>(size).fill(0);
  if (p.clamp) {
    const ipk = p.control.kind === 'peak-current'
      ? p.control.peakCurrent
      : (p.supplyVoltage * p.control.dutyCycle * p.periodSeconds) / (p.magnetizingInductance + p.leakageInductance);
    x[VC] = settledClampVoltage(p.clamp.resistance, p.leakageInductance, ipk, 1 / p.periodSeconds, p.reflectedVoltage);
  }
  if (p.damper) x[VS] = p.supplyVoltage;
  x[IP] = 0;
  return x;
}
