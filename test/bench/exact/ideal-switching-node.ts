// The benchmark's exact solver, part 1: the switching node with constant, ideal parts written as
// one affine field per mode, dx/dt = Â·x̂ with x̂ = [ip, im, vd, vc, vs, 1].
//
// Written from the README's "The model, its assumptions and limits" for what `withIdealParts`
// leaves: a constant node capacitance, an ideal clamp diode with its drop and no loop, the body
// diode, no avalanche, delay or current fall. It shares only the scenario loader with flyclamp
// (the issue allows that much); nothing of src/model, src/solver or src/simulation is imported.
// A drain pinned by a device (closed switch, body diode, conducting clamp) keeps vd in the state,
// moving with the derivative of its pinning expression, so every mode has the same five states.

import type { Scenario } from '../../../src/circuit/scenario.js';

export const IP = 0, IM = 1, VD = 2, VC = 3, VS = 4, ONE = 5;
export const STATE_SIZE = 5;
export const AUGMENTED_SIZE = 6;

/** An affine form c·x̂: five coefficients and a constant. */
export type Affine = Float64Array;

const unit = (i: number, scale = 1): Affine => { const a = new Float64Array(AUGMENTED_SIZE); a[i] = scale; return a; };
const constant = (c: number): Affine => unit(ONE, c);
const zero = (): Affine => new Float64Array(AUGMENTED_SIZE);
function sum(...terms: Array<[number, Affine]>): Affine {
  const out = zero();
  for (const [k, a] of terms) for (let i = 0; i < AUGMENTED_SIZE; i++) out[i]! += k * a[i]!;
  return out;
}

export type Drain = 'switch' | 'free' | 'body' | 'clamped';

export interface Mode {
  /** The switch is closed (from turn-on to the opening). */
  readonly on: boolean;
  readonly outputDiodeOn: boolean;
  readonly drain: Drain;
}

export const modeKey = (m: Mode): string => `${m.on ? 'on' : 'off'}/${m.outputDiodeOn ? 'out' : 'noout'}/${m.drain}`;

/** One mode's field and the affine quantities its events and metrics need. */
export interface ModeField {
  readonly mode: Mode;
  /** Row-major 6×6, the last row zero. */
  readonly matrix: Float64Array;
  readonly drainVolts: Affine;
  readonly clampDiodeAmps: Affine;
  readonly supplyAmps: Affine;
  readonly secondaryAmps: Affine;
  readonly damperAmps: Affine;
  /** Current into the drain node from the rest of the circuit (the body diode's and the switch's event quantity). */
  readonly nodeAmps: Affine;
  /** Magnetizing-branch voltage (the output diode's turn-on quantity). */
  readonly magnetizingVolts: Affine;
}

export interface IdealCircuit {
  readonly name: string;
  readonly supplyVolts: number;
  readonly magnetizingHenries: number;
  readonly leakageHenries: number;
  readonly primaryOhms: number;
  /** VR = n·(Vo + Vf,out). */
  readonly reflectedVolts: number;
  /** n·Vo: the load's share of VR. */
  readonly loadVolts: number;
  readonly nodeFarads: number;
  readonly onOhms: number;
  readonly bodyDiodeVolts: number;
  readonly periodSeconds: number;
  /** Peak-current control: the comparator level; undefined under fixed duty. */
  readonly peakAmps: number | undefined;
  /** The opening instant as a fraction of the period: the fixed duty, or the maximum duty. */
  readonly openFraction: number;
  readonly clamp: { readonly ohms: number; readonly farads: number; readonly dropVolts: number } | undefined;
  readonly damper: { readonly ohms: number; readonly farads: number } | undefined;
}

export type Variant = 'bare' | 'clamp' | 'damped';

/** The circuit of one variant; refuses what this solver does not model (real parts). */
export function idealCircuit(s: Scenario, variant: Variant): IdealCircuit {
  const refuse = (what: string): never => { throw new Error(`exact solver: ${s.name}: ${what} is not a constant, ideal part`); };
  if (typeof s.switch.drainCapacitance !== 'number') refuse('a Coss curve');
  if (s.switch.avalancheVoltage !== undefined) refuse('avalanche');
  if (s.switch.turnOffDelay > 0 || s.switch.currentFallTime > 0) refuse('a turn-off delay or current fall');
  const c = variant === 'bare' ? undefined : s.clamp;
  if (variant !== 'bare' && c === undefined) refuse('a missing clamp');
  if (c && (c.loopInductance > 0 || (c.diodeCapacitance ?? 0) > 0 || c.diodeRecoveryTime !== undefined || c.diodeForwardRecoveryVoltage !== undefined)) {
    refuse('a clamp diode with a loop, junction capacitance or recovery');
  }
  const d = variant === 'damped' ? s.damper : undefined;
  if (variant === 'damped' && d === undefined) refuse('a missing damper');
  const ctl = s.switch.control;
  return {
    name: s.name,
    supplyVolts: s.supply.voltage,
    magnetizingHenries: s.transformer.magnetizingInductance,
    leakageHenries: s.transformer.leakageInductance,
    primaryOhms: s.transformer.primaryResistance,
    reflectedVolts: s.transformer.turnsRatio * (s.output.voltage + s.output.diodeDrop),
    loadVolts: s.transformer.turnsRatio * s.output.voltage,
    nodeFarads: (s.switch.drainCapacitance as number) + s.transformer.windingCapacitance,
    onOhms: s.switch.onResistance,
    bodyDiodeVolts: s.switch.bodyDiodeDrop,
    periodSeconds: 1 / s.switch.frequency,
    peakAmps: ctl.kind === 'peak-current' ? ctl.peakCurrent : undefined,
    openFraction: ctl.kind === 'peak-current' ? ctl.maxDutyCycle : ctl.dutyCycle,
    clamp: c ? { ohms: c.resistance, farads: c.capacitance, dropVolts: c.diodeDrop } : undefined,
    damper: d ? { ohms: d.resistance, farads: d.capacitance } : undefined,
  };
}

/** The affine field of one mode, assembled from the node and branch equations. */
export function modeField(k: IdealCircuit, mode: Mode): ModeField {
  const ip = unit(IP), im = unit(IM), vc = unit(VC), vs = unit(VS);
  const cn = k.nodeFarads;
  const rs = k.damper?.ohms ?? 1;

  // The drain: a state while free, pinned otherwise.
  let vd: Affine;
  switch (mode.drain) {
    case 'free': vd = unit(VD); break;
    case 'body': vd = constant(-k.bodyDiodeVolts); break;
    case 'clamped': vd = sum([1, vc], [1, constant(k.supplyVolts + k.clamp!.dropVolts)]); break;
    case 'switch': {
      // vd/Ron = ip − (vd − vs)/Rs: the closed switch in parallel with the damper branch.
      if (k.damper) {
        const parallel = (k.onOhms * rs) / (k.onOhms + rs);
        vd = sum([parallel, ip], [parallel / rs, vs]);
      } else {
        vd = sum([k.onOhms, ip]);
      }
      break;
    }
  }
  const id = k.damper ? sum([1 / rs, vd], [-1 / rs, vs]) : zero();
  const dvs = k.damper ? sum([1 / k.damper.farads, id]) : zero();

  // Clamp: with the diode conducting, Cc and the node capacitance charge together.
  let dvc = zero(), iD = zero();
  if (k.clamp) {
    const rc = k.clamp.ohms, cc = k.clamp.farads;
    if (mode.drain === 'clamped') {
      dvc = sum([1 / (cc + cn), ip], [-1 / (cc + cn), id], [-1 / (rc * (cc + cn)), vc]);
      iD = sum([1, ip], [-1, id], [-cn, dvc]);
    } else {
      dvc = sum([-1 / (rc * cc), vc]);
    }
  }
  const nodeAmps = sum([1, ip], [-1, id], [-1, iD]);

  // Transformer: the conducting output diode holds the magnetizing voltage at −VR.
  const vdrive = sum([1, constant(k.supplyVolts)], [-1, vd], [-k.primaryOhms, ip]);
  let dip: Affine, dim: Affine, vm: Affine, isec: Affine;
  if (mode.outputDiodeOn) {
    dip = sum([1 / k.leakageHenries, vdrive], [k.reflectedVolts / k.leakageHenries, constant(1)]);
    dim = constant(-k.reflectedVolts / k.magnetizingHenries);
    vm = constant(-k.reflectedVolts);
    isec = sum([1, im], [-1, ip]);
  } else {
    const total = k.leakageHenries + k.magnetizingHenries;
    dip = sum([1 / total, vdrive]);
    dim = dip;
    vm = sum([k.magnetizingHenries, dip]);
    isec = zero();
  }

  let dvd: Affine;
  switch (mode.drain) {
    case 'free': dvd = sum([1 / cn, nodeAmps]); break;
    case 'body': dvd = zero(); break;
    case 'clamped': dvd = dvc; break;
    case 'switch': dvd = composeRate(vd, [dip, dim, zero(), dvc, dvs]); break;
  }

  const matrix = new Float64Array(AUGMENTED_SIZE * AUGMENTED_SIZE);
  [dip, dim, dvd, dvc, dvs].forEach((row, r) => matrix.set(row, r * AUGMENTED_SIZE));
  return {
    mode, matrix, drainVolts: vd, clampDiodeAmps: iD, supplyAmps: sum([1, ip], [-1, iD]), secondaryAmps: isec,
    damperAmps: id, nodeAmps, magnetizingVolts: vm,
  };
}

/** d/dt of an affine form of the state whose rows' rates are given (its vd coefficient must be 0). */
function composeRate(form: Affine, rates: Affine[]): Affine {
  const out = zero();
  for (let i = 0; i < STATE_SIZE; i++) {
    const k = form[i]!;
    if (k !== 0) for (let j = 0; j < AUGMENTED_SIZE; j++) out[j]! += k * rates[i]![j]!;
  }
  return out;
}

/** x̂⁺ = R·x̂⁻ at entering a mode: the drain takes its pinned value (the identity where it is free). */
export function entryReset(field: ModeField): Float64Array {
  const r = new Float64Array(AUGMENTED_SIZE * AUGMENTED_SIZE);
  for (let i = 0; i < AUGMENTED_SIZE; i++) r[i * AUGMENTED_SIZE + i] = 1;
  if (field.mode.drain !== 'free') r.set(field.drainVolts, VD * AUGMENTED_SIZE);
  if (!field.mode.outputDiodeOn) {
    // The magnetizing current is the primary current while the output diode blocks.
    r.fill(0, IM * AUGMENTED_SIZE, (IM + 1) * AUGMENTED_SIZE);
    r[IM * AUGMENTED_SIZE + IP] = 1;
  }
  return r;
}
