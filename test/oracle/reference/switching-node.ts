// The switching node of the README's "The model, its assumptions and limits" as a hybrid system: a continuous state (currents,
// voltages, the diode's stored charge, and running integrals of every power term), a discrete state
// (switch phase, which devices conduct) and the rising zero crossings that change it. Integration is
// classic Runge–Kutta 4 with a fixed step chosen from the circuit's fastest natural period; every
// switching boundary is landed on exactly and every device event is located on a re-integration from
// the step's start. Nothing here is shared with the engine in src/.

import { DrainCapacitance } from './capacitance.js';
import {
  chargeControlFromRecoveryTime, conductingChargeRate, forwardRecoveryFromDatasheet, forwardRecoveryVolts,
  recoveringChargeRate, recoveringCurrent, type ChargeControl, type ForwardRecovery,
} from './charge-control.js';
import { locateRisingRoot, RungeKutta4 } from './integrator.js';
import { reflectedVolts, type ReferenceNetlist } from './netlist.js';

export type Variant = 'bare' | 'clamp' | 'damped';

// Physical state, SI units.
export const IP = 0, IM = 1, VD = 2, VC = 3, VS = 4, ICL = 5, VJ = 6, QM = 7;
export const PHYSICAL_SIZE = 8;
// Running integrals over the period (J, or C and V·s), integrated by the same Runge–Kutta steps so
// that the energy balance closes to the integration error.
export const E_SUPPLY = 8, E_LOAD = 9, E_OUTPUT_DIODE = 10, E_PRIMARY_R = 11, E_CHANNEL = 12, E_TURN_OFF = 13,
  E_CLAMP_R = 14, E_CLAMP_DIODE = 15, E_BODY = 16, E_AVALANCHE = 17, E_DAMPER_R = 18, Q_REVERSE = 19, VC_INTEGRAL = 20, E_LOOP_R = 21;
export const STATE_SIZE = 22;

export type SwitchPhase = 'on' | 'delay' | 'fall' | 'off';
/** switch: vd algebraic on the closed switch; clamped: Ls = 0 clamp conducting, vd = Vin + vc + Vf. */
export type DrainState = 'switch' | 'free' | 'body' | 'avalanche' | 'clamped';
export type DiodeState = 'blocking' | 'conducting' | 'recovering';

export interface DiscreteState {
  phase: SwitchPhase;
  outputDiodeOn: boolean;
  drain: DrainState;
  clampDiode: DiodeState;
  /** Coss-curve segment of vd (see DrainCapacitance). */
  segment: number;
  tripSeconds: number;
  openSeconds: number;
  /** Channel current at the opening, I0 of the linear fall, A. */
  fallStartAmps: number;
}

/** Everything derived from one state, for derivatives, events, powers and recording. */
export class NodeAux {
  t = 0; ip = 0; im = 0; vd = 0; vdDot = 0; vc = 0; vcDot = 0; iN = 0; id = 0; ich = 0;
  /** Clamp-branch current leaving the drain (icl, or icd when Ls = 0), A. */
  ibc = 0;
  /** Clamp diode current (excludes the junction capacitance's current), A. */
  iD = 0;
  /** d iD/dt where iD is a state (Ls > 0, conducting); NaN otherwise. */
  iDDot = Number.NaN;
  vdiode = 0; ib = 0; iav = 0; isw = 0; vm = 0; isec = 0;

  copyFrom(o: NodeAux): void {
    this.t = o.t; this.ip = o.ip; this.im = o.im; this.vd = o.vd; this.vdDot = o.vdDot; this.vc = o.vc; this.vcDot = o.vcDot;
    this.iN = o.iN; this.id = o.id; this.ich = o.ich; this.ibc = o.ibc; this.iD = o.iD; this.iDDot = o.iDDot;
    this.vdiode = o.vdiode; this.ib = o.ib; this.iav = o.iav; this.isw = o.isw; this.vm = o.vm; this.isec = o.isec;
  }
}

export interface PeriodRecorder {
  /** A state the integrator passed through: step ends, event instants (before and after). */
  point(a: Readonly<NodeAux>): void;
  /** An accepted piece of one mode; `at(θ, out)` re-integrates to a fraction θ of it. */
  piece(start: Readonly<NodeAux>, end: Readonly<NodeAux>, at: (theta: number, out: NodeAux) => void): void;
  event(name: string, a: Readonly<NodeAux>): void;
}

export interface PeriodOutcome {
  turnOnLossJoules: number;
  /** Enode(vd at opening) − Enode(vd after turn-on): node energy the on-state equations leave unaccounted. */
  onStateNodeEnergyJoules: number;
  turnOffAmps: number;
  openSeconds: number;
  storedStartJoules: number;
  storedEndJoules: number;
}

export interface StepSettings {
  /** Steps per fastest natural ring period. */
  stepsPerRing: number;
  /** Steps per shortest time constant. */
  stepsPerTimeConstant: number;
  /** At least this many steps per switching period. */
  minStepsPerPeriod: number;
  /** Event location tolerance as a fraction of the period. */
  eventTimeTolerance: number;
}

export const DEFAULT_STEP_SETTINGS: StepSettings = { stepsPerRing: 200, stepsPerTimeConstant: 24, minStepsPerPeriod: 1000, eventTimeTolerance: 1e-13 };

// Event kinds, numbered for a cheap switch in the inner loop.
const EV_PEAK = 0, EV_OUT_ON = 1, EV_OUT_OFF = 2, EV_BODY_ON = 3, EV_BODY_OFF = 4, EV_AVAL_ON = 5, EV_AVAL_OFF = 6,
  EV_SEG_UP = 7, EV_SEG_DOWN = 8, EV_CLAMP0_ON = 9, EV_CLAMP0_OFF = 10, EV_CLAMP0_RECOVER = 11, EV_CLAMPED_AVAL = 12,
  EV_CL_STOP = 13, EV_CL_RECOVER = 14, EV_CL_START_CJ = 15, EV_CL_START = 16, EV_CL_RESTART = 17, EV_REC_END = 18,
  EV_REVERSE_ZERO = 19, EV_AVAL_CLAMP_ON = 20;
const EVENT_NAMES = [
  'peak-current', 'output-diode-on', 'output-diode-off', 'body-diode-on', 'body-diode-off', 'avalanche-on', 'avalanche-off',
  'coss-breakpoint-up', 'coss-breakpoint-down', 'clamp-diode-on', 'clamp-diode-off', 'clamp-diode-recovers', 'clamped-drain-avalanches',
  'clamp-diode-off', 'clamp-diode-recovers', 'clamp-diode-on', 'clamp-diode-on', 'clamp-diode-on-again', 'clamp-diode-blocks',
  'clamp-diode-current-zero', 'clamp-diode-on-during-avalanche',
] as const;

interface ActiveEvent { kind: number; threshold: number; marker: boolean }

export interface WorkCounters { evaluations: number; steps: number; events: number; periods: number }

export class SwitchingNode {
  readonly periodSeconds: number;
  readonly stepSeconds: number;
  readonly currentScaleAmps: number;
  readonly voltageScaleVolts: number;
  readonly chargeScaleCoulombs: number;
  readonly capacitance: DrainCapacitance;
  readonly hasClamp: boolean;
  readonly hasDamper: boolean;
  /** Effective clamp-loop inductance (1 nH stands in for 0 when forward recovery needs an inductor, as the engine does). */
  readonly loopHenries: number;
  readonly loopOhms: number;
  readonly recovery: ChargeControl | undefined;
  readonly forward: ForwardRecovery | undefined;
  readonly counters: WorkCounters = { evaluations: 0, steps: 0, events: 0, periods: 0 };

  private readonly vin: number;
  private readonly lm: number;
  private readonly llk: number;
  private readonly rp: number;
  private readonly vr: number;
  private readonly loadVolts: number;
  private readonly outputDiodeVolts: number;
  private readonly ron: number;
  private readonly vbody: number;
  private readonly vav: number | undefined;
  private readonly td: number;
  private readonly tf: number;
  private readonly rc: number;
  private readonly cc: number;
  private readonly vf: number;
  /** Junction capacitance kept as a state (Ls > 0); 0 when it is lumped with the drain. */
  private readonly cjState: number;
  private readonly rs: number;
  private readonly cs: number;
  private readonly rpar: number;
  private readonly peakAmps: number | undefined;
  private readonly openDutyFraction: number;
  private readonly recoveredCharge: number;

  private mode: DiscreteState;
  private readonly x = new Float64Array(STATE_SIZE);
  private readonly x1 = new Float64Array(STATE_SIZE);
  private readonly xe = new Float64Array(STATE_SIZE);
  private readonly xt = new Float64Array(STATE_SIZE);
  private k1 = new Float64Array(STATE_SIZE);
  private k1End = new Float64Array(STATE_SIZE);
  private readonly kScratch = new Float64Array(STATE_SIZE);
  private readonly a0 = new NodeAux();
  private readonly a1 = new NodeAux();
  private readonly ae = new NodeAux();
  private readonly at = new NodeAux();
  private readonly stageAux = new NodeAux();
  private readonly rk = new RungeKutta4(STATE_SIZE);
  private readonly derivative: (t: number, x: Float64Array, dx: Float64Array) => void;
  private events: ActiveEvent[] = [];
  private gStart: number[] = [];
  private gEnd: number[] = [];
  private outcome: PeriodOutcome = emptyOutcome();
  private vdOnStart = 0;
  private recorder: PeriodRecorder | undefined;

  constructor(readonly netlist: ReferenceNetlist, readonly variant: Variant, readonly settings: StepSettings = DEFAULT_STEP_SETTINGS) {
    const n = netlist;
    this.periodSeconds = 1 / n.frequencyHertz;
    this.vin = n.supplyVolts;
    this.lm = n.magnetizingHenries;
    this.llk = n.leakageHenries;
    this.rp = n.primaryOhms;
    this.vr = reflectedVolts(n);
    this.loadVolts = n.turnsRatio * n.outputVolts;
    this.outputDiodeVolts = n.turnsRatio * n.outputDiodeVolts;
    this.ron = n.onOhms;
    this.vbody = n.bodyDiodeVolts;
    this.vav = n.avalancheVolts;
    this.td = n.turnOffDelaySeconds;
    this.tf = n.currentFallSeconds;
    const clamp = variant === 'bare' ? undefined : n.clamp;
    const damper = variant === 'damped' ? n.damper : undefined;
    this.hasClamp = clamp !== undefined;
    this.hasDamper = damper !== undefined;
    this.rc = clamp?.ohms ?? 1;
    this.cc = clamp?.farads ?? 1;
    this.vf = clamp?.diodeDropVolts ?? 0;
    this.loopHenries = clamp === undefined ? 0
      : clamp.loopHenries === 0 && clamp.forwardRecovery !== undefined ? 1e-9 : clamp.loopHenries;
    const cj = clamp?.junctionFarads ?? 0;
    this.cjState = this.loopHenries > 0 ? cj : 0;
    this.loopOhms = clamp !== undefined && this.loopHenries > 0 ? clamp.loopOhms : 0;
    const lumpedJunction = this.hasClamp && this.loopHenries === 0 ? cj : 0;
    this.capacitance = new DrainCapacitance(n.coss, n.windingFarads + lumpedJunction);
    this.rs = damper?.ohms ?? 1;
    this.cs = damper?.farads ?? 1;
    this.rpar = (this.ron * this.rs) / (this.ron + this.rs);
    if (n.control.kind === 'peak-current') {
      this.peakAmps = n.control.peakAmps;
      this.openDutyFraction = n.control.maxDuty;
      this.currentScaleAmps = n.control.peakAmps;
    } else {
      this.peakAmps = undefined;
      this.openDutyFraction = n.control.duty;
      // Iscale for a fixed duty (the spec names Ipk only): the ideal peak of the on-time ramp.
      this.currentScaleAmps = (this.vin * n.control.duty * this.periodSeconds) / (this.lm + this.llk);
    }
    this.voltageScaleVolts = this.vin + this.vr;
    this.recovery = clamp?.recoverySeconds === undefined ? undefined : chargeControlFromRecoveryTime(clamp.recoverySeconds, clamp.transitTimeRatio);
    this.forward = clamp?.forwardRecovery === undefined ? undefined : forwardRecoveryFromDatasheet(
      clamp.forwardRecovery.peakVolts, clamp.diodeDropVolts, clamp.forwardRecovery.recoverySeconds, clamp.forwardRecovery.rampAmpsPerSecond);
    this.recoveredCharge = this.recovery === undefined ? 0 : 1e-6 * this.currentScaleAmps * this.recovery.transitSeconds;
    this.chargeScaleCoulombs = this.currentScaleAmps * Math.max(this.recovery?.lifetimeSeconds ?? 0, this.forward?.peakSeconds ?? 0, 1e-15);
    this.stepSeconds = this.chooseStep();
    this.mode = this.initialMode();
    this.derivative = (t, x, dx) => this.evaluate(t, x, this.stageAux, dx);
  }

  /** The fixed step: a fraction of the fastest ring and of the shortest time constant present. */
  private chooseStep(): number {
    const s = this.settings;
    const cMin = this.capacitance.minimumNodeFarads;
    const rings = [2 * Math.PI * Math.sqrt(this.llk * cMin)];
    const constants: number[] = [];
    if (this.hasClamp && this.loopHenries > 0) {
      const ls = this.loopHenries;
      rings.push(2 * Math.PI * Math.sqrt(((this.llk * ls) / (this.llk + ls)) * cMin));
      if (this.cjState > 0) rings.push(2 * Math.PI * Math.sqrt((ls * this.cjState * cMin) / (this.cjState + cMin)));
    }
    if (this.hasDamper) constants.push(this.rs * this.cs, (this.rs * cMin * this.cs) / (cMin + this.cs));
    if (this.recovery !== undefined) {
      const { lifetimeSeconds: tau, transitSeconds: tm } = this.recovery;
      constants.push(tau, (tau * tm) / (tau + tm));
    }
    if (this.forward !== undefined) constants.push(this.forward.peakSeconds, this.loopHenries / this.forward.resistanceOhms);
    if (this.tf > 0) constants.push(this.tf);
    const candidates = [
      ...rings.map((p) => p / s.stepsPerRing),
      ...constants.map((c) => c / s.stepsPerTimeConstant),
      this.periodSeconds / s.minStepsPerPeriod,
    ];
    return Math.min(...candidates);
  }

  private initialMode(): DiscreteState {
    return {
      phase: 'off', outputDiodeOn: false, drain: 'free', clampDiode: 'blocking',
      segment: this.capacitance.segmentOf(this.vin), tripSeconds: 0, openSeconds: 0, fallStartAmps: 0,
    };
  }

  /** Hand-formula clamp voltage VR/2 + √(VR²/4 + ½·Rc·Llk·I²·f) (Choi, AN-4147, from memory) as a start. */
  initialState(): { x: Float64Array; mode: DiscreteState } {
    const x = new Float64Array(STATE_SIZE);
    x[VD] = this.vin;
    if (this.hasClamp) {
      const i = this.currentScaleAmps;
      const vc = this.vr / 2 + Math.sqrt((this.vr * this.vr) / 4 + 0.5 * this.rc * this.llk * i * i / this.periodSeconds);
      x[VC] = vc;
      if (this.cjState > 0) x[VJ] = -vc;
    }
    if (this.hasDamper) x[VS] = this.vin;
    return { x, mode: this.initialMode() };
  }

  /** Stored energy ½Llk·ip² + ½Lm·im² + Enode(vd) + ½Cc·vc² + ½Cs·vs² + ½Ls·icl² + ½Cj·vj², J. */
  storedEnergy(x: Float64Array): number {
    let e = 0.5 * this.llk * x[IP]! ** 2 + 0.5 * this.lm * x[IM]! ** 2 + this.capacitance.nodeEnergy(x[VD]!);
    if (this.hasClamp) e += 0.5 * this.cc * x[VC]! ** 2 + 0.5 * this.loopHenries * x[ICL]! ** 2 + 0.5 * this.cjState * x[VJ]! ** 2;
    if (this.hasDamper) e += 0.5 * this.cs * x[VS]! ** 2;
    return e;
  }

  /** State components that are free at a period start (the rest are algebraic in that discrete state). */
  shootingComponents(): number[] {
    const c = [IP, IM];
    if (this.hasClamp) c.push(VC);
    if (this.hasDamper) c.push(VS);
    if (this.hasClamp && this.loopHenries > 0) c.push(ICL);
    if (this.cjState > 0) c.push(VJ);
    if (this.recovery !== undefined || this.forward !== undefined) c.push(QM);
    return c;
  }

  scaleOf(component: number): number {
    if (component === IP || component === IM || component === ICL) return this.currentScaleAmps;
    if (component === QM) return this.chargeScaleCoulombs;
    return this.voltageScaleVolts;
  }

  /** Sets the components that the discrete state fixes (im = ip with the output diode off, …). */
  projectStart(x: Float64Array, mode: DiscreteState): void {
    if (!mode.outputDiodeOn) x[IM] = x[IP]!;
    if (!this.hasClamp) return;
    if (mode.clampDiode === 'blocking') x[QM] = 0;
    if (this.loopHenries > 0 && this.cjState === 0) {
      if (mode.clampDiode === 'blocking') x[ICL] = 0;
      if (mode.clampDiode === 'recovering' && this.recovery !== undefined) x[ICL] = recoveringCurrent(x[QM]!, this.recovery);
    }
    if (this.cjState > 0 && mode.clampDiode === 'conducting') x[VJ] = this.vf;
    if (mode.drain === 'clamped') x[VD] = this.vin + x[VC]! + this.vf;
  }

  // ---------------------------------------------------------------------------------------------
  // The equations.

  private evaluate(t: number, x: Float64Array, a: NodeAux, dx: Float64Array): void {
    this.counters.evaluations++;
    const m = this.mode;
    const ip = x[IP]!, im = x[IM]!, vc = x[VC]!, vs = x[VS]!, qM = x[QM]!, vj = x[VJ]!;
    let icl = x[ICL]!;
    const ich = m.phase === 'fall' ? m.fallStartAmps * Math.max(0, 1 - (t - m.openSeconds) / this.tf) : 0;
    const rec = this.recovery;
    const ls = this.loopHenries;

    // Clamp-branch current where it does not depend on vd.
    let ibc = 0;
    if (this.hasClamp) {
      if (ls > 0) {
        if (m.clampDiode === 'recovering' && this.cjState === 0 && rec !== undefined) icl = recoveringCurrent(qM, rec);
        else if (m.clampDiode === 'blocking' && this.cjState === 0) icl = 0;
        ibc = icl;
      } else if (m.clampDiode === 'recovering' && rec !== undefined) {
        ibc = recoveringCurrent(qM, rec);
      }
    }

    let vd: number;
    switch (m.drain) {
      case 'switch':
        // Nodal equation of the closed switch: vd/Ron = ip − (vd − vs)/Rs − ibc. The clamp branch
        // term is ours (the spec's vd = Rpar·(ip + vs/Rs) omits it; it is 0 whenever that branch is idle).
        vd = this.hasDamper ? this.rpar * (ip - ibc + vs / this.rs) : this.ron * (ip - ibc);
        break;
      case 'free': vd = x[VD]!; break;
      case 'body': vd = -this.vbody; break;
      case 'avalanche': vd = this.vav ?? 0; break;
      case 'clamped': vd = this.vin + vc + this.vf; break;
    }
    const id = this.hasDamper ? (vd - vs) / this.rs : 0;

    let vcDot = 0;
    if (m.drain === 'avalanche' && this.hasClamp && ls === 0 && m.clampDiode === 'conducting') {
      // Avalanche and an Ls = 0 clamp together: vd = Vav holds vc at Vav − Vin − Vf, so the diode
      // carries just vc/Rc and the avalanche takes the rest (our reading, see reference-run.ts).
      ibc = vc / this.rc;
    } else if (m.drain === 'clamped') {
      // (Cc + Cnode)·dvc/dt = ip − id − ich − vc/Rc; icd = ip − id − ich − Cnode·dvc/dt.
      const cn = this.capacitance.nodeOnSegment(m.segment, vd);
      vcDot = (ip - id - ich - vc / this.rc) / (this.cc + cn);
      ibc = ip - id - ich - cn * vcDot;
    }
    const iN = ip - id - ich - ibc;

    let vdDot = 0;
    a.ib = 0; a.iav = 0; a.isw = 0;
    switch (m.drain) {
      case 'free': vdDot = iN / this.capacitance.nodeOnSegment(m.segment, vd); break;
      case 'body': a.ib = -iN; break;
      case 'avalanche': a.iav = iN; break;
      case 'switch': a.isw = iN; break;
      case 'clamped': vdDot = vcDot; break;
    }

    // Clamp diode.
    let iD = 0, vdiode = 0, dicl = 0, dvj = 0, dqM = 0, iDDot = Number.NaN;
    if (this.hasClamp) {
      const reverse = vd - this.vin - vc - (ls > 0 ? this.loopOhms * icl : 0);
      if (ls > 0) {
        switch (m.clampDiode) {
          case 'conducting': {
            iD = icl;
            const vfr = this.forward === undefined ? 0 : forwardRecoveryVolts(iD, qM, this.forward);
            vdiode = this.vf + vfr;
            dicl = (reverse - vdiode) / ls;
            iDDot = dicl;
            dqM = rec === undefined && this.forward === undefined ? 0 : conductingChargeRate(iD, qM, rec);
            break;
          }
          case 'blocking':
            if (this.cjState > 0) {
              dvj = icl / this.cjState;
              dicl = (reverse - vj) / ls;
              vdiode = vj;
            } else {
              vdiode = reverse;
            }
            break;
          case 'recovering':
            if (rec !== undefined) {
              iD = recoveringCurrent(qM, rec);
              dqM = recoveringChargeRate(qM, rec);
              if (this.cjState > 0) {
                dvj = (icl - iD) / this.cjState;
                dicl = (reverse - vj) / ls;
                vdiode = vj;
              } else {
                dicl = -dqM / rec.transitSeconds;
                vdiode = reverse - ls * dicl;
              }
            }
            break;
        }
        vcDot = (ibc - vc / this.rc) / this.cc;
      } else {
        switch (m.clampDiode) {
          case 'conducting':
            iD = ibc;
            vdiode = this.vf;
            dqM = rec === undefined ? 0 : conductingChargeRate(iD, qM, rec);
            break;
          case 'blocking': vdiode = reverse; break;
          case 'recovering':
            iD = ibc;
            vdiode = reverse;
            if (rec !== undefined) dqM = recoveringChargeRate(qM, rec);
            break;
        }
        if (m.drain !== 'clamped') vcDot = (ibc - vc / this.rc) / this.cc;
      }
    }

    // Transformer: output diode on clamps the magnetizing voltage to −VR.
    const vdrive = this.vin - vd - this.rp * ip;
    let dip: number, dim: number, vm: number, isec: number;
    if (m.outputDiodeOn) {
      dim = -this.vr / this.lm;
      dip = (vdrive + this.vr) / this.llk;
      vm = -this.vr;
      isec = im - ip;
    } else {
      dip = vdrive / (this.llk + this.lm);
      dim = dip;
      vm = this.lm * dip;
      isec = 0;
    }

    if (m.drain === 'clamped') {
      // iD = (Cc·u + Cnode·vc/Rc)/(Cc + Cnode) with u = ip − id − ich; its time derivative lets the
      // recorder locate the diode's peak current inside a step (it peaks after the start with a damper).
      const cn = this.capacitance.nodeOnSegment(m.segment, vd);
      const cnDot = this.capacitance.cossSlopeOnSegment(m.segment, vd) * vcDot;
      const u = ip - id - ich;
      const ichDot = m.phase === 'fall' && ich > 0 ? -m.fallStartAmps / this.tf : 0;
      const idDot = this.hasDamper ? (vcDot - id / this.cs) / this.rs : 0;
      const uDot = dip - idDot - ichDot;
      const sum = this.cc + cn;
      iDDot = (this.cc * uDot + cnDot * vc / this.rc + cn * vcDot / this.rc) / sum - ((this.cc * u + cn * vc / this.rc) * cnDot) / (sum * sum);
    }

    dx[IP] = dip;
    dx[IM] = dim;
    dx[VD] = vdDot;
    dx[VC] = vcDot;
    dx[VS] = this.hasDamper ? id / this.cs : 0;
    dx[ICL] = dicl;
    dx[VJ] = dvj;
    dx[QM] = dqM;
    dx[E_SUPPLY] = this.vin * (ip - ibc);
    dx[E_LOAD] = this.loadVolts * isec;
    dx[E_OUTPUT_DIODE] = this.outputDiodeVolts * isec;
    dx[E_PRIMARY_R] = this.rp * ip * ip;
    dx[E_CHANNEL] = m.drain === 'switch' ? vd * a.isw : 0;
    dx[E_TURN_OFF] = vd * ich;
    dx[E_CLAMP_R] = this.hasClamp ? (vc * vc) / this.rc : 0;
    dx[E_CLAMP_DIODE] = vdiode * iD;
    dx[E_BODY] = this.vbody * a.ib;
    dx[E_AVALANCHE] = (this.vav ?? 0) * a.iav;
    dx[E_DAMPER_R] = id * (vd - vs);
    dx[Q_REVERSE] = iD < 0 ? -iD : 0;
    dx[VC_INTEGRAL] = vc;
    dx[E_LOOP_R] = ls > 0 ? this.loopOhms * icl * icl : 0;

    a.t = t; a.ip = ip; a.im = im; a.vd = vd; a.vdDot = vdDot; a.vc = vc; a.vcDot = vcDot; a.iN = iN; a.id = id;
    a.ich = ich; a.ibc = ibc; a.iD = iD; a.iDDot = iDDot; a.vdiode = vdiode; a.vm = vm; a.isec = isec;
  }

  /** Sets the algebraic components of x after a step or a transition. */
  private projectAlgebraic(x: Float64Array, a: NodeAux): void {
    if (this.mode.drain !== 'free') x[VD] = a.vd;
    if (this.hasClamp && this.loopHenries > 0 && this.cjState === 0 && this.mode.clampDiode !== 'conducting') x[ICL] = a.ibc;
  }

  // ---------------------------------------------------------------------------------------------
  // Events.

  private buildEvents(): void {
    const m = this.mode;
    const list: ActiveEvent[] = [];
    const vScale = 1e-9 * this.voltageScaleVolts, iScale = 1e-9 * this.currentScaleAmps;
    const add = (kind: number, threshold: number, marker = false): void => { list.push({ kind, threshold, marker }); };
    if (m.phase === 'on' && this.peakAmps !== undefined) add(EV_PEAK, iScale);
    add(m.outputDiodeOn ? EV_OUT_OFF : EV_OUT_ON, m.outputDiodeOn ? iScale : vScale);
    const tracksCurve = this.capacitance.hasKinks && (m.drain === 'free' || m.drain === 'clamped');
    if (tracksCurve) {
      // Segment s lies between breakpoints s−1 and s (see DrainCapacitance).
      if (m.segment < this.capacitance.lastSegment) add(EV_SEG_UP, vScale);
      if (m.segment >= 1) add(EV_SEG_DOWN, vScale);
    }
    const ls0 = this.hasClamp && this.loopHenries === 0;
    switch (m.drain) {
      case 'free':
        add(EV_BODY_ON, vScale);
        if (this.vav !== undefined) add(EV_AVAL_ON, vScale);
        if (ls0 && m.clampDiode !== 'conducting') add(EV_CLAMP0_ON, vScale);
        break;
      case 'body': add(EV_BODY_OFF, iScale); break;
      case 'avalanche':
        add(EV_AVAL_OFF, iScale);
        if (ls0 && m.clampDiode !== 'conducting') add(EV_AVAL_CLAMP_ON, vScale);
        break;
      case 'clamped':
        add(this.recovery === undefined ? EV_CLAMP0_OFF : EV_CLAMP0_RECOVER, iScale);
        if (this.vav !== undefined) add(EV_CLAMPED_AVAL, vScale);
        break;
      case 'switch': break;
    }
    if (this.hasClamp) {
      if (this.loopHenries > 0) {
        switch (m.clampDiode) {
          case 'conducting': add(this.recovery === undefined ? EV_CL_STOP : EV_CL_RECOVER, iScale); break;
          case 'blocking': add(this.cjState > 0 ? EV_CL_START_CJ : EV_CL_START, vScale); break;
          case 'recovering': add(this.cjState > 0 ? EV_CL_START_CJ : EV_CL_RESTART, vScale); break;
        }
      }
      if (m.clampDiode === 'recovering') add(EV_REC_END, 1e-9 * this.recoveredCharge);
      if (m.clampDiode === 'conducting' && this.recovery !== undefined) add(EV_REVERSE_ZERO, 0, true);
    }
    this.events = list;
  }

  private eventValue(kind: number, x: Float64Array, a: NodeAux): number {
    const tm = this.recovery?.transitSeconds ?? 1;
    switch (kind) {
      case EV_PEAK: return x[IP]! - (this.peakAmps ?? Number.POSITIVE_INFINITY);
      case EV_OUT_ON: return -this.vr - a.vm;
      case EV_OUT_OFF: return x[IP]! - x[IM]!;
      case EV_BODY_ON: return -this.vbody - a.vd;
      case EV_BODY_OFF: return a.iN;
      case EV_AVAL_ON: return a.vd - (this.vav ?? Number.POSITIVE_INFINITY);
      case EV_AVAL_OFF: return -a.iN;
      case EV_SEG_UP: return a.vd - this.capacitance.breakpointVolts[this.mode.segment]!;
      case EV_SEG_DOWN: return this.capacitance.breakpointVolts[this.mode.segment - 1]! - a.vd;
      case EV_CLAMP0_ON: return a.vd - this.vin - x[VC]! - this.vf;
      case EV_CLAMP0_OFF: return -a.iD;
      case EV_CLAMP0_RECOVER: return -(a.iD + x[QM]! / tm);
      case EV_CLAMPED_AVAL: return this.vin + x[VC]! + this.vf - (this.vav ?? Number.POSITIVE_INFINITY);
      case EV_CL_STOP: return -x[ICL]!;
      case EV_CL_RECOVER: return -(x[ICL]! + x[QM]! / tm);
      case EV_CL_START_CJ: return x[VJ]! - this.vf;
      case EV_CL_START: return a.vd - this.vin - x[VC]! - this.vf;
      case EV_CL_RESTART: return a.vdiode - this.vf;
      case EV_REC_END: return this.recoveredCharge - x[QM]!;
      case EV_REVERSE_ZERO: return -a.iD;
      case EV_AVAL_CLAMP_ON: return (this.vav ?? 0) - this.vin - x[VC]! - this.vf;
      default: throw new Error(`unknown event ${kind}`);
    }
  }

  /** The discrete transition of an event; x is the state at the event instant. */
  private applyEvent(kind: number, t: number, x: Float64Array, a: NodeAux): void {
    const m = this.mode;
    this.counters.events++;
    switch (kind) {
      case EV_PEAK:
        if (this.td > 0) { m.phase = 'delay'; m.tripSeconds = t; } else this.open(t, x);
        break;
      case EV_OUT_ON: m.outputDiodeOn = true; break;
      case EV_OUT_OFF: m.outputDiodeOn = false; x[IM] = x[IP]!; break;
      case EV_BODY_ON: m.drain = 'body'; break;
      case EV_BODY_OFF: m.drain = 'free'; m.segment = this.capacitance.segmentOf(a.vd); x[VD] = a.vd; break;
      case EV_AVAL_OFF:
        // An Ls = 0 clamp that conducted beside the avalanche goes on alone, at the same vd.
        m.drain = this.hasClamp && this.loopHenries === 0 && m.clampDiode === 'conducting' ? 'clamped' : 'free';
        m.segment = this.capacitance.segmentOf(a.vd);
        x[VD] = a.vd;
        break;
      case EV_AVAL_ON: m.drain = 'avalanche'; break;
      case EV_AVAL_CLAMP_ON: m.clampDiode = 'conducting'; break;
      case EV_SEG_UP: m.segment++; break;
      case EV_SEG_DOWN: m.segment--; break;
      case EV_CLAMP0_ON: m.drain = 'clamped'; m.clampDiode = 'conducting'; break;
      case EV_CLAMP0_OFF: m.drain = 'free'; m.clampDiode = 'blocking'; x[QM] = 0; x[VD] = a.vd; m.segment = this.capacitance.segmentOf(a.vd); break;
      case EV_CLAMP0_RECOVER: m.drain = 'free'; m.clampDiode = 'recovering'; x[VD] = a.vd; m.segment = this.capacitance.segmentOf(a.vd); break;
      case EV_CLAMPED_AVAL: m.drain = 'avalanche'; break;
      case EV_CL_STOP:
        m.clampDiode = 'blocking';
        x[QM] = 0;
        if (this.cjState > 0) x[VJ] = this.vf; else x[ICL] = 0;
        break;
      case EV_CL_RECOVER: m.clampDiode = 'recovering'; break;
      case EV_CL_START_CJ: m.clampDiode = 'conducting'; x[VJ] = this.vf; break;
      case EV_CL_START: m.clampDiode = 'conducting'; x[ICL] = 0; break;
      case EV_CL_RESTART: m.clampDiode = 'conducting'; break;
      case EV_REC_END:
        m.clampDiode = 'blocking';
        x[QM] = 0;
        if (this.loopHenries > 0 && this.cjState === 0) x[ICL] = 0;
        break;
      case EV_REVERSE_ZERO: break;
      default: throw new Error(`unknown event ${kind}`);
    }
  }

  private open(t: number, x: Float64Array): void {
    const m = this.mode;
    const a = this.at;
    this.evaluate(t, x, a, this.kScratch);
    this.outcome.turnOffAmps = x[IP]!;
    this.outcome.openSeconds = t;
    this.outcome.onStateNodeEnergyJoules = this.capacitance.nodeEnergy(a.vd) - this.capacitance.nodeEnergy(this.vdOnStart);
    m.fallStartAmps = a.isw;
    m.openSeconds = t;
    m.phase = this.tf > 0 ? 'fall' : 'off';
    m.drain = 'free';
    x[VD] = a.vd;
    m.segment = this.capacitance.segmentOf(a.vd);
    this.recorder?.event('switch-opens', a);
  }

  private nextBoundary(): { time: number; kind: 'open' | 'fall-end' | 'period-end' } {
    const m = this.mode;
    const T = this.periodSeconds;
    const openAt = this.openDutyFraction * T;
    if (m.phase === 'on') return openAt < T ? { time: openAt, kind: 'open' } : { time: T, kind: 'period-end' };
    if (m.phase === 'delay') return { time: Math.min(m.tripSeconds + this.td, openAt), kind: 'open' };
    if (m.phase === 'fall' && m.openSeconds + this.tf < T) return { time: m.openSeconds + this.tf, kind: 'fall-end' };
    return { time: T, kind: 'period-end' };
  }

  /** Applies every event whose condition already holds (chained transitions at one instant), then primes the step. */
  private restart(t: number): void {
    const x = this.x;
    for (let guard = 0; ; guard++) {
      if (guard > 64) throw new Error(`reference: more than 64 chained transitions at t = ${t}`);
      this.buildEvents();
      this.evaluate(t, x, this.a0, this.k1);
      this.projectAlgebraic(x, this.a0);
      const firing = this.events.find((e) => !e.marker && this.eventValue(e.kind, x, this.a0) > e.threshold);
      if (firing === undefined) break;
      this.recorder?.event(EVENT_NAMES[firing.kind] ?? 'event', this.a0);
      this.applyEvent(firing.kind, t, x, this.a0);
    }
    this.gStart = this.events.map((e) => this.eventValue(e.kind, x, this.a0));
    this.recorder?.point(this.a0);
  }

  /** One period from the state at 0⁻ (just before the switch turns on) to T⁻. */
  runPeriod(xStart: Float64Array, modeStart: DiscreteState, recorder?: PeriodRecorder): { x: Float64Array; mode: DiscreteState; outcome: PeriodOutcome } {
    this.counters.periods++;
    this.recorder = recorder;
    const x = this.x;
    x.set(xStart);
    for (let i = PHYSICAL_SIZE; i < STATE_SIZE; i++) x[i] = 0;
    this.mode = { ...modeStart };
    this.outcome = emptyOutcome();
    this.outcome.storedStartJoules = this.storedEnergy(x);
    this.turnOn(x);
    this.integrate();
    this.outcome.storedEndJoules = this.storedEnergy(x);
    this.recorder = undefined;
    return { x: Float64Array.from(x), mode: { ...this.mode }, outcome: { ...this.outcome } };
  }

  private turnOn(x: Float64Array): void {
    const m = this.mode;
    const vdBefore = x[VD]!;
    m.phase = 'on';
    m.drain = 'switch';
    if (this.hasClamp && this.loopHenries === 0 && m.clampDiode === 'conducting') {
      // A clamp still conducting at turn-on (not seen in practice) is cut off; with stored charge it recovers.
      const recovers = this.recovery !== undefined && x[QM]! > this.recoveredCharge;
      m.clampDiode = recovers ? 'recovering' : 'blocking';
      if (!recovers) x[QM] = 0;
    }
    this.evaluate(0, x, this.at, this.kScratch);
    x[VD] = this.at.vd;
    this.vdOnStart = this.at.vd;
    this.outcome.turnOnLossJoules = this.capacitance.nodeEnergy(vdBefore) - this.capacitance.nodeEnergy(this.at.vd);
    this.recorder?.event('switch-closes', this.at);
  }

  private integrate(): void {
    const x = this.x, x1 = this.x1, xe = this.xe;
    const tolerance = this.settings.eventTimeTolerance * this.periodSeconds;
    let t = 0;
    this.restart(t);
    for (;;) {
      const boundary = this.nextBoundary();
      if (boundary.time <= t) {
        if (boundary.kind === 'period-end') break;
        this.applyBoundary(boundary.kind, t);
        this.restart(t);
        continue;
      }
      const span = boundary.time - t;
      const stepCount = Math.max(1, Math.ceil((span / this.stepSeconds) * (1 - 1e-9)));
      const h = span / stepCount;
      const lands = stepCount === 1;
      this.rk.step(this.derivative, t, x, this.k1, h, x1);
      this.evaluate(t + h, x1, this.a1, this.k1End);
      this.counters.steps++;

      // Earliest event in the step.
      let bestTheta = 2, best = -1;
      for (let i = 0; i < this.events.length; i++) {
        const e = this.events[i]!;
        const g0 = this.gStart[i]!;
        const g1 = this.eventValue(e.kind, x1, this.a1);
        this.gEnd[i] = g1;
        let theta: number;
        if (e.marker) {
          if (!((g0 < 0 && g1 > 0) || (g0 > 0 && g1 < 0))) continue;
          const sign = g0 < 0 ? 1 : -1;
          theta = locateRisingRoot((th) => sign * this.valueAt(e.kind, t, h, th), sign * g0, sign * g1, tolerance / h);
        } else {
          if (!(g1 > 0 && (g0 < 0 || g1 > g0))) continue;
          theta = g0 >= 0 ? 0 : locateRisingRoot((th) => this.valueAt(e.kind, t, h, th), g0, g1, tolerance / h);
        }
        if (theta < bestTheta) { bestTheta = theta; best = i; }
      }

      if (best >= 0) {
        const e = this.events[best]!;
        const hPiece = bestTheta * h;
        if (hPiece > 0) {
          this.rk.step(this.derivative, t, x, this.k1, hPiece, xe);
          this.evaluate(t + hPiece, xe, this.ae, this.kScratch);
          this.recordPiece(t, hPiece, this.ae);
        } else {
          xe.set(x);
          this.ae.copyFrom(this.a0);
        }
        t += hPiece;
        x.set(xe);
        this.projectAlgebraic(x, this.ae);
        this.recorder?.point(this.ae);
        this.recorder?.event(EVENT_NAMES[e.kind] ?? 'event', this.ae);
        this.applyEvent(e.kind, t, x, this.ae);
        this.restart(t);
        continue;
      }

      this.recordPiece(t, h, this.a1);
      t = lands ? boundary.time : t + h;
      x.set(x1);
      const swap = this.k1;
      this.k1 = this.k1End;
      this.k1End = swap;
      this.a0.copyFrom(this.a1);
      this.projectAlgebraic(x, this.a0);
      const g = this.gStart;
      this.gStart = this.gEnd;
      this.gEnd = g;
      this.recorder?.point(this.a0);
      if (lands) {
        if (boundary.kind === 'period-end') break;
        this.applyBoundary(boundary.kind, t);
        this.restart(t);
      }
    }
  }

  private applyBoundary(kind: 'open' | 'fall-end' | 'period-end', t: number): void {
    if (kind === 'open') this.open(t, this.x);
    else if (kind === 'fall-end') { this.mode.phase = 'off'; this.recorder?.event('channel-current-ends', this.a0); }
  }

  /** g of an event at t + θ·h, re-integrated from the step's start. */
  private valueAt(kind: number, t: number, h: number, theta: number): number {
    this.rk.step(this.derivative, t, this.x, this.k1, theta * h, this.xt);
    this.evaluate(t + theta * h, this.xt, this.at, this.kScratch);
    return this.eventValue(kind, this.xt, this.at);
  }

  private recordPiece(t: number, h: number, end: NodeAux): void {
    const recorder = this.recorder;
    if (recorder === undefined) return;
    recorder.piece(this.a0, end, (theta, out) => {
      this.rk.step(this.derivative, t, this.x, this.k1, theta * h, this.xt);
      this.evaluate(t + theta * h, this.xt, out, this.kScratch);
    });
  }
}

function emptyOutcome(): PeriodOutcome {
  return { turnOnLossJoules: 0, onStateNodeEnergyJoules: 0, turnOffAmps: Number.NaN, openSeconds: Number.NaN, storedStartJoules: 0, storedEndJoules: 0 };
}
