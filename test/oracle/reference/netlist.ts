// The reference model's own reader: a scenario object (parsed JSON as in scenarios/*.json, with the
// optional real-parts fields of the README's "The model, its assumptions and limits") becomes a plain netlist of SI numbers.
// It shares nothing with the engine's Scenario type on purpose (that type is being rewritten); only
// the SI-string parser is borrowed. Validation is minimal: a missing or malformed field throws with
// its path, because a reference that silently guessed would not be a reference.

import { parseSiNumber } from '../../../src/circuit/si-number.js';

export interface CossPoint { readonly volts: number; readonly farads: number }

export type SwitchControl =
  | { readonly kind: 'peak-current'; readonly peakAmps: number; readonly maxDuty: number }
  | { readonly kind: 'fixed-duty'; readonly duty: number };

export interface ForwardRecoveryData {
  /** Datasheet VFP: peak forward voltage during the current ramp, V. */
  readonly peakVolts: number;
  /** Datasheet tfr, s. */
  readonly recoverySeconds: number;
  /** Datasheet di/dt of that ramp, A/s. */
  readonly rampAmpsPerSecond: number;
}

export interface ClampNetlist {
  readonly ohms: number;
  readonly farads: number;
  readonly diodeDropVolts: number;
  readonly loopHenries: number;
  /** In series with the loop inductance; unused without one. */
  readonly loopOhms: number;
  readonly junctionFarads: number;
  /** Datasheet trr at IF = IR, s; undefined for an ideal diode. */
  readonly recoverySeconds: number | undefined;
  /** r = TM/τ. */
  readonly transitTimeRatio: number;
  readonly forwardRecovery: ForwardRecoveryData | undefined;
}

export interface DamperNetlist { readonly ohms: number; readonly farads: number }

export interface ReferenceNetlist {
  readonly name: string;
  readonly supplyVolts: number;
  readonly magnetizingHenries: number;
  readonly leakageHenries: number;
  readonly turnsRatio: number;
  readonly primaryOhms: number;
  readonly windingFarads: number;
  readonly outputVolts: number;
  readonly outputDiodeVolts: number;
  readonly frequencyHertz: number;
  readonly control: SwitchControl;
  /** Transistor Coss points, first at 0 V; a constant is one point. */
  readonly coss: readonly CossPoint[];
  readonly onOhms: number;
  readonly bodyDiodeVolts: number;
  readonly ratingVolts: number;
  readonly avalancheVolts: number | undefined;
  readonly turnOffDelaySeconds: number;
  readonly currentFallSeconds: number;
  readonly clamp: ClampNetlist | undefined;
  readonly damper: DamperNetlist | undefined;
}

type JsonObject = Readonly<Record<string, unknown>>;

function isObject(value: unknown): value is JsonObject {
  return typeof value === 'object' && value !== null && !Array.isArray(value);
}

function block(parent: JsonObject, key: string, path: string): JsonObject {
  const value = parent[key];
  if (!isObject(value)) throw new Error(`${path}${key}: expected an object`);
  return value;
}

function optionalBlock(parent: JsonObject, key: string, path: string): JsonObject | undefined {
  return parent[key] === undefined ? undefined : block(parent, key, path);
}

function siValue(raw: unknown, unit: string, path: string): number {
  const parsed = parseSiNumber(raw, unit);
  if (!parsed.ok) throw new Error(`${path}: expected ${parsed.expected}`);
  return parsed.value;
}

function required(parent: JsonObject, key: string, unit: string, path: string): number {
  if (parent[key] === undefined) throw new Error(`${path}${key}: missing`);
  return siValue(parent[key], unit, `${path}${key}`);
}

function optional(parent: JsonObject, key: string, unit: string, path: string): number | undefined {
  return parent[key] === undefined ? undefined : siValue(parent[key], unit, `${path}${key}`);
}

function withDefault(parent: JsonObject, key: string, unit: string, path: string, fallback: number): number {
  return optional(parent, key, unit, path) ?? fallback;
}

/** A number, or points [[V, C], …] with V0 = 0 < V1 < … and every C > 0. */
function readCoss(raw: unknown, path: string): CossPoint[] {
  if (!Array.isArray(raw)) {
    const farads = siValue(raw, 'F', path);
    if (!(farads > 0)) throw new Error(`${path}: must be greater than 0`);
    return [{ volts: 0, farads }];
  }
  const points = raw.map((pair: unknown, i): CossPoint => {
    if (!Array.isArray(pair) || pair.length !== 2) throw new Error(`${path}[${i}]: expected [V, C]`);
    return { volts: siValue(pair[0], 'V', `${path}[${i}][0]`), farads: siValue(pair[1], 'F', `${path}[${i}][1]`) };
  });
  if (points.length === 0) throw new Error(`${path}: no points`);
  points.forEach((p, i) => {
    if (!(p.farads > 0)) throw new Error(`${path}[${i}][1]: must be greater than 0`);
    const before = points[i - 1];
    if (i === 0 ? p.volts !== 0 : before !== undefined && !(p.volts > before.volts)) {
      throw new Error(`${path}[${i}][0]: the first point is at 0 V and voltages increase`);
    }
  });
  return points;
}

export function readScenario(json: unknown): ReferenceNetlist {
  if (!isObject(json)) throw new Error('scenario: expected an object');
  const supply = block(json, 'supply', '');
  const transformer = block(json, 'transformer', '');
  const output = block(json, 'output', '');
  const sw = block(json, 'switch', '');
  const clamp = optionalBlock(json, 'clamp', '');
  const damper = optionalBlock(json, 'damper', '');

  const peakAmps = optional(sw, 'peakCurrent', 'A', 'switch.');
  const duty = optional(sw, 'dutyCycle', '', 'switch.');
  if ((peakAmps === undefined) === (duty === undefined)) {
    throw new Error('switch: exactly one of peakCurrent and dutyCycle');
  }
  const control: SwitchControl = peakAmps !== undefined
    ? { kind: 'peak-current', peakAmps, maxDuty: withDefault(sw, 'maxDutyCycle', '', 'switch.', 0.9) }
    : { kind: 'fixed-duty', duty: duty ?? 0 };

  let clampNetlist: ClampNetlist | undefined;
  if (clamp !== undefined) {
    const p = 'clamp.';
    const peakVolts = optional(clamp, 'diodeForwardRecoveryVoltage', 'V', p);
    const recoverySeconds = optional(clamp, 'diodeForwardRecoveryTime', 's', p);
    if ((peakVolts === undefined) !== (recoverySeconds === undefined)) {
      throw new Error('clamp: diodeForwardRecoveryVoltage and diodeForwardRecoveryTime go together');
    }
    clampNetlist = {
      ohms: required(clamp, 'resistance', 'Ω', p),
      farads: required(clamp, 'capacitance', 'F', p),
      diodeDropVolts: withDefault(clamp, 'diodeDrop', 'V', p, 1.0),
      loopHenries: withDefault(clamp, 'loopInductance', 'H', p, 0),
      loopOhms: withDefault(clamp, 'loopResistance', 'Ω', p, 0),
      junctionFarads: withDefault(clamp, 'diodeCapacitance', 'F', p, 0),
      recoverySeconds: optional(clamp, 'diodeRecoveryTime', 's', p),
      transitTimeRatio: withDefault(clamp, 'diodeTransitTimeRatio', '', p, 0.1),
      forwardRecovery: peakVolts !== undefined && recoverySeconds !== undefined
        ? { peakVolts, recoverySeconds, rampAmpsPerSecond: withDefault(clamp, 'diodeForwardRecoveryRate', '', p, 1e8) }
        : undefined,
    };
  }

  const t = 'transformer.';
  return {
    name: typeof json['name'] === 'string' ? json['name'] : '',
    supplyVolts: required(supply, 'voltage', 'V', 'supply.'),
    magnetizingHenries: required(transformer, 'magnetizingInductance', 'H', t),
    leakageHenries: required(transformer, 'leakageInductance', 'H', t),
    turnsRatio: required(transformer, 'turnsRatio', '', t),
    primaryOhms: withDefault(transformer, 'primaryResistance', 'Ω', t, 0),
    windingFarads: withDefault(transformer, 'windingCapacitance', 'F', t, 0),
    outputVolts: required(output, 'voltage', 'V', 'output.'),
    outputDiodeVolts: withDefault(output, 'diodeDrop', 'V', 'output.', 0),
    frequencyHertz: required(sw, 'frequency', 'Hz', 'switch.'),
    control,
    coss: readCoss(sw['drainCapacitance'], 'switch.drainCapacitance'),
    onOhms: required(sw, 'onResistance', 'Ω', 'switch.'),
    bodyDiodeVolts: withDefault(sw, 'bodyDiodeDrop', 'V', 'switch.', 0.7),
    ratingVolts: required(sw, 'voltageRating', 'V', 'switch.'),
    avalancheVolts: optional(sw, 'avalancheVoltage', 'V', 'switch.'),
    turnOffDelaySeconds: withDefault(sw, 'turnOffDelay', 's', 'switch.', 0),
    currentFallSeconds: withDefault(sw, 'currentFallTime', 's', 'switch.', 0),
    clamp: clampNetlist,
    damper: damper === undefined ? undefined : {
      ohms: required(damper, 'resistance', 'Ω', 'damper.'),
      farads: required(damper, 'capacitance', 'F', 'damper.'),
    },
  };
}

/** VR = n·(Vo + Vf_out), the output reflected to the primary. */
export function reflectedVolts(netlist: ReferenceNetlist): number {
  return netlist.turnsRatio * (netlist.outputVolts + netlist.outputDiodeVolts);
}
