// Full-resolution bookkeeping for the recorded (settled) cycles only: the waveform on a uniform
// grid, exact extrema (zeros of the affine rate located on the interpolant), and per-cycle
// energies by Gauss–Legendre quadrature. Memory is bounded by recordedCycles × samplesPerCycle.

import { evaluate, rateOf, unit, IM, IP, VC, VS, type AffineForm } from '../model/affine.js';
import type { ModeEntry } from '../model/events.js';
import { POWER_TERMS, instantaneousPowers, storedEnergy } from '../model/power.js';
import { SECONDS_PER_TIME_UNIT, modeKey } from '../model/modes.js';
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
  clampVoltage: { max: number; min: number };
  clampDiodePeakCurrent: number;
  primaryPeakCurrent: number;
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

const CLAMP_VOLTAGE = unit(VC);
const PRIMARY_CURRENT = unit(IP);

interface TrackedRates { drain: AffineForm; clamp: AffineForm; clampDiode: AffineForm; primary: AffineForm }

export class CycleRecorder {
  readonly waveform: Waveform;
  readonly cycles: CycleRecord[] = [];
  private current: CycleRecord | null = null;
  private cycleIndex = -1;
  private readonly gridStep: number;
  private readonly rates = new WeakMap<ModeEntry, TrackedRates>();
  private readonly x = new Array<number>(5).fill(0);
  private readonly powers = new Array<number>(POWER_TERMS.length).fill(0);

  constructor(
    private readonly params: CircuitParams,
    periodUnits: number,
    private readonly cycleCount: number,
    private readonly samplesPerCycle: number,
    private readonly ringPeriodUnits: number,
  ) {
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
      storedEnergyStart: storedEnergy(this.params, before.entry, before.x),
      storedEnergyEnd: 0,
      clampVoltageIntegral: 0,
      drainVoltage: { max: -Infinity, min: Infinity },
      clampVoltage: { max: -Infinity, min: Infinity },
      clampDiodePeakCurrent: 0,
      primaryPeakCurrent: -Infinity,
      drainMaxima: [],
      turnOffSeconds: NaN,
      turnOffCause: 'fixed-duty',
      outputDiodeOnAtEnd: false,
    };
    if (this.cycleIndex === 0) this.writeSample(0, before.entry, before.x);
    this.point(entry, x);
  }

  endCycle(entry: ModeEntry, x: readonly number[]): void {
    const c = this.current!;
    c.storedEnergyEnd = storedEnergy(this.params, entry, x);
    c.outputDiodeOnAtEnd = entry.mode.outputDiodeOn;
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
    const f = entry.forms;
    const vd = evaluate(f.drainVoltage, x as number[]);
    c.drainVoltage.max = Math.max(c.drainVoltage.max, vd);
    c.drainVoltage.min = Math.min(c.drainVoltage.min, vd);
    c.clampVoltage.max = Math.max(c.clampVoltage.max, x[VC]!);
    c.clampVoltage.min = Math.min(c.clampVoltage.min, x[VC]!);
    c.clampDiodePeakCurrent = Math.max(c.clampDiodePeakCurrent, evaluate(f.clampDiodeCurrent, x as number[]));
    c.primaryPeakCurrent = Math.max(c.primaryPeakCurrent, x[IP]!);
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
    const f = entry.forms;
    const xs = x as number[];
    ch.drainVoltage[index] = evaluate(f.drainVoltage, xs);
    ch.clampVoltage[index] = x[VC]!;
    ch.primaryCurrent[index] = x[IP]!;
    ch.magnetizingCurrent[index] = x[IM]!;
    ch.damperCapacitorVoltage[index] = x[VS]!;
    ch.clampDiodeCurrent[index] = evaluate(f.clampDiodeCurrent, xs);
    ch.secondaryCurrent[index] = evaluate(f.secondaryCurrent, xs);
    ch.damperCurrent[index] = evaluate(f.damperCurrent, xs);
  }

  private integrate(entry: ModeEntry, a: number, b: number, stateAt: StateAt): void {
    const c = this.current!;
    const pieces = Math.max(1, Math.ceil((b - a) / (this.ringPeriodUnits / 8)));
    const h = (b - a) / pieces;
    const dtSeconds = h * SECONDS_PER_TIME_UNIT;
    for (let s = 0; s < pieces; s++) {
      const t0 = a + s * h;
      for (let q = 0; q < GL_NODES.length; q++) {
        stateAt(t0 + GL_NODES[q]! * h, this.x);
        instantaneousPowers(this.params, entry, this.x, this.powers);
        const w = GL_WEIGHTS[q]! * dtSeconds;
        for (let i = 0; i < this.powers.length; i++) c.energy[i]! += w * this.powers[i]!;
        c.clampVoltageIntegral += w * this.x[VC]!;
      }
    }
  }

  private ratesOf(entry: ModeEntry): TrackedRates {
    let r = this.rates.get(entry);
    if (!r) {
      const f = entry.forms;
      r = {
        drain: rateOf(f.drainVoltage, entry.system),
        clamp: rateOf(CLAMP_VOLTAGE, entry.system),
        clampDiode: rateOf(f.clampDiodeCurrent, entry.system),
        primary: rateOf(PRIMARY_CURRENT, entry.system),
      };
      this.rates.set(entry, r);
    }
    return r;
  }

  private findExtrema(entry: ModeEntry, a: number, b: number, stateAt: StateAt): void {
    const c = this.current!;
    const rates = this.ratesOf(entry);
    const f = entry.forms;
    const samples = Math.max(4, Math.ceil((8 * (b - a)) / this.ringPeriodUnits));
    const x = this.x;
    const valueAt = (form: AffineForm, t: number): number => { stateAt(t, x); return evaluate(form, x); };
    const scan = (rate: AffineForm, onMax: (t: number) => void, onMin: ((t: number) => void) | null): void => {
      let tPrev = a;
      let rPrev = valueAt(rate, a);
      for (let j = 1; j <= samples; j++) {
        const t = a + ((b - a) * j) / samples;
        const r = valueAt(rate, t);
        const tol = 1e-12 * Math.max(1, Math.abs(t));
        if (rPrev > 0 && r <= 0) onMax(locateRisingRoot((tq) => -valueAt(rate, tq), tPrev, t, -rPrev, -r, tol));
        else if (onMin && rPrev < 0 && r >= 0) onMin(locateRisingRoot((tq) => valueAt(rate, tq), tPrev, t, rPrev, r, tol));
        tPrev = t;
        rPrev = r;
      }
    };
    const key = modeKey(entry.mode);
    scan(rates.drain, (t) => {
      const v = valueAt(f.drainVoltage, t);
      c.drainVoltage.max = Math.max(c.drainVoltage.max, v);
      c.drainMaxima.push({ timeSeconds: t * SECONDS_PER_TIME_UNIT, voltage: v, mode: key });
    }, (t) => { c.drainVoltage.min = Math.min(c.drainVoltage.min, valueAt(f.drainVoltage, t)); });
    if (this.params.clamp) {
      scan(rates.clamp, (t) => { c.clampVoltage.max = Math.max(c.clampVoltage.max, valueAt(CLAMP_VOLTAGE, t)); },
        (t) => { c.clampVoltage.min = Math.min(c.clampVoltage.min, valueAt(CLAMP_VOLTAGE, t)); });
      if (entry.mode.drain === 'clamp') {
        scan(rates.clampDiode, (t) => { c.clampDiodePeakCurrent = Math.max(c.clampDiodePeakCurrent, valueAt(f.clampDiodeCurrent, t)); }, null);
      }
    }
    scan(rates.primary, (t) => { c.primaryPeakCurrent = Math.max(c.primaryPeakCurrent, valueAt(PRIMARY_CURRENT, t)); }, null);
    stateAt(b, x);
    this.point(entry, x);
  }
}
