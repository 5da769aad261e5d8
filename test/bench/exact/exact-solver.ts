// The benchmark's exact solver, part 2: the "exact limit" for constant-part scenarios.
//
// One matrix exponential per mode, computed once, advances fixed steps exactly; events are located
// on the exact solution (its Taylor series inside a step, so a crest that touches a threshold
// between step ends is seen too); the periodic steady state is found by Newton's method on the
// period map with its exact Jacobian: the product of the steps' propagators and the events'
// saltation matrices (the jump of a state transition matrix at a state event: Aizerman &
// Gantmacher, 1958, from memory). Its own stepping throughout; only the scenario loader is flyclamp's.

import {
  AUGMENTED_SIZE as N, IM, IP, ONE, STATE_SIZE, VC, VD, VS, entryReset, idealCircuit, modeField, modeKey,
  type Affine, type IdealCircuit, type Mode, type ModeField, type Variant,
} from './ideal-switching-node.js';
import type { Scenario } from '../../../src/circuit/scenario.js';

const TAYLOR_TERMS = 24;
const PLAIN_CYCLES = 3;
const NEWTON_LIMIT = 40;
const CYCLE_LIMIT = 3000;
/** Converged when every component's change is below this fraction of its scale. */
const CONVERGED = 1e-12;
/** An event whose function exceeds this fraction of its scale at a transition fires at once. */
const CHAINED = 1e-12;

// ---------------------------------------------------------------------------------------------
// Small dense algebra on 6×6 row-major matrices and 6-vectors.

function multiply(a: Float64Array, b: Float64Array, out: Float64Array = new Float64Array(N * N)): Float64Array {
  for (let i = 0; i < N; i++) {
    for (let j = 0; j < N; j++) {
      let s = 0;
      for (let k = 0; k < N; k++) s += a[i * N + k]! * b[k * N + j]!;
      out[i * N + j] = s;
    }
  }
  return out;
}

function apply(a: Float64Array, x: Float64Array, out = new Float64Array(N)): Float64Array {
  for (let i = 0; i < N; i++) {
    let s = 0;
    for (let k = 0; k < N; k++) s += a[i * N + k]! * x[k]!;
    out[i] = s;
  }
  return out;
}

const dot = (c: Affine, x: Float64Array): number => {
  let s = 0;
  for (let i = 0; i < N; i++) s += c[i]! * x[i]!;
  return s;
};

function identity(): Float64Array {
  const m = new Float64Array(N * N);
  for (let i = 0; i < N; i++) m[i * N + i] = 1;
  return m;
}

/** c·Â: the affine form of d(c·x̂)/dt. */
function rowTimes(c: Affine, a: Float64Array): Affine {
  const out = new Float64Array(N);
  for (let j = 0; j < N; j++) {
    let s = 0;
    for (let k = 0; k < N; k++) s += c[k]! * a[k * N + j]!;
    out[j] = s;
  }
  return out;
}

/** exp(h·Â) in the scaled variables: Taylor series of degree 18 after halving to norm ≤ 1/2, then squaring. */
function exponential(a: Float64Array, h: number): Float64Array {
  let norm = 0;
  for (let i = 0; i < N; i++) {
    let row = 0;
    for (let j = 0; j < N; j++) row += Math.abs(a[i * N + j]!);
    norm = Math.max(norm, row * h);
  }
  const squarings = Math.max(0, Math.ceil(Math.log2(norm / 0.5)));
  const scaled = a.map((v) => (v * h) / 2 ** squarings);
  let result = identity();
  let term = identity();
  for (let k = 1; k <= 18; k++) {
    term = multiply(term, scaled);
    for (let i = 0; i < N * N; i++) term[i]! /= k;
    for (let i = 0; i < N * N; i++) result[i]! += term[i]!;
  }
  for (let s = 0; s < squarings; s++) result = multiply(result, result);
  return result;
}

// ---------------------------------------------------------------------------------------------
// The solver.

interface PreparedMode {
  readonly field: ModeField;
  /** Â in the scaled variables. */
  readonly a: Float64Array;
  readonly stepSeconds: number;
  readonly step: Float64Array;
  readonly entry: Float64Array;
  readonly events: readonly PreparedEvent[];
  readonly quantities: RecordedQuantities;
  /** Φ(h)ᵐ for the runs of m whole steps met so far. */
  readonly powers: Map<number, Float64Array>;
}

interface RecordedQuantities {
  readonly drainVolts: Affine; readonly primaryAmps: Affine; readonly clampVolts: Affine; readonly negativeClampVolts: Affine;
  readonly clampDiodeAmps: Affine; readonly supplyAmps: Affine; readonly secondaryAmps: Affine; readonly damperAmps: Affine;
}

type EventKind = 'peak' | 'output-on' | 'output-off' | 'body-on' | 'body-off' | 'clamp-on' | 'clamp-off';

interface PreparedEvent {
  readonly kind: EventKind;
  /** g(x̂) in the scaled variables, rising through zero. */
  readonly g: Affine;
  /** dg/dt. */
  readonly rate: Affine;
  /** Scale of g for the chained-transition test. */
  readonly scale: number;
}

export interface ExactMetrics {
  peakDrainVoltage: number;
  peakPrimaryCurrent: number;
  turnOffCurrent: number;
  switchTurnOnLossPower: number;
  inputPower: number;
  outputPower: number;
  clampVoltageMean?: number;
  clampVoltageRipple?: number;
  clampResistorPower?: number;
  clampDiodePeakCurrent?: number;
  damperResistorPower?: number;
}

export interface ExactRun {
  readonly variant: Variant;
  /** Periods integrated, plain and Newton's together, before the recorded one. */
  readonly periods: number;
  readonly newtonIterations: number;
  readonly converged: boolean;
  readonly metrics: ExactMetrics;
  /** Steps of the recorded period. */
  readonly steps: number;
}

/** Gauss–Legendre nodes and weights on [0, 1] (5 points: exact for degree 9) for the power integrals. */
const GAUSS_NODES = [0.04691007703066800, 0.23076534494715845, 0.5, 0.76923465505284155, 0.95308992296933200];
const GAUSS_WEIGHTS = [0.11846344252809454, 0.23931433524968324, 0.28444444444444444, 0.23931433524968324, 0.11846344252809454];

interface Accumulator {
  peakDrain: number; peakPrimary: number; turnOffAmps: number; turnOnJoules: number;
  supplyJoules: number; loadJoules: number; clampRJoules: number; damperRJoules: number; clampVoltSeconds: number;
  clampMin: number; clampMax: number; clampDiodePeak: number;
}

export class ExactSwitchingNode {
  readonly circuit: IdealCircuit;
  /** Scaled state x̃ = x / scale: currents in units of the peak current, voltages of Vin + VR. */
  private readonly scale: Float64Array;
  private readonly modes = new Map<string, PreparedMode>();
  private stepCount = 0;
  private readonly product = new Float64Array(N * N);

  constructor(scenario: Scenario, readonly variant: Variant) {
    this.circuit = idealCircuit(scenario, variant);
    const k = this.circuit;
    const amps = k.peakAmps ?? (k.supplyVolts * k.openFraction * k.periodSeconds) / (k.leakageHenries + k.magnetizingHenries);
    const volts = k.supplyVolts + k.reflectedVolts;
    this.scale = Float64Array.from([amps, amps, volts, volts, volts, 1]);
  }

  // --- modes -----------------------------------------------------------------------------------

  private prepared(mode: Mode): PreparedMode {
    const key = modeKey(mode);
    const cached = this.modes.get(key);
    if (cached) return cached;
    const field = modeField(this.circuit, mode);
    const a = this.toScaled(field.matrix);
    const stepSeconds = this.stepFor(mode);
    const prepared: PreparedMode = {
      field, a, stepSeconds, step: exponential(a, stepSeconds), entry: this.toScaled(entryReset(field)), events: this.eventsOf(field, a), quantities: this.quantitiesOf(field), powers: new Map(),
    };
    this.modes.set(key, prepared);
    return prepared;
  }

  /** M̃ = S⁻¹·M·S for the state scaling S. */
  private toScaled(m: Float64Array): Float64Array {
    const out = new Float64Array(N * N);
    for (let i = 0; i < N; i++) for (let j = 0; j < N; j++) out[i * N + j] = (m[i * N + j]! * this.scale[j]!) / this.scale[i]!;
    return out;
  }

  private formToScaled(c: Affine): Affine { return c.map((v, j) => v * this.scale[j]!); }

  /**
   * Half a radian of the mode's fastest ring per step, no longer than its fastest decay or a
   * twentieth of the period: with at most one crest of any event function per step, a sign change
   * or a rate turning from rising to falling inside the step is all there is to look for.
   */
  private stepFor(mode: Mode): number {
    const k = this.circuit;
    const cn = k.nodeFarads;
    const limits = [k.periodSeconds / 20];
    if (mode.drain === 'free') {
      const series = mode.outputDiodeOn ? k.leakageHenries : k.leakageHenries + k.magnetizingHenries;
      limits.push(0.5 * Math.sqrt(series * cn));
      if (k.damper) limits.push((k.damper.ohms * cn * k.damper.farads) / (cn + k.damper.farads));
    } else if (k.damper) {
      // The pinned drain leaves the damper capacitor its own time constant (Rs + Ron with the switch closed).
      limits.push((k.damper.ohms + (mode.drain === 'switch' ? k.onOhms : 0)) * k.damper.farads);
    }
    if (mode.drain === 'clamped' && mode.outputDiodeOn) limits.push(0.5 * Math.sqrt(k.leakageHenries * (k.clamp!.farads + cn)));
    return Math.min(...limits);
  }

  private eventsOf(field: ModeField, a: Float64Array): PreparedEvent[] {
    const k = this.circuit;
    const m = field.mode;
    const list: Array<[EventKind, Affine, number]> = [];
    const iScale = this.scale[IP]!, vScale = this.scale[VD]!;
    const state = (i: number): Affine => { const c = new Float64Array(N); c[i] = 1; return c; };
    const plus = (c: Affine, v: number): Affine => { const o = Float64Array.from(c); o[ONE]! += v; return o; };
    const neg = (c: Affine): Affine => c.map((v) => -v);
    if (m.on && k.peakAmps !== undefined) list.push(['peak', plus(state(IP), -k.peakAmps), iScale]);
    if (m.outputDiodeOn) {
      const g = state(IP); g[IM] = -1;
      list.push(['output-off', g, iScale]);
    } else {
      list.push(['output-on', plus(neg(field.magnetizingVolts), -k.reflectedVolts), vScale]);
    }
    if (m.drain === 'free') {
      list.push(['body-on', plus(neg(field.drainVolts), -k.bodyDiodeVolts), vScale]);
      if (k.clamp) {
        const g = Float64Array.from(field.drainVolts);
        g[VC]! -= 1;
        g[ONE]! -= k.supplyVolts + k.clamp.dropVolts;
        list.push(['clamp-on', g, vScale]);
      }
    }
    if (m.drain === 'body') list.push(['body-off', Float64Array.from(field.nodeAmps), iScale]);
    if (m.drain === 'clamped') list.push(['clamp-off', neg(field.clampDiodeAmps), iScale]);
    return list.map(([kind, g, scale]) => {
      const scaled = this.formToScaled(g);
      return { kind, g: scaled, rate: rowTimes(scaled, a), scale };
    });
  }

  private next(mode: Mode, kind: EventKind): Mode {
    switch (kind) {
      case 'peak': return { ...mode, on: false, drain: 'free' };
      case 'output-on': return { ...mode, outputDiodeOn: true };
      case 'output-off': return { ...mode, outputDiodeOn: false };
      case 'body-on': return { ...mode, drain: 'body' };
      case 'body-off': return { ...mode, drain: 'free' };
      case 'clamp-on': return { ...mode, drain: 'clamped' };
      case 'clamp-off': return { ...mode, drain: 'free' };
    }
  }

  // --- one period --------------------------------------------------------------------------------

  /**
   * From the state just before turn-on to the same instant a period later (scaled, augmented).
   * With `jacobian`, d x̂(T⁻)/d x̂(0⁻) accumulates into it; with `acc`, the period's metrics.
   */
  period(xStart: Float64Array, startMode: Mode, jacobian?: Float64Array, acc?: Accumulator): { x: Float64Array; mode: Mode } {
    const k = this.circuit;
    const T = k.periodSeconds;
    const openAt = k.openFraction * T;
    let x: Float64Array = Float64Array.from(xStart);
    let mode: Mode = { on: true, outputDiodeOn: startMode.outputDiodeOn, drain: 'switch' };
    let pm = this.prepared(mode);
    const cn = k.nodeFarads;
    const vdBefore = x[VD]! * this.scale[VD]!;
    x = this.enter(pm, x, jacobian);
    if (acc) acc.turnOnJoules += 0.5 * cn * (vdBefore ** 2 - (x[VD]! * this.scale[VD]!) ** 2);
    let t = 0;
    ({ mode, pm, x } = this.settleTransitions(mode, pm, x, jacobian));
    const scratch = new Float64Array(N);
    let pending = 0;
    for (let guard = 0; ; guard++) {
      if (guard > 1_000_000) throw new Error(`exact solver: no progress at t = ${t} s in mode ${modeKey(mode)}`);
      const boundary = mode.on && openAt < T ? openAt : T;
      const remaining = boundary - t;
      if (remaining <= 1e-15 * T) {
        if (jacobian) { this.flush(pm, pending, jacobian); pending = 0; }
        if (boundary === T) break;
        // The opening at the fixed or maximum duty.
        if (acc) acc.turnOffAmps = x[IP]! * this.scale[IP]!;
        mode = { ...mode, on: false, drain: 'free' };
        pm = this.prepared(mode);
        ({ mode, pm, x } = this.settleTransitions(mode, pm, x, jacobian));
        continue;
      }
      const h = Math.min(pm.stepSeconds, remaining);
      const full = h === pm.stepSeconds;
      const x1 = full ? apply(pm.step, x, scratch) : this.taylorState(pm, x, h);
      this.stepCount++;
      // The earliest event inside the step, on the exact solution.
      let first: PreparedEvent | undefined;
      let firstAt = h;
      let series: Float64Array[] | undefined;
      for (const e of pm.events) {
        const g0 = dot(e.g, x), g1 = dot(e.g, x1);
        let crossing: number | undefined;
        if (g1 > 0 && g0 <= 0) {
          series ??= this.taylorSeries(pm, x, h);
          crossing = risingRoot(coefficients(e.g, series), 0, h);
        } else if (g0 <= 0 && g1 <= 0 && mayReachZero(g0, g1, dot(e.rate, x) * h, dot(e.rate, x1) * h)) {
          // A crest inside the step: does it reach the threshold?
          series ??= this.taylorSeries(pm, x, h);
          const gc = coefficients(e.g, series);
          const crest = fallingRoot(derivative(gc), 0, h);
          // A crest within rounding of the threshold (a diode that has just stopped) is not a crossing.
          if (polynomial(gc, crest) > CHAINED * e.scale) crossing = risingRoot(gc, 0, crest);
        }
        if (crossing !== undefined && crossing < firstAt) { firstAt = crossing; first = e; }
      }
      if (first === undefined) {
        if (acc) this.accumulate(acc, pm, x, h, series ?? this.taylorSeries(pm, x, h));
        if (jacobian) {
          // Runs of whole steps in one mode reach the Jacobian as one power of the step's propagator.
          if (full) pending++;
          else { this.flush(pm, pending, jacobian); pending = 0; jacobian.set(multiply(this.taylorMatrix(pm, h), jacobian, this.product)); }
        }
        x = Float64Array.from(x1);
        t = full ? t + h : boundary;
        continue;
      }
      // Advance to the event and take the transition.
      series ??= this.taylorSeries(pm, x, h);
      if (acc) this.accumulate(acc, pm, x, firstAt, series);
      if (jacobian) {
        this.flush(pm, pending, jacobian);
        pending = 0;
        jacobian.set(multiply(this.taylorMatrix(pm, firstAt), jacobian, this.product));
      }
      x = evaluateSeries(series, firstAt);
      t += firstAt;
      if (first.kind === 'peak' && acc) acc.turnOffAmps = x[IP]! * this.scale[IP]!;
      const nextMode = this.next(mode, first.kind);
      const npm = this.prepared(nextMode);
      x = this.cross(pm, npm, first, x, jacobian);
      mode = nextMode;
      pm = npm;
      ({ mode, pm, x } = this.settleTransitions(mode, pm, x, jacobian));
    }
    return { x, mode };
  }

  /** J ← Φ(h)ᵐ·J, the power by repeated squaring, kept per mode and m. */
  private flush(pm: PreparedMode, m: number, jacobian: Float64Array): void {
    if (m === 0) return;
    let power = pm.powers.get(m);
    if (!power) {
      let result: Float64Array | undefined;
      let square = pm.step;
      for (let e = m; e > 0; e >>= 1) {
        if (e & 1) result = result ? multiply(square, result) : Float64Array.from(square);
        if (e > 1) square = multiply(square, square);
      }
      power = result!;
      pm.powers.set(m, power);
    }
    jacobian.set(multiply(power, jacobian, this.product));
  }

  /** Entering a mode: its reset, and the reset's Jacobian. */
  private enter(pm: PreparedMode, x: Float64Array, jacobian?: Float64Array): Float64Array {
    if (jacobian) jacobian.set(multiply(pm.entry, jacobian));
    return apply(pm.entry, x);
  }

  /**
   * A state event: the reset and the saltation matrix S = R + (f⁺ − R·f⁻)·∇gᵀ / (∇g·f⁻), which
   * carries how the event's instant moves with the state into the Jacobian.
   */
  private cross(from: PreparedMode, to: PreparedMode, e: PreparedEvent, x: Float64Array, jacobian?: Float64Array): Float64Array {
    const xPlus = apply(to.entry, x);
    if (jacobian) {
      const fMinus = apply(from.a, x), fPlus = apply(to.a, xPlus);
      const rfMinus = apply(to.entry, fMinus);
      const rate = dot(e.g, fMinus);
      const s = Float64Array.from(to.entry);
      for (let i = 0; i < STATE_SIZE; i++) {
        const d = (fPlus[i]! - rfMinus[i]!) / rate;
        for (let j = 0; j < STATE_SIZE; j++) s[i * N + j]! += d * e.g[j]!;
      }
      jacobian.set(multiply(s, jacobian));
    }
    return xPlus;
  }

  /** Transitions whose condition already holds at this instant (a diode driven on at once). */
  private settleTransitions(mode: Mode, pm: PreparedMode, x: Float64Array, jacobian?: Float64Array): { mode: Mode; pm: PreparedMode; x: Float64Array } {
    for (let guard = 0; guard < 16; guard++) {
      // At its threshold, an event fires only if the new mode drives it on (a diode that has just
      // stopped does not restart at the same instant unless the circuit drives it).
      const firing = pm.events.find((e) => {
        const g = dot(e.g, x);
        return g > CHAINED * e.scale || (g > -CHAINED * e.scale && dot(e.rate, x) * pm.stepSeconds > 1e-9 * e.scale);
      });
      if (!firing) return { mode, pm, x };
      mode = this.next(mode, firing.kind);
      const npm = this.prepared(mode);
      x = this.enter(npm, x, jacobian);
      pm = npm;
    }
    throw new Error('exact solver: more than 16 chained transitions at one instant');
  }

  // --- the exact solution inside a step -------------------------------------------------------

  /** Âᵏ·x̂ / k!: the Taylor coefficients of x̂(t0 + s) for 0 ≤ s ≤ h, as many as change the sum. */
  private taylorSeries(pm: PreparedMode, x: Float64Array, h: number): Float64Array[] {
    const out: Float64Array[] = [Float64Array.from(x)];
    const first = size(x);
    let power = 1;
    for (let k = 1; k < TAYLOR_TERMS; k++) {
      const v = apply(pm.a, out[k - 1]!);
      for (let i = 0; i < N; i++) v[i]! /= k;
      out.push(v);
      power *= h;
      if (k >= 4 && size(v) * power < 1e-18 * first) break;
    }
    return out;
  }

  private taylorState(pm: PreparedMode, x: Float64Array, h: number): Float64Array {
    return evaluateSeries(this.taylorSeries(pm, x, h), h);
  }

  /** exp(h·Â) by its series (h at most one step: half a radian of the fastest ring). */
  private taylorMatrix(pm: PreparedMode, h: number): Float64Array {
    const result = identity();
    let term: Float64Array = identity();
    let next: Float64Array = new Float64Array(N * N);
    const scaled = pm.a.map((v) => v * h);
    for (let k = 1; k < TAYLOR_TERMS; k++) {
      multiply(term, scaled, next);
      [term, next] = [next, term];
      let size = 0;
      for (let i = 0; i < N * N; i++) { term[i]! /= k; result[i]! += term[i]!; size = Math.max(size, Math.abs(term[i]!)); }
      if (k >= 4 && size < 1e-18) break;
    }
    return result;
  }

  private accumulate(acc: Accumulator, pm: PreparedMode, x: Float64Array, h: number, series: Float64Array[]): void {
    if (h <= 0) return;
    const k = this.circuit;
    const q = pm.quantities;
    acc.peakDrain = Math.max(acc.peakDrain, stepMaximum(q.drainVolts, series, h));
    acc.peakPrimary = Math.max(acc.peakPrimary, stepMaximum(q.primaryAmps, series, h));
    if (k.clamp) {
      acc.clampMax = Math.max(acc.clampMax, stepMaximum(q.clampVolts, series, h));
      acc.clampMin = Math.min(acc.clampMin, -stepMaximum(q.negativeClampVolts, series, h));
      if (pm.field.mode.drain === 'clamped') acc.clampDiodePeak = Math.max(acc.clampDiodePeak, stepMaximum(q.clampDiodeAmps, series, h));
    }
    for (let g = 0; g < GAUSS_NODES.length; g++) {
      const y = evaluateSeries(series, GAUSS_NODES[g]! * h);
      const w = GAUSS_WEIGHTS[g]! * h;
      acc.supplyJoules += w * k.supplyVolts * dot(q.supplyAmps, y);
      acc.loadJoules += w * k.loadVolts * dot(q.secondaryAmps, y);
      if (k.clamp) {
        const vc = dot(q.clampVolts, y);
        acc.clampRJoules += (w * vc * vc) / k.clamp.ohms;
        acc.clampVoltSeconds += w * vc;
      }
      if (k.damper) {
        const i = dot(q.damperAmps, y);
        acc.damperRJoules += w * i * i * k.damper.ohms;
      }
    }
  }

  /** The recorded quantities as forms of the scaled state, in their physical units. */
  private quantitiesOf(field: ModeField): RecordedQuantities {
    const state = (i: number): Affine => { const c = new Float64Array(N); c[i] = this.scale[i]!; return c; };
    const vc = state(VC);
    return {
      drainVolts: this.formToScaled(field.drainVolts), primaryAmps: state(IP), clampVolts: vc, negativeClampVolts: vc.map((v) => -v),
      clampDiodeAmps: this.formToScaled(field.clampDiodeAmps), supplyAmps: this.formToScaled(field.supplyAmps),
      secondaryAmps: this.formToScaled(field.secondaryAmps), damperAmps: this.formToScaled(field.damperAmps),
    };
  }

  // --- the steady state ----------------------------------------------------------------------------

  /** Plain periods, then Newton on P(x) − x with the exact Jacobian; then one recorded period. */
  run(): ExactRun {
    const k = this.circuit;
    const x0 = new Float64Array(N);
    x0[VD] = k.supplyVolts / this.scale[VD]!;
    if (k.clamp) {
      // Start from the hand formula VR/2 + √(VR²/4 + ½·Rc·Llk·I²·f), as flyclamp does.
      const i = this.scale[IP]!;
      x0[VC] = (k.reflectedVolts / 2 + Math.sqrt(k.reflectedVolts ** 2 / 4 + (0.5 * k.clamp.ohms * k.leakageHenries * i * i) / k.periodSeconds)) / this.scale[VC]!;
    }
    if (k.damper) x0[VS] = k.supplyVolts / this.scale[VS]!;
    x0[ONE] = 1;
    let x: Float64Array = x0;
    let mode: Mode = { on: false, outputDiodeOn: false, drain: 'free' };
    let periods = 0;
    for (let i = 0; i < PLAIN_CYCLES; i++, periods++) ({ x, mode } = this.period(x, mode));
    // The states Newton solves for: the clamp and damper voltages only where those parts are fitted.
    const free = [IP, IM, VD, ...(k.clamp ? [VC] : []), ...(k.damper ? [VS] : [])];
    const change = (a: Float64Array, b: Float64Array): number => Math.max(...free.map((i) => Math.abs(a[i]! - b[i]!)));
    let converged = false;
    let iterations = 0;
    for (; iterations < NEWTON_LIMIT && !converged; iterations++, periods++) {
      const jacobian = identity();
      const end = this.period(x, mode, jacobian);
      // Solve (J − I)·δ = −(P(x) − x) on the five states.
      const m = free.map((i) => [...free.map((j) => jacobian[i * N + j]! - (i === j ? 1 : 0)), -(end.x[i]! - x[i]!)]);
      const delta = solve(m);
      const moved = change(end.x, x);
      const sameMode = modeKey(end.mode) === modeKey(mode);
      mode = end.mode;
      if (!sameMode || delta === undefined) { x = end.x; continue; }
      const next = Float64Array.from(x);
      free.forEach((i, r) => { next[i]! += delta[r]!; });
      x = next;
      converged = moved < CONVERGED;
    }
    // A plain fallback where Newton did not settle (not expected on the demo circuits).
    for (let guard = 0; !converged && guard < CYCLE_LIMIT; guard++, periods++) {
      const end = this.period(x, mode);
      converged = change(end.x, x) < CONVERGED;
      ({ x, mode } = end);
    }
    const acc: Accumulator = {
      peakDrain: -Infinity, peakPrimary: -Infinity, turnOffAmps: Number.NaN, turnOnJoules: 0, supplyJoules: 0, loadJoules: 0,
      clampRJoules: 0, damperRJoules: 0, clampVoltSeconds: 0, clampMin: Infinity, clampMax: -Infinity, clampDiodePeak: 0,
    };
    this.stepCount = 0;
    this.period(x, mode, undefined, acc);
    const T = k.periodSeconds;
    const metrics: ExactMetrics = {
      peakDrainVoltage: acc.peakDrain, peakPrimaryCurrent: acc.peakPrimary, turnOffCurrent: acc.turnOffAmps,
      switchTurnOnLossPower: acc.turnOnJoules / T, inputPower: acc.supplyJoules / T, outputPower: acc.loadJoules / T,
    };
    if (k.clamp) {
      metrics.clampVoltageMean = acc.clampVoltSeconds / T;
      metrics.clampVoltageRipple = acc.clampMax - acc.clampMin;
      metrics.clampResistorPower = acc.clampRJoules / T;
      metrics.clampDiodePeakCurrent = acc.clampDiodePeak;
    }
    if (k.damper) metrics.damperResistorPower = acc.damperRJoules / T;
    return { variant: this.variant, periods, newtonIterations: iterations, converged, metrics, steps: this.stepCount };
  }
}

export function exactRun(scenario: Scenario, variant: Variant): ExactRun {
  return new ExactSwitchingNode(scenario, variant).run();
}

const size = (v: Float64Array): number => Math.max(Math.abs(v[0]!), Math.abs(v[1]!), Math.abs(v[2]!), Math.abs(v[3]!), Math.abs(v[4]!), Math.abs(v[5]!));

/**
 * Whether g, negative at both ends of a step and rising then falling inside it (d0 > 0 > d1, the
 * rates times the step), may touch zero: the cubic Hermite interpolant's crest, with a margin of a
 * hundredth of the step's swing (the interpolant errs by about (ωh)⁴/384 of it, 2e-4 at ωh = 1/2),
 * decides whether the crest is worth locating on the series.
 */
function mayReachZero(g0: number, g1: number, d0: number, d1: number): boolean {
  if (!(d0 > 0 && d1 < 0)) return false;
  // Hermite derivative: p'(θ) = d0·h00' … as a quadratic a·θ² + b·θ + c.
  const a = 6 * g0 + 3 * d0 - 6 * g1 + 3 * d1;
  const b = -6 * g0 - 4 * d0 + 6 * g1 - 2 * d1;
  const c = d0;
  const hermite = (theta: number): number => {
    const t = Math.min(1, Math.max(0, theta)), t2 = t * t, t3 = t2 * t;
    return (2 * t3 - 3 * t2 + 1) * g0 + (t3 - 2 * t2 + t) * d0 + (-2 * t3 + 3 * t2) * g1 + (t3 - t2) * d1;
  };
  let crest: number;
  if (Math.abs(a) < 1e-300) crest = hermite(-c / b);
  else {
    const root = Math.sqrt(Math.max(0, b * b - 4 * a * c));
    crest = Math.max(hermite((-b + root) / (2 * a)), hermite((-b - root) / (2 * a)));
  }
  return crest > -0.01 * (Math.abs(g0) + Math.abs(g1) + Math.abs(d0) + Math.abs(d1));
}

// ---------------------------------------------------------------------------------------------
// Scalar polynomials of the step time (coefficients in powers of s).

function coefficients(form: Affine, series: Float64Array[]): number[] {
  return series.map((v) => dot(form, v));
}

function polynomial(c: number[], s: number): number {
  let v = 0;
  for (let k = c.length - 1; k >= 0; k--) v = v * s + c[k]!;
  return v;
}

function derivative(c: number[]): number[] {
  return c.slice(1).map((v, k) => v * (k + 1));
}

/** The largest value of a form over a step: at its ends, or at a crest inside located on the series. */
function stepMaximum(form: Affine, series: Float64Array[], h: number): number {
  const c = coefficients(form, series);
  const ends = Math.max(c[0]!, polynomial(c, h));
  const d = derivative(c);
  return d[0]! > 0 && polynomial(d, h) < 0 ? Math.max(ends, polynomial(c, fallingRoot(d, 0, h))) : ends;
}

function evaluateSeries(series: Float64Array[], s: number): Float64Array {
  const out = new Float64Array(N);
  for (let k = series.length - 1; k >= 0; k--) {
    const v = series[k]!;
    for (let i = 0; i < N; i++) out[i] = out[i]! * s + v[i]!;
  }
  return out;
}

/** The root of p between a (p ≤ 0) and b (p > 0): Newton kept inside a shrinking bracket, to the last bits. */
function risingRoot(c: number[], a: number, b: number): number {
  const d = derivative(c);
  const tolerance = 1e-15 * (b - a);
  let lo = a, hi = b;
  let s = 0.5 * (a + b);
  for (let i = 0; i < 200; i++) {
    const p = polynomial(c, s);
    if (p > 0) hi = s; else lo = s;
    const slope = polynomial(d, s);
    const newton = slope > 0 ? s - p / slope : Number.NaN;
    const next = newton > lo && newton < hi ? newton : 0.5 * (lo + hi);
    if (Math.abs(next - s) <= tolerance || hi - lo <= tolerance) return next;
    s = next;
  }
  return hi;
}

/** The root of p between a (p > 0) and b (p < 0). */
function fallingRoot(c: number[], a: number, b: number): number {
  return risingRoot(c.map((v) => -v), a, b);
}

/** Gaussian elimination with partial pivoting on an augmented n×(n+1) system; undefined if singular. */
function solve(m: number[][]): number[] | undefined {
  const n = m.length;
  for (let col = 0; col < n; col++) {
    let pivot = col;
    for (let r = col + 1; r < n; r++) if (Math.abs(m[r]![col]!) > Math.abs(m[pivot]![col]!)) pivot = r;
    if (Math.abs(m[pivot]![col]!) < 1e-300) return undefined;
    [m[col], m[pivot]] = [m[pivot]!, m[col]!];
    for (let r = col + 1; r < n; r++) {
      const f = m[r]![col]! / m[col]![col]!;
      for (let c = col; c <= n; c++) m[r]![c]! -= f * m[col]![c]!;
    }
  }
  const x = new Array<number>(n).fill(0);
  for (let r = n - 1; r >= 0; r--) {
    let s = m[r]![n]!;
    for (let c = r + 1; c < n; c++) s -= m[r]![c]! * x[c]!;
    x[r] = s / m[r]![r]!;
  }
  return x;
}
