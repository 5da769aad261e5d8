// The cycle loop: switch on at each period start, integrate mode by mode through the device
// events, and repeat until the period-start state settles (or the orbit is classified), then
// record a few settled cycles at full resolution.

import { evaluate, IP, VC, VS } from '../model/affine.js';
import { circuitForVariant, leakageRingPeriodSeconds, type CircuitParams } from '../model/circuit-params.js';
import { SwitchingNodeModel, type DeviceName, type ModeEntry } from '../model/events.js';
import { SECONDS_PER_TIME_UNIT, modeKey, type Mode } from '../model/modes.js';
import { settledClampVoltage } from '../equations/rcd-clamp.js';
import type { Scenario, SimulationSettings, VariantName } from '../circuit/scenario.js';
import { OdexSegmentIntegrator } from '../solver/odex-segment.js';
import type { SegmentIntegrator } from '../solver/segment.js';
import { OrbitTracker, type OrbitKind } from './orbit.js';
import { CycleRecorder } from './recorder.js';
import { SettlingExtrapolator } from './extrapolate.js';

export class SimulationFailure extends Error {}

export interface RunStats {
  derivativeEvaluations: number;
  steps: number;
  events: number;
  wallTimeMs: number;
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
  recorder: CycleRecorder;
  stats: RunStats;
}

export interface RunOptions {
  /** Integrator factory; the default is odex. Tests pass an exact one. */
  integrator?: (absoluteTolerance: number[], settings: SimulationSettings) => SegmentIntegrator;
  /** Stop with a failure once Date.now() passes this. */
  deadlineMs?: number;
  /** Starting state [ip, im, vd, vc, vs]; by default the hand-formula clamp voltage and Vin on the damper. */
  initialState?: number[];
  /** Jump ahead along the slowest mode while settling (default true). */
  extrapolate?: boolean;
  /** Run exactly this many cycles before recording, whatever the settle test says (benchmarks). */
  exactCycles?: number;
}

const MAX_EVENTS_PER_CYCLE = 20_000;
const MAX_CHAINED_TRANSITIONS = 8;

export function runVariant(scenario: Scenario, variant: VariantName, options: RunOptions = {}): VariantRun {
  const started = performance.now();
  const settings = scenario.simulation;
  const params = circuitForVariant(scenario, variant);
  const model = new SwitchingNodeModel(params);
  const { current: iScale, voltage: vScale } = model.scales;
  const scales = [iScale, iScale, vScale, vScale, vScale];
  const atol = scales.map((s) => s * settings.relativeTolerance);
  const integrator = options.integrator?.(atol, settings)
    ?? new OdexSegmentIntegrator({ relativeTolerance: settings.relativeTolerance, absoluteTolerance: atol });

  const period = params.periodSeconds / SECONDS_PER_TIME_UNIT;
  const ringPeriod = leakageRingPeriodSeconds(params) / SECONDS_PER_TIME_UNIT;
  const control = params.control;
  const turnOffAt = (control.kind === 'fixed-duty' ? control.dutyCycle : control.maxDutyCycle) * period;
  const boundaryCause = control.kind === 'fixed-duty' ? 'fixed-duty' : 'max-duty';
  const samplesPerCycle = Math.min(50_000, Math.max(settings.samplesPerCycle, Math.ceil((24 * period) / ringPeriod)));
  const recorder = new CycleRecorder(params, period, settings.recordedCycles, samplesPerCycle, ringPeriod);

  const stats: RunStats = { derivativeEvaluations: 0, steps: 0, events: 0, wallTimeMs: 0 };
  const lastStepByMode = new Map<string, number>();

  // Fire every transition whose condition already holds (or is at zero and rising) at this
  // instant. A device toggled in this instant is not toggled back, so a tangency cannot ping-pong.
  const resolveInstant = (entry: ModeEntry, x: number[], toggled: Set<DeviceName>): ModeEntry => {
    for (let n = 0; n < MAX_CHAINED_TRANSITIONS; n++) {
      const due = entry.events.find((e) => {
        if (toggled.has(e.device)) return false;
        const g = evaluate(e.g, x);
        if (g > 1e-9 * e.scale) return true;
        return Math.abs(g) <= 1e-9 * e.scale && evaluate(e.rate, x) > (1e-6 * e.scale) / ringPeriod;
      });
      if (!due) return entry;
      toggled.add(due.device);
      stats.events++;
      entry = model.enter(due.next, x);
    }
    throw new SimulationFailure(`devices kept switching at one instant (mode ${modeKey(entry.mode)})`);
  };

  let x = options.initialState ? [...options.initialState] : initialState(params);
  let mode: Mode = { drain: 'switch', outputDiodeOn: false };
  const tracker = new OrbitTracker(scales, settings.settleTolerance, settings.maxCycles);
  let verdict: OrbitKind | null = null;
  let cycles = 0;

  const runCycle = (recording: boolean): void => {
    const entryBefore = model.entry(mode);
    const vdBefore = evaluate(entryBefore.forms.drainVoltage, x);
    const before = recording ? { entry: entryBefore, x: [...x] } : null;
    mode = { drain: 'switch', outputDiodeOn: mode.outputDiodeOn };
    let entry = model.enter(mode, x);
    const vdAfter = evaluate(entry.forms.drainVoltage, x);
    // The difference, not ½·Coss·vd² alone: in CCM the channel holds Ron·ip right after turn-on.
    const turnOnLoss = 0.5 * params.drainCapacitance * (vdBefore * vdBefore - vdAfter * vdAfter);
    entry = resolveInstant(entry, x, new Set<DeviceName>(['switch']));
    if (before) recorder.startCycle(before, entry, x, turnOnLoss);
    let t = 0;
    let eventsThisCycle = 0;
    const observer = recording
      ? (a: number, b: number, stateAt: (t: number, out: number[]) => void) => recorder.piece(entry, a, b, stateAt)
      : undefined;
    while (t < period) {
      const switchOn = entry.mode.drain === 'switch';
      const tEnd = switchOn ? Math.max(t, turnOffAt) : period;
      if (tEnd > t) {
        const key = modeKey(entry.mode);
        const result = integrator.integrate({
          system: entry.system, t0: t, x0: x, tEnd,
          events: entry.events.map((e) => e.g),
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
        if (result.status === 'event') {
          const event = entry.events[result.eventIndex]!;
          if (recording) recorder.point(entry, x);
          stats.events++;
          if (++eventsThisCycle > MAX_EVENTS_PER_CYCLE) {
            throw new SimulationFailure(`more than ${MAX_EVENTS_PER_CYCLE} device events in cycle ${cycles + 1}: the mode is chattering`);
          }
          entry = model.enter(event.next, x);
          entry = resolveInstant(entry, x, new Set<DeviceName>([event.device]));
          if (recording) {
            recorder.point(entry, x);
            if (event.device === 'switch') recorder.turnOff(t, 'peak-current');
          }
          continue;
        }
      }
      if (switchOn) {
        // The known turn-off instant (fixed duty, or the maximum duty under peak-current control).
        if (recording) { recorder.point(entry, x); recorder.turnOff(t, boundaryCause); }
        entry = model.enter({ ...entry.mode, drain: 'free' }, x);
        entry = resolveInstant(entry, x, new Set<DeviceName>(['switch']));
        stats.events++;
      }
    }
    mode = entry.mode;
    if (recording) recorder.endCycle(entry, x);
  };

  const checkDeadline = (): void => {
    if (options.deadlineMs !== undefined && Date.now() > options.deadlineMs) {
      throw new SimulationFailure(`the run took longer than its time cap (stopped after ${cycles} cycles)`);
    }
  };

  const extrapolator = new SettlingExtrapolator(scales, options.extrapolate ?? true);
  while (verdict === null) {
    verdict = tracker.push(x);
    if (options.exactCycles !== undefined) verdict = cycles >= options.exactCycles ? 'cycle-cap' : null;
    if (verdict !== null) break;
    const jumpsBefore = extrapolator.jumps;
    x = extrapolator.next(x);
    if (extrapolator.jumps !== jumpsBefore) tracker.replaceLatest(x);
    runCycle(false);
    cycles++;
    if (cycles % 16 === 0) checkDeadline();
  }
  while (!recorder.done) {
    runCycle(true);
    cycles++;
    checkDeadline();
  }
  stats.wallTimeMs = performance.now() - started;
  return {
    variant, params, orbit: verdict, cycles, recordedCycles: recorder.cycles.length,
    finalChange: tracker.lastChange, recorder, stats,
  };
}

/** Start at zero current, the hand-formula clamp voltage and the supply voltage on the damper. */
function initialState(p: CircuitParams): number[] {
  const x = [0, 0, 0, 0, 0];
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
