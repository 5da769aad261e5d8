// Modes of the switching node and their dynamics. A mode is the set of conducting devices; a
// conducting device that pins the drain (the on-switch, an ideal clamp diode with no loop
// inductance, the body diode, avalanche) is an algebraic constraint on the drain voltage, never a
// tiny resistance against Coss (that would be a picosecond time constant an explicit solver cannot
// step). Each mode is a vector field dx/dt = f(x); where every part in it is linear the same field
// is also available as dx/dt = A·x + b for exact propagators.

import type { AffineSystem } from './affine.js';
import type { CircuitParams } from './circuit-params.js';
import { IC, ICH, IM, IP, KF, QD, VC, VD, VJ, VS, stateSizeFor } from './state.js';

/** The model integrates in microseconds: odex clamps its first step to ≥ 1e-4 of its time unit. */
export const SECONDS_PER_TIME_UNIT = 1e-6;

/** What holds the drain: the on-switch, nothing (free), the clamp diode (no loop inductance), the body diode, avalanche. */
export type DrainState = 'switch' | 'free' | 'clamp' | 'body' | 'avalanche';
export type ClampDiodeState = 'off' | 'on' | 'recovering';

export interface Mode {
  drain: DrainState;
  outputDiodeOn: boolean;
  /** With no loop inductance, 'on' goes with drain 'clamp'. */
  clampDiode: ClampDiodeState;
  /** The channel current is still falling after the switch opened. */
  channelFalling: boolean;
}

export const SWITCH_ON: Mode = { drain: 'switch', outputDiodeOn: false, clampDiode: 'off', channelFalling: false };

export const modeKey = (m: Mode): string => {
  const diode = m.drain === 'clamp' || m.clampDiode === 'off' ? '' : m.clampDiode === 'on' ? '+cd' : '+rr';
  return `${m.drain}${m.outputDiodeOn ? '+out' : ''}${diode}${m.channelFalling ? '+fall' : ''}`;
};

/** Every current (A), voltage (V) and rate (per second) of the circuit at one state, in one mode. */
export interface Signals {
  drainVoltage: number;
  damperCurrent: number;
  /** Channel current while it falls after opening. */
  fallingChannelCurrent: number;
  /** Channel current while on (drain to source). */
  switchCurrent: number;
  /** The clamp diode's own current (its junction capacitance's excluded) and voltage (anode − cathode). */
  clampDiodeCurrent: number;
  clampDiodeVoltage: number;
  /** Current leaving the drain into the clamp branch (returned to the rail). */
  clampBranchCurrent: number;
  bodyDiodeCurrent: number;
  avalancheCurrent: number;
  magnetizingVoltage: number;
  /** Secondary current referred to the primary, im − ip while the output diode conducts. */
  secondaryCurrent: number;
  /** dx/dt per second. */
  rates: number[];
}

/** Stored charge below which a recovering diode counts as recovered, relative to scale·TM. */
export const RECOVERED_CHARGE_FRACTION = 1e-6;

export class ModeModel {
  readonly key: string;
  readonly size: number;
  /**
   * Every part acting in this mode is linear: the drain's capacitance only counts where the drain
   * is free or moves with the clamp capacitor, the forward-recovery resistance only while the
   * diode conducts in its loop. A curve leaves the on-time, avalanche and body-diode modes linear.
   */
  readonly linear: boolean;
  private readonly s: Signals;
  private systemCache: AffineSystem | null = null;
  private movingCache: number[] | null = null;

  constructor(readonly params: CircuitParams, readonly mode: Mode) {
    this.key = modeKey(mode);
    this.size = stateSizeFor(params);
    const drainCapacitanceActs = mode.drain === 'free' || mode.drain === 'clamp';
    const forwardRecoveryActs = !!params.clamp?.forwardRecovery && mode.clampDiode === 'on';
    this.linear = (params.drainNode.isConstant || !drainCapacitanceActs) && !forwardRecoveryActs;
    this.s = {
      drainVoltage: 0, damperCurrent: 0, fallingChannelCurrent: 0, switchCurrent: 0,
      clampDiodeCurrent: 0, clampDiodeVoltage: 0, clampBranchCurrent: 0, bodyDiodeCurrent: 0,
      avalancheCurrent: 0, magnetizingVoltage: 0, secondaryCurrent: 0, rates: new Array<number>(this.size).fill(0),
    };
  }

  /**
   * Evaluates every signal at x. The returned object is reused by the next call: read what you
   * need before calling again.
   */
  signals(x: ArrayLike<number>): Signals {
    const p = this.params;
    const m = this.mode;
    const s = this.s;
    const d = s.rates;
    d.fill(0);
    const vin = p.supplyVoltage;
    const ip = x[IP]!, vc = x[VC]!, vs = x[VS]!;
    const clamp = p.clamp;
    const loop = clamp ? clamp.loopInductance : 0;
    const rec = clamp?.recovery ?? null;
    const q = clamp && (rec || clamp.forwardRecovery) ? x[QD]! : 0;
    const rs = p.damper?.resistance;

    // The clamp branch current as far as the state fixes it (the ideal no-loop clamp's is algebraic, below).
    let branch = 0;
    if (clamp && loop > 0) branch = x[IC]!;
    else if (clamp && m.clampDiode === 'recovering') branch = -q / rec!.transitTime;

    let vd: number;
    switch (m.drain) {
      case 'free': vd = x[VD]!; break;
      case 'clamp': vd = vin + vc + clamp!.diodeDrop; break;
      case 'body': vd = -p.bodyDiodeDrop; break;
      case 'avalanche': vd = p.avalancheVoltage!; break;
      case 'switch': {
        // The channel carries what the winding brings less the damper and the clamp branch.
        if (rs === undefined) vd = p.onResistance * (ip - branch);
        else {
          const rPar = (p.onResistance * rs) / (p.onResistance + rs);
          vd = rPar * (ip - branch + vs / rs);
        }
        break;
      }
    }
    const id = rs === undefined ? 0 : (vd - vs) / rs;
    const ich = m.channelFalling ? x[ICH]! : 0;
    if (p.damper) d[VS] = id / p.damper.capacitance;

    // Winding: u is what is left for the two inductances after the winding resistance.
    const lm = p.magnetizingInductance, llk = p.leakageInductance;
    const u = vin - vd - p.primaryResistance * ip;
    if (m.outputDiodeOn) {
      d[IP] = (u + p.reflectedVoltage) / llk;
      d[IM] = -p.reflectedVoltage / lm;
      s.magnetizingVoltage = -p.reflectedVoltage;
      s.secondaryCurrent = x[IM]! - ip;
    } else {
      d[IP] = u / (lm + llk);
      d[IM] = d[IP]!;
      s.magnetizingVoltage = (lm * u) / (lm + llk);
      s.secondaryCurrent = 0;
    }

    let iD = 0, vDiode = 0, dBranch = 0;
    if (clamp) {
      const vk = vin + vc;
      const vf = clamp.diodeDrop;
      let dq = 0;
      if (loop > 0) {
        const cj = clamp.diodeCapacitance;
        // The loop's own resistance (capacitor ESR, traces) is what damps its ring.
        const vLoop = vd - vk - clamp.loopResistance * branch;
        if (m.clampDiode === 'on') {
          const fr = clamp.forwardRecovery;
          vDiode = vf + (fr ? (branch * fr.resistance * fr.charge) / (fr.charge + q) : 0);
          d[IC] = (vLoop - vDiode) / loop;
          iD = branch;
          dq = rec ? iD - q / rec.lifetime : iD;
        } else if (m.clampDiode === 'recovering') {
          iD = -q / rec!.transitTime;
          dq = -q * (1 / rec!.lifetime + 1 / rec!.transitTime);
          if (cj > 0) {
            d[VJ] = (branch - iD) / cj;
            d[IC] = (vLoop - x[VJ]!) / loop;
            vDiode = x[VJ]!;
          } else {
            // In series with the loop, the current source sets the branch current.
            d[IC] = -dq / rec!.transitTime;
            vDiode = vLoop - loop * d[IC]!;
          }
        } else if (cj > 0) {
          d[VJ] = branch / cj;
          d[IC] = (vLoop - x[VJ]!) / loop;
          vDiode = x[VJ]!;
        } else {
          vDiode = vLoop;
        }
        dBranch = d[IC]!;
        d[VC] = (branch - vc / clamp.resistance) / clamp.capacitance;
      } else if (m.drain === 'clamp') {
        // Coss moves with the clamp capacitor while the diode pins the drain to it.
        const cNode = p.drainNode.at(vd);
        d[VC] = (ip - id - ich - vc / clamp.resistance) / (clamp.capacitance + cNode);
        iD = ip - id - ich - cNode * d[VC]!;
        branch = iD;
        vDiode = vf;
        dq = rec ? iD - q / rec.lifetime : 0;
      } else {
        if (m.clampDiode === 'recovering') {
          iD = branch;
          dq = -q * (1 / rec!.lifetime + 1 / rec!.transitTime);
          dBranch = -dq / rec!.transitTime;
        }
        vDiode = vd - vk;
        d[VC] = (branch - vc / clamp.resistance) / clamp.capacitance;
      }
      if (rec || clamp.forwardRecovery) d[QD] = m.clampDiode === 'off' ? 0 : dq;
    }

    const inflow = ip - id - ich - branch;
    switch (m.drain) {
      case 'free': d[VD] = inflow / p.drainNode.at(vd); break;
      case 'clamp': d[VD] = d[VC]!; break;
      case 'switch': {
        if (rs === undefined) d[VD] = p.onResistance * (d[IP]! - dBranch);
        else {
          const rPar = (p.onResistance * rs) / (p.onResistance + rs);
          d[VD] = rPar * (d[IP]! - dBranch + d[VS]! / rs);
        }
        break;
      }
      default: d[VD] = 0;
    }
    if (m.channelFalling) d[ICH] = -x[KF]!;

    s.drainVoltage = vd;
    s.damperCurrent = id;
    s.fallingChannelCurrent = ich;
    // The channel also takes the drain node's charge as Ron·ip moves the drain.
    s.switchCurrent = m.drain === 'switch' ? inflow - p.drainNode.at(vd) * d[VD]! : 0;
    s.clampDiodeCurrent = iD;
    s.clampDiodeVoltage = vDiode;
    s.clampBranchCurrent = branch;
    s.bodyDiodeCurrent = m.drain === 'body' ? -inflow : 0;
    s.avalancheCurrent = m.drain === 'avalanche' ? inflow : 0;
    return s;
  }

  /** dx/dt per model time unit (µs). */
  derivative(x: ArrayLike<number>, out: number[]): number[] {
    const rates = this.signals(x).rates;
    for (let i = 0; i < this.size; i++) out[i] = rates[i]! * SECONDS_PER_TIME_UNIT;
    return out;
  }

  /**
   * The state components this mode's equations move (the others keep their values through it):
   * those whose rate is non-zero at any of three probe states. A rate the equations do not set is
   * exactly zero (signals() clears them all first), so a part absent from the mode (the channel's
   * fall, a diode that is off, a damper the variant lacks) is found whatever the probe.
   */
  get movingComponents(): readonly number[] {
    if (!this.movingCache) {
      const n = this.size;
      const out = new Array<number>(n);
      const moves = new Array<boolean>(n).fill(false);
      for (let k = 0; k < 3; k++) {
        const x = Array.from({ length: n }, (_, i) => (1 + 0.37 * i) * (1 + 0.61 * k));
        this.derivative(x, out);
        out.forEach((rate, i) => { if (rate !== 0) moves[i] = true; });
      }
      this.movingCache = moves.flatMap((m, i) => (m ? [i] : []));
    }
    return this.movingCache;
  }

  /** The mode as dx/dt = A·x + b (per time unit), read off the field by probing; only for linear modes. */
  system(): AffineSystem {
    if (!this.linear) throw new Error(`mode ${this.key} is not linear`);
    if (!this.systemCache) {
      const n = this.size;
      const x = new Array<number>(n).fill(0);
      const b = this.derivative(x, new Array<number>(n));
      const A = new Array<number>(n * n);
      const column = new Array<number>(n);
      for (let j = 0; j < n; j++) {
        x[j] = 1;
        this.derivative(x, column);
        for (let i = 0; i < n; i++) A[i * n + j] = column[i]! - b[i]!;
        x[j] = 0;
      }
      this.systemCache = { A, b };
    }
    return this.systemCache;
  }

  /**
   * Makes the state consistent with this mode just entered: algebraic quantities take their
   * constrained values (the drain, a loop current with nothing to carry it, im = ip with the output
   * diode off), and a diode that stopped holds no charge.
   */
  enter(x: number[]): void {
    const p = this.params, m = this.mode, clamp = p.clamp;
    if (clamp && clamp.loopInductance > 0) {
      if (clamp.diodeCapacitance > 0 && m.clampDiode === 'on') x[VJ] = clamp.diodeDrop;
      if (clamp.diodeCapacitance === 0 && m.clampDiode === 'off') x[IC] = 0;
      if (clamp.diodeCapacitance === 0 && m.clampDiode === 'recovering') x[IC] = -x[QD]! / clamp.recovery!.transitTime;
    }
    if (clamp && (clamp.recovery || clamp.forwardRecovery) && m.clampDiode === 'off') x[QD] = 0;
    if (this.size > KF && !m.channelFalling) { x[ICH] = 0; x[KF] = 0; }
    if (!m.outputDiodeOn) x[IM] = x[IP]!;
    if (m.drain !== 'free') x[VD] = this.signals(x).drainVoltage;
  }
}
