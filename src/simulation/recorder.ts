// Full-resolution bookkeeping for the recorded (settled) cycles only: the waveform on a uniform
// grid, exact extrema (zeros of the affine rate located on the interpolant), and per-cycle
// energies by Gauss–Legendre quadrature. Memory is bounded by recordedCycles × samplesPerCycle.

import type { ModeEntry } from '../model/events.js';
import { POWER_TERMS, instantaneousPowers, storedEnergy } from '../model/power.js';
import { SECONDS_PER_TIME_UNIT } from '../model/modes.js';
import { IC, IM, IP, VC, VD, VS, stateSizeFor } from '../model/state.js';
import type { CircuitParams } from '../model/circuit-params.js';
import { locateRisingRoot } from '../solver/locate-root.js';
import type { StateAt } from '../solver/segment.js';

export const WAVEFORM_CHANNELS = [
  'drainVoltage', 'clampVoltage', 'primaryCurrent', 'magnetizingCurrent',
  'damperCapacitorVoltage', 'clampDiodeCurrent', 'secondaryCurrent', 'damperCurrent',
] as const;
export type WaveformChannel = (typeof WAVEFORM_CHANNELS)[number];

export interface Waveform {
  /** Seconds from the start of the first recorded cycle, uniform grid. */
  timeSeconds: Float64Array;
  channels: Record<WaveformChannel, Float64Array>;
}

export interface DrainExtremum { timeSeconds: number; voltage: number; mode: string }

export interface CycleRecord {
  /** Energy per term over the cycle, J, indexed like POWER_TERMS. */
  energy: number[];
  /** Energy lost discharging Coss when the switch turns on, J. */
  turnOnLoss: number;
  storedEnergyStart: number;
  storedEnergyEnd: number;
  clampVoltageIntegral: number;
  drainVoltage: { max: number; min: number };
  /** Clamp capacitor voltage (above the rail) at the instant of the drain's maximum. */
  clampVoltageAtDrainPeak: number;
  clampVoltage: { max: number; min: number };
  clampDiodePeakCurrent: number;
  /** Charge the clamp diode conducted backwards (recovery) over the cycle, C. */
  clampDiodeReverseCharge: number;
  primaryPeakCurrent: number;
  /** Primary current at the instant the switch opened, A. */
  turnOffCurrent: number;
  /** Local maxima of the drain voltage, times from the start of this cycle. */
  drainMaxima: DrainExtremum[];
  turnOffSeconds: number;
  turnOffCause: 'peak-current' | 'max-duty' | 'fixed-duty';
  /** The output diode still conducts when the next period starts: continuous conduction. */
  outputDiodeOnAtEnd: boolean;
}

// Gauss–Legendre, 5 points on [0, 1].
const GL_NODES = [0.04691007703066800, 0.23076534494715845, 0.5, 0.76923465505284155, 0.95308992296933200];
const GL_WEIGHTS = [0.11846344252809454, 0.23931433524968324, 0.28444444444444444, 0.23931433524968324, 0.11846344252809454];

/** A scalar of the state in one mode, and its rate along the solution (per time unit). */
interface Tracked { value: (entry: ModeEntry, x: number[]) => number; rate: (entry: ModeEntry, x: number[], dx: number[]) => number }

const DRAIN: Tracked = { value: (e, x) => e.model.signals(x).drainVoltage, rate: (_e, _x, dx) => dx[VD]! };
const CLAMP: Tracked = { value: (_e, x) => x[VC]!, rate: (_e, _x, dx) => dx[VC]! };
const PRIMARY: Tracked = { value: (_e, x) => x[IP]!, rate: (_e, _x, dx) => dx[IP]! };

export class CycleRecorder {
  readonly waveform: Waveform;
  /** Scratch: each tracked quantity's rate at the extrema scan's sample times. */
  private readonly sampleRates: number[][] = [];
  readonly cycles: CycleRecord[] = [];
  private current: CycleRecord | null = null;
  private cycleIndex = -1;
  private readonly gridStep: number;
  private readonly x: number[];
  private readonly dx: number[];
  private readonly probe: number[];
  private readonly powers = new Array<number>(POWER_TERMS.length).fill(0);

  constructor(
    private readonly params: CircuitParams,
    periodUnits: number,
    private readonly cycleCount: number,
    private readonly samplesPerCycle: number,
    private readonly ringPeriodUnits: number,
  ) {
    const size = stateSizeFor(params);
    this.x = new Array<number>(size).fill(0);
    this.dx = new Array<number>(size).fill(0);
    this.probe = new Array<number>(size).fill(0);
    const n = cycleCount * samplesPerCycle + 1;
    this.gridStep = periodUnits / samplesPerCycle;
    const channels = {} as Record<WaveformChannel, Float64Array>;
    for (const name of WAVEFORM_CHANNELS) channels[name] = new Float64Array(n);
    const timeSeconds = new Float64Array(n);
    for (let i = 0; i < n; i++) timeSeconds[i] = i * this.gridStep * SECONDS_PER_TIME_UNIT;
    this.waveform = { timeSeconds, channels };
  }

  get done(): boolean { return this.cycles.length >= this.cycleCount; }

  /**
   * `before` is the state just before the switch turns on (the previous cycle's end); `entry`/`x`
   * just after. Stored energy is taken before, since `turnOnLoss` counts the Coss discharge, and
   * every cycle-boundary sample is the left limit, the first one included.
   */
  startCycle(before: { entry: ModeEntry; x: readonly number[] }, entry: ModeEntry, x: readonly number[], turnOnLoss: number): void {
    this.cycleIndex++;
    this.current = {
      energy: new Array<number>(POWER_TERMS.length).fill(0),
      turnOnLoss,
      storedEnergyStart: storedEnergy(this.params, before.entry.model, before.x),
      storedEnergyEnd: 0,
      clampVoltageIntegral: 0,
      drainVoltage: { max: -Infinity, min: Infinity },
      clampVoltageAtDrainPeak: NaN,
      clampVoltage: { max: -Infinity, min: Infinity },
      clampDiodePeakCurrent: 0,
      clampDiodeReverseCharge: 0,
      primaryPeakCurrent: -Infinity,
      turnOffCurrent: NaN,
      drainMaxima: [],
      turnOffSeconds: NaN,
      turnOffCause: 'fixed-duty',
      outputDiodeOnAtEnd: false,
    };
    if (this.cycleIndex === 0) this.writeSample(0, before.entry, before.x);
    this.point(entry, x);
  }

  endCycle(entry: ModeEntry, x: readonly number[], turnOffCurrent: number): void {
    const c = this.current!;
    c.storedEnergyEnd = storedEnergy(this.params, entry.model, x);
    c.outputDiodeOnAtEnd = entry.model.mode.outputDiodeOn;
    c.turnOffCurrent = turnOffCurrent;
    this.cycles.push(c);
    this.current = null;
  }

  turnOff(tUnits: number, cause: CycleRecord['turnOffCause']): void {
    this.current!.turnOffSeconds = tUnits * SECONDS_PER_TIME_UNIT;
    this.current!.turnOffCause = cause;
  }

  /** A state at an instant (segment ends, both sides of a mode change) for the extremum trackers. */
  point(entry: ModeEntry, x: readonly number[]): void {
    const c = this.current!;
    const s = entry.model.signals(x);
    this.drainCandidate(s.drainVoltage, x[VC]!);
    c.drainVoltage.min = Math.min(c.drainVoltage.min, s.drainVoltage);
    c.clampVoltage.max = Math.max(c.clampVoltage.max, x[VC]!);
    c.clampVoltage.min = Math.min(c.clampVoltage.min, x[VC]!);
    c.clampDiodePeakCurrent = Math.max(c.clampDiodePeakCurrent, s.clampDiodeCurrent);
    c.primaryPeakCurrent = Math.max(c.primaryPeakCurrent, x[IP]!);
  }

  private drainCandidate(vd: number, vc: number): void {
    const c = this.current!;
    if (vd > c.drainVoltage.max) { c.drainVoltage.max = vd; c.clampVoltageAtDrainPeak = vc; }
  }

  /** One accepted piece [a, b] of the solution in `entry`'s mode, times local to the cycle. */
  piece(entry: ModeEntry, a: number, b: number, stateAt: StateAt): void {
    if (!(b > a)) return;
    this.sampleGrid(entry, a, b, stateAt);
    this.integrate(entry, a, b, stateAt);
    this.findExtrema(entry, a, b, stateAt);
  }

  private sampleGrid(entry: ModeEntry, a: number, b: number, stateAt: StateAt): void {
    const dt = this.gridStep;
    const jLo = Math.floor(a / dt) + 1;
    const jHi = Math.min(this.samplesPerCycle, Math.floor(b / dt + 1e-9));
    for (let j = jLo; j <= jHi; j++) {
      stateAt(Math.min(j * dt, b), this.x);
      this.writeSample(this.cycleIndex * this.samplesPerCycle + j, entry, this.x);
    }
  }

  private writeSample(index: number, entry: ModeEntry, x: readonly number[]): void {
    const ch = this.waveform.channels;
    const s = entry.model.signals(x);
    ch.drainVoltage[index] = s.drainVoltage;
    ch.clampVoltage[index] = x[VC]!;
    ch.primaryCurrent[index] = x[IP]!;
    ch.magnetizingCurrent[index] = x[IM]!;
    ch.damperCapacitorVoltage[index] = x[VS]!;
    ch.clampDiodeCurrent[index] = s.clampDiodeCurrent;
    ch.secondaryCurrent[index] = s.secondaryCurrent;
    ch.damperCurrent[index] = s.damperCurrent;
  }

  private integrate(entry: ModeEntry, a: number, b: number, stateAt: StateAt): void {
    const c = this.current!;
    const pieces = Math.max(1, Math.ceil((b - a) / (this.ringPeriodUnits / 8)));
    const h = (b - a) / pieces;
    const dtSeconds = h * SECONDS_PER_TIME_UNIT;
    const reverse = entry.model.mode.clampDiode === 'recovering' || (entry.model.mode.clampDiode === 'on' && this.params.clamp?.recovery);
    for (let s = 0; s < pieces; s++) {
      const t0 = a + s * h;
      for (let q = 0; q < GL_NODES.length; q++) {
        stateAt(t0 + GL_NODES[q]! * h, this.x);
        instantaneousPowers(this.params, entry.model, this.x, this.powers);
        const w = GL_WEIGHTS[q]! * dtSeconds;
        for (let i = 0; i < this.powers.length; i++) c.energy[i]! += w * this.powers[i]!;
        c.clampVoltageIntegral += w * this.x[VC]!;
        if (reverse) c.clampDiodeReverseCharge += w * Math.max(0, -entry.model.signals(this.x).clampDiodeCurrent);
      }
    }
  }

  /**
   * The clamp diode's current: a state with a loop inductance; otherwise algebraic, its rate taken
   * by a central difference along the field (exact for a linear mode, to rounding).
   */
  private clampDiodeTracked(isState: boolean): Tracked {
    if (isState) return { value: (_e, x) => x[IC]!, rate: (_e, _x, dx) => dx[IC]! };
    const probe = this.probe;
    const h = 1e-4 * this.ringPeriodUnits;
    const current = (e: ModeEntry, y: number[]): number => e.model.signals(y).clampDiodeCurrent;
    return {
      value: current,
      rate: (e, x, dx) => {
        for (let i = 0; i < x.length; i++) probe[i] = x[i]! + h * dx[i]!;
        const ahead = current(e, probe);
        for (let i = 0; i < x.length; i++) probe[i] = x[i]! - h * dx[i]!;
        return (ahead - current(e, probe)) / (2 * h);
      },
    };
  }

  private findExtrema(entry: ModeEntry, a: number, b: number, stateAt: StateAt): void {
    const c = this.current!;
    const samples = Math.max(4, Math.ceil((8 * (b - a)) / this.ringPeriodUnits));
    const x = this.x, dx = this.dx;
    const valueAt = (q: Tracked, t: number): number => { stateAt(t, x); return q.value(entry, x); };
    const rateAt = (q: Tracked, t: number): number => {
      stateAt(t, x);
      entry.model.derivative(x, dx);
      return q.rate(entry, x, dx);
    };
    const key = entry.model.key;
    const scans: Array<{ q: Tracked; onMax: (t: number) => void; onMin: ((t: number) => void) | null }> = [];
    scans.push({
      q: DRAIN,
      onMax: (t) => {
        const v = valueAt(DRAIN, t);
        this.drainCandidate(v, x[VC]!);
        c.drainMaxima.push({ timeSeconds: t * SECONDS_PER_TIME_UNIT, voltage: v, mode: key });
      },
      onMin: (t) => { c.drainVoltage.min = Math.min(c.drainVoltage.min, valueAt(DRAIN, t)); },
    });
    const clamp = this.params.clamp;
    if (clamp) {
      scans.push({
        q: CLAMP,
        onMax: (t) => { c.clampVoltage.max = Math.max(c.clampVoltage.max, valueAt(CLAMP, t)); },
        onMin: (t) => { c.clampVoltage.min = Math.min(c.clampVoltage.min, valueAt(CLAMP, t)); },
      });
      const diodeOn = entry.model.mode.drain === 'clamp' || (clamp.loopInductance > 0 && entry.model.mode.clampDiode === 'on');
      if (diodeOn) {
        const diode = this.clampDiodeTracked(clamp.loopInductance > 0);
        scans.push({ q: diode, onMax: (t) => { c.clampDiodePeakCurrent = Math.max(c.clampDiodePeakCurrent, valueAt(diode, t)); }, onMin: null });
      }
    }
    scans.push({ q: PRIMARY, onMax: (t) => { c.primaryPeakCurrent = Math.max(c.primaryPeakCurrent, valueAt(PRIMARY, t)); }, onMin: null });

    // Every tracked rate at each sample time from one state and one field evaluation; a sign
    // change of a rate between samples is then refined on its own.
    const rates = this.sampleRates;
    while (rates.length < scans.length) rates.push([]);
    for (let j = 0; j <= samples; j++) {
      stateAt(a + ((b - a) * j) / samples, x);
      entry.model.derivative(x, dx);
      for (let k = 0; k < scans.length; k++) rates[k]![j] = scans[k]!.q.rate(entry, x, dx);
    }
    for (let k = 0; k < scans.length; k++) {
      const { q, onMax, onMin } = scans[k]!;
      const r = rates[k]!;
      for (let j = 1; j <= samples; j++) {
        const tPrev = a + ((b - a) * (j - 1)) / samples, t = a + ((b - a) * j) / samples;
        const rPrev = r[j - 1]!, rNow = r[j]!;
        const tol = 1e-12 * Math.max(1, Math.abs(t));
        if (rPrev > 0 && rNow <= 0) onMax(locateRisingRoot((tq) => -rateAt(q, tq), tPrev, t, -rPrev, -rNow, tol));
        else if (onMin && rPrev < 0 && rNow >= 0) onMin(locateRisingRoot((tq) => rateAt(q, tq), tPrev, t, rPrev, rNow, tol));
      }
    }
    stateAt(b, x);
    this.point(entry, x);
  }
}
