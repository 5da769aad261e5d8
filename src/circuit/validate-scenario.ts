// Validation at the edge: a scenario object (parsed JSON, an HTTP body) becomes a Scenario or a
// list of issues, each naming its field path, what was expected and what was found.

import { parseSiNumber } from './si-number.js';
import { peakCurrentForPower } from './load-operating-point.js';
import { plausibilityWarnings } from './plausibility.js';
import { DEFAULT_CLAMP_EXTRAS, DEFAULT_OUTPUT_EFFICIENCY, FORWARD_RECOVERY_MINIMUM_LOOP_INDUCTANCE, DEFAULT_DESIGN, DEFAULT_SIMULATION, PREFERRED_SERIES, DAMPER_CHOICES, reflectedVoltage, type CapacitanceCurve, type ClampParts, type DesignTargets, type Scenario, type Share, type SimulationSettings } from './scenario.js';

export interface ValidationIssue { path: string; message: string }

export type ValidationResult =
  | { ok: true; scenario: Scenario; warnings: ValidationIssue[] }
  | { ok: false; issues: ValidationIssue[] };

type Range = 'positive' | 'non-negative' | 'fraction' | 'whole' | 'any';

interface NumberField { kind: 'number'; unit: string; range: Range; optional?: number | 'absent'; bounds?: [number, number] }
interface TextField { kind: 'text' }
/** A value in `unit`, or a percentage of a reference ("3%"). */
interface ShareField { kind: 'share'; unit: string; optional: Share; maximumPercent: number }
/** A number, or datasheet points [[V, C], …] (a capacitance against voltage). */
interface CurveField { kind: 'curve'; unit: string }
interface ChoiceField { kind: 'choice'; options: readonly string[]; optional: string }
interface BlockSpec { kind: 'block'; optional: boolean; fields: Record<string, FieldSpec> }
type FieldSpec = NumberField | CurveField | ShareField | TextField | ChoiceField | BlockSpec;

const num = (unit: string, range: Range, optional?: number | 'absent'): NumberField =>
  optional === undefined ? { kind: 'number', unit, range } : { kind: 'number', unit, range, optional };
/** A setting with inclusive limits, so that no value can ask for unbounded memory or time. */
const setting = (range: Range, optional: number, bounds: [number, number]): NumberField => ({ kind: 'number', unit: '', range, optional, bounds });
const block = (fields: Record<string, FieldSpec>, optional = false): BlockSpec => ({ kind: 'block', optional, fields });

const SCENARIO_SPEC: BlockSpec = block({
  name: { kind: 'text' },
  supply: block({ voltage: num('V', 'positive') }),
  transformer: block({
    magnetizingInductance: num('H', 'positive'),
    leakageInductance: num('H', 'positive'),
    turnsRatio: num('', 'positive'),
    primaryResistance: num('Ω', 'non-negative', 0),
    windingCapacitance: num('F', 'non-negative', 0),
  }),
  output: block({
    voltage: num('V', 'positive'),
    diodeDrop: num('V', 'non-negative', 0),
    power: num('W', 'positive', 'absent'),
    efficiency: { kind: 'number', unit: '', range: 'fraction', optional: DEFAULT_OUTPUT_EFFICIENCY, bounds: [0.3, 1] },
  }),
  switch: block({
    frequency: num('Hz', 'positive'),
    peakCurrent: num('A', 'positive', 'absent'),
    dutyCycle: num('', 'fraction', 'absent'),
    maxDutyCycle: num('', 'fraction', 0.9),
    peakCurrentLimit: num('A', 'positive', 'absent'),
    drainCapacitance: { kind: 'curve', unit: 'F' },
    onResistance: num('Ω', 'non-negative'),
    bodyDiodeDrop: num('V', 'non-negative', 0.7),
    voltageRating: num('V', 'positive'),
    avalancheVoltage: num('V', 'positive', 'absent'),
    turnOffDelay: num('s', 'non-negative', 0),
    currentFallTime: num('s', 'non-negative', 0),
  }),
  clamp: block({
    resistance: num('Ω', 'positive'),
    capacitance: num('F', 'positive'),
    diodeDrop: num('V', 'non-negative', 1.0),
    loopInductance: num('H', 'non-negative', DEFAULT_CLAMP_EXTRAS.loopInductance),
    loopResistance: num('Ω', 'non-negative', DEFAULT_CLAMP_EXTRAS.loopResistance),
    diodeCapacitance: num('F', 'non-negative', DEFAULT_CLAMP_EXTRAS.diodeCapacitance),
    diodeRecoveryTime: num('s', 'positive', 'absent'),
    diodeTransitTimeRatio: setting('positive', DEFAULT_CLAMP_EXTRAS.diodeTransitTimeRatio, [0.001, 10]),
    diodeForwardRecoveryVoltage: num('V', 'positive', 'absent'),
    diodeForwardRecoveryTime: num('s', 'positive', 'absent'),
    diodeForwardRecoveryRate: { ...num('A/s', 'positive', DEFAULT_CLAMP_EXTRAS.diodeForwardRecoveryRate) },
  }, true),
  damper: block({ resistance: num('Ω', 'positive'), capacitance: num('F', 'positive') }, true),
  design: block({
    inputVoltageMinimum: num('V', 'positive', 'absent'),
    inputVoltageMaximum: num('V', 'positive', 'absent'),
    leakageTolerance: setting('non-negative', DEFAULT_DESIGN.leakageTolerance, [0, 0.9]),
    drainDerating: setting('fraction', DEFAULT_DESIGN.drainDerating, [0.3, 1]),
    clampRippleMinimum: setting('fraction', DEFAULT_DESIGN.clampRippleMinimum, [0.001, 0.5]),
    clampRippleMaximum: setting('fraction', DEFAULT_DESIGN.clampRippleMaximum, [0.001, 0.5]),
    resistorSeries: { kind: 'choice', options: PREFERRED_SERIES, optional: DEFAULT_DESIGN.resistorSeries },
    capacitorSeries: { kind: 'choice', options: PREFERRED_SERIES, optional: DEFAULT_DESIGN.capacitorSeries },
    damper: { kind: 'choice', options: DAMPER_CHOICES, optional: DEFAULT_DESIGN.damper },
    ambientTemperature: { kind: 'number', unit: '', range: 'any', optional: DEFAULT_DESIGN.ambientTemperature, bounds: [-40, 150] },
    damperCapacitanceRatio: setting('positive', DEFAULT_DESIGN.damperCapacitanceRatio, [1, 20]),
    voltageAllowance: { kind: 'share', unit: 'V', optional: DEFAULT_DESIGN.voltageAllowance, maximumPercent: 30 },
    lossBudget: { kind: 'share', unit: 'W', optional: DEFAULT_DESIGN.lossBudget, maximumPercent: 100 },
    resistorTolerance: setting('non-negative', DEFAULT_DESIGN.resistorTolerance, [0, 0.5]),
    capacitorTolerance: setting('non-negative', DEFAULT_DESIGN.capacitorTolerance, [0, 0.5]),
    peakCurrentTolerance: setting('non-negative', DEFAULT_DESIGN.peakCurrentTolerance, [0, 0.5]),
    drainCapacitanceTolerance: setting('non-negative', DEFAULT_DESIGN.drainCapacitanceTolerance, [0, 0.5]),
    measuredRing: block({
      frequency: num('Hz', 'positive'),
      frequencyWithAddedCapacitor: num('Hz', 'positive'),
      addedCapacitance: num('F', 'positive'),
    }, true),
  }, true),
  simulation: block({
    relativeTolerance: setting('positive', DEFAULT_SIMULATION.relativeTolerance, [1e-12, 1e-3]),
    settleTolerance: setting('positive', DEFAULT_SIMULATION.settleTolerance, [1e-12, 1e-2]),
    maxCycles: setting('whole', DEFAULT_SIMULATION.maxCycles, [1, 100_000]),
    recordedCycles: setting('whole', DEFAULT_SIMULATION.recordedCycles, [1, 20]),
    samplesPerCycle: setting('whole', DEFAULT_SIMULATION.samplesPerCycle, [100, 20_000]),
  }, true),
});

const RANGE_TEXT: Record<Range, string> = {
  positive: 'greater than 0',
  'non-negative': '0 or more',
  fraction: 'between 0 and 1 (exclusive)',
  whole: '1 or more (a whole number)',
  any: 'of any sign',
};
const rangeText = (field: NumberField): string =>
  field.bounds ? `${field.range === 'whole' ? 'a whole number' : 'a value'} from ${field.bounds[0]} to ${field.bounds[1]}` : `a value ${RANGE_TEXT[field.range]}`;
const withinBounds = (value: number, field: NumberField): boolean =>
  inRange(value, field.range) && (!field.bounds || (value >= field.bounds[0] && value <= field.bounds[1]));

function describe(found: unknown): string {
  if (found === undefined) return 'nothing';
  if (found === null) return 'null';
  if (Array.isArray(found)) return 'a list';
  if (typeof found === 'object') return 'an object';
  const text = JSON.stringify(found);
  return text.length > 40 ? `${text.slice(0, 37)}...` : text;
}

function inRange(value: number, range: Range): boolean {
  switch (range) {
    case 'positive': return value > 0;
    case 'non-negative': return value >= 0;
    case 'fraction': return value > 0 && value < 1;
    case 'whole': return Number.isInteger(value) && value >= 1;
    case 'any': return true;
  }
}

type Plain = { [key: string]: unknown };

function readBlock(spec: BlockSpec, input: unknown, path: string, issues: ValidationIssue[]): Plain | undefined {
  if (typeof input !== 'object' || input === null || Array.isArray(input)) {
    issues.push({ path: path || '(scenario)', message: `expected an object, found ${describe(input)}` });
    return undefined;
  }
  const source = input as Plain;
  const out: Plain = {};
  for (const key of Object.keys(source)) {
    if (!Object.hasOwn(spec.fields, key)) {
      const known = Object.keys(spec.fields).join(', ');
      issues.push({ path: join(path, key), message: `unknown field (expected one of: ${known}), found ${describe(source[key])}` });
    }
  }
  for (const [key, field] of Object.entries(spec.fields)) {
    const fieldPath = join(path, key);
    const value = source[key];
    if (field.kind === 'block') {
      if (value === undefined && field.optional) continue;
      const inner = readBlock(field, value === undefined ? undefined : value, fieldPath, issues);
      if (inner) out[key] = inner;
      continue;
    }
    if (field.kind === 'choice') {
      if (value === undefined) out[key] = field.optional;
      else if (typeof value === 'string' && field.options.includes(value)) out[key] = value;
      else issues.push({ path: fieldPath, message: `expected one of ${field.options.join(', ')}, found ${describe(value)}` });
      continue;
    }
    if (field.kind === 'share') {
      const share = value === undefined ? field.optional : readShare(value, field, fieldPath, issues);
      if (share !== undefined) out[key] = share;
      continue;
    }
    if (field.kind === 'curve') {
      const curve = readCurve(value, field.unit, fieldPath, issues);
      if (curve !== undefined) out[key] = curve;
      continue;
    }
    if (field.kind === 'text') {
      if (typeof value === 'string' && value.trim() !== '') out[key] = value;
      else issues.push({ path: fieldPath, message: `expected a non-empty text, found ${describe(value)}` });
      continue;
    }
    if (value === undefined) {
      if (field.optional === 'absent') continue;
      if (field.optional !== undefined) { out[key] = field.optional; continue; }
      issues.push({ path: fieldPath, message: `expected ${numberExpectation(field)}, found nothing (the field is required)` });
      continue;
    }
    const parsed = parseSiNumber(value, field.unit);
    if (!parsed.ok) {
      issues.push({ path: fieldPath, message: `expected ${parsed.expected}, found ${describe(value)}` });
    } else if (!withinBounds(parsed.value, field)) {
      issues.push({ path: fieldPath, message: `expected ${rangeText(field)}, found ${describe(value)}` });
    } else {
      out[key] = parsed.value;
    }
  }
  return out;
}

const PERCENT = /^\s*(\d{1,3}(?:\.\d{1,6})?)\s*%\s*$/;

function readShare(value: unknown, field: ShareField, path: string, issues: ValidationIssue[]): Share | undefined {
  const expected = `a value in ${field.unit} (a number or a string with an SI prefix) or a percentage such as "3%" (at most ${field.maximumPercent} %)`;
  const pct = typeof value === 'string' ? PERCENT.exec(value) : null;
  if (pct) {
    const percent = Number(pct[1]);
    if (percent <= field.maximumPercent) return { kind: 'fraction', value: percent / 100 };
    issues.push({ path, message: `expected ${expected}, found ${describe(value)}` });
    return undefined;
  }
  const parsed = parseSiNumber(value, field.unit);
  if (parsed.ok && parsed.value >= 0) return { kind: 'absolute', value: parsed.value };
  issues.push({ path, message: `expected ${expected}, found ${describe(value)}` });
  return undefined;
}

/** Most points a capacitance curve may have: datasheet curves are read off at a handful of voltages. */
export const MAX_CURVE_POINTS = 64;

function readCurve(value: unknown, unit: string, path: string, issues: ValidationIssue[]): number | CapacitanceCurve | undefined {
  const expected = `a capacitance in ${unit} (a number or a string with an SI prefix) or datasheet points [[V, C], …] with voltages strictly increasing from 0`;
  if (value === undefined) { issues.push({ path, message: `expected ${expected}, found nothing (the field is required)` }); return undefined; }
  if (!Array.isArray(value)) {
    const parsed = parseSiNumber(value, unit);
    if (!parsed.ok) { issues.push({ path, message: `expected ${expected}, found ${describe(value)}` }); return undefined; }
    if (!(parsed.value > 0)) { issues.push({ path, message: `expected a capacitance greater than 0, found ${describe(value)}` }); return undefined; }
    return parsed.value;
  }
  if (value.length < 2 || value.length > MAX_CURVE_POINTS) {
    issues.push({ path, message: `expected from 2 to ${MAX_CURVE_POINTS} points [[V, C], …], found ${value.length} point${value.length === 1 ? '' : 's'}` });
    return undefined;
  }
  const points: Array<readonly [number, number]> = [];
  const before = issues.length;
  value.forEach((point: unknown, i: number) => {
    const at = `${path}[${i}]`;
    if (!Array.isArray(point) || point.length !== 2) { issues.push({ path: at, message: `expected a point [V, C], found ${describe(point)}` }); return; }
    const v = parseSiNumber(point[0], 'V');
    const c = parseSiNumber(point[1], unit);
    if (!v.ok) issues.push({ path: `${at}[0]`, message: `expected a voltage: ${v.expected}, found ${describe(point[0])}` });
    if (!c.ok) issues.push({ path: `${at}[1]`, message: `expected a capacitance: ${c.expected}, found ${describe(point[1])}` });
    else if (!(c.value > 0)) issues.push({ path: `${at}[1]`, message: `expected a capacitance greater than 0, found ${describe(point[1])}` });
    if (!v.ok || !c.ok) return;
    if (i === 0 && v.value !== 0) issues.push({ path: `${at}[0]`, message: `expected the curve to start at 0 V, found ${describe(point[0])}` });
    const last = points[points.length - 1];
    if (i > 0 && last && !(v.value > last[0])) issues.push({ path: `${at}[0]`, message: `expected a voltage above the previous point's ${last[0]} V (strictly increasing), found ${describe(point[0])}` });
    points.push([v.value, c.value]);
  });
  return issues.length === before ? points : undefined;
}

function numberExpectation(field: NumberField): string {
  const unit = field.unit === '' ? '' : ` in ${field.unit}`;
  return `a number${unit} ${rangeText(field).replace(/^a value /, '')}`;
}

const join = (path: string, key: string): string => (path ? `${path}.${key}` : key);

/** Validates a scenario object; all issues are reported at once. */
export function validateScenario(input: unknown): ValidationResult {
  const issues: ValidationIssue[] = [];
  const raw = readBlock(SCENARIO_SPEC, input, '', issues) as Record<string, Plain> | undefined;
  // The choice of control is checked on the raw input, so that it is reported with the rest.
  const rawSwitch = (typeof input === 'object' && input !== null ? (input as Plain).switch : undefined) as Plain | undefined;
  const rawOutput = (typeof input === 'object' && input !== null ? (input as Plain).output : undefined) as Plain | undefined;
  if (rawSwitch && typeof rawSwitch === 'object') {
    const given = [
      ['switch.peakCurrent', rawSwitch.peakCurrent], ['switch.dutyCycle', rawSwitch.dutyCycle],
      ['output.power', rawOutput && typeof rawOutput === 'object' ? rawOutput.power : undefined],
    ].filter(([, v]) => v !== undefined).map(([p]) => p as string);
    if (given.length !== 1) {
      issues.push({
        path: given.length === 0 ? 'switch.peakCurrent' : given[1]!,
        message: `expected exactly one of switch.peakCurrent (peak-current control), switch.dutyCycle (fixed duty) and output.power (peak-current control at the current that delivers it), found ${given.length === 0 ? 'none' : given.join(' and ')}`,
      });
    }
  }
  if (!raw || issues.length > 0) return { ok: false, issues };

  const sw = raw.switch as Plain;
  const out = raw.output as Record<string, number>;
  // With the load given, the peak current starts at the energy relation's estimate; the settled
  // simulation refines it before a run (src/simulation/operating-point.ts).
  const peakCurrent = out.power !== undefined
    ? peakCurrentForPower({
      power: out.power / out.efficiency!, magnetizingInductance: (raw.transformer as Record<string, number>).magnetizingInductance!,
      frequency: sw.frequency as number, supplyVoltage: (raw.supply as Record<string, number>).voltage!,
      reflectedVoltage: (raw.transformer as Record<string, number>).turnsRatio! * (out.voltage! + out.diodeDrop!),
    }).peakCurrent
    : sw.peakCurrent as number | undefined;
  const dutyCycle = sw.dutyCycle as number | undefined;
  const n = raw.transformer as Record<string, number>;
  const clamp = raw.clamp as Record<string, number> | undefined;
  const damper = raw.damper as Record<string, number> | undefined;
  const scenario: Scenario = {
    name: raw.name as unknown as string,
    supply: { voltage: (raw.supply as Record<string, number>).voltage! },
    transformer: {
      magnetizingInductance: n.magnetizingInductance!,
      leakageInductance: n.leakageInductance!,
      turnsRatio: n.turnsRatio!,
      primaryResistance: n.primaryResistance!,
      windingCapacitance: n.windingCapacitance!,
    },
    output: { voltage: out.voltage!, diodeDrop: out.diodeDrop!, efficiency: out.efficiency!, ...(out.power !== undefined ? { power: out.power } : {}) },
    switch: {
      frequency: sw.frequency as number,
      control: peakCurrent !== undefined
        ? { kind: 'peak-current', peakCurrent, maxDutyCycle: sw.maxDutyCycle as number }
        : { kind: 'fixed-duty', dutyCycle: dutyCycle! },
      drainCapacitance: sw.drainCapacitance as number | CapacitanceCurve,
      onResistance: sw.onResistance as number,
      bodyDiodeDrop: sw.bodyDiodeDrop as number,
      voltageRating: sw.voltageRating as number,
      ...(sw.avalancheVoltage !== undefined ? { avalancheVoltage: sw.avalancheVoltage as number } : {}),
      ...(sw.peakCurrentLimit !== undefined ? { peakCurrentLimit: sw.peakCurrentLimit as number } : {}),
      turnOffDelay: sw.turnOffDelay as number,
      currentFallTime: sw.currentFallTime as number,
    },
    simulation: (raw.simulation as unknown as SimulationSettings | undefined) ?? { ...DEFAULT_SIMULATION },
  };
  if (raw.design) {
    const d = raw.design as Record<string, unknown>;
    const design = { ...d } as unknown as DesignTargets;
    scenario.design = design;
    if (design.clampRippleMinimum > design.clampRippleMaximum) {
      issues.push({ path: 'design.clampRippleMinimum', message: `expected at most design.clampRippleMaximum (${design.clampRippleMaximum}), found ${design.clampRippleMinimum}` });
    }
    if (design.inputVoltageMinimum !== undefined && design.inputVoltageMaximum !== undefined && design.inputVoltageMinimum > design.inputVoltageMaximum) {
      issues.push({ path: 'design.inputVoltageMinimum', message: `expected at most design.inputVoltageMaximum (${design.inputVoltageMaximum} V), found ${design.inputVoltageMinimum} V` });
    }
    const ring = design.measuredRing;
    if (ring && ring.frequencyWithAddedCapacitor >= ring.frequency) {
      issues.push({ path: 'design.measuredRing.frequencyWithAddedCapacitor', message: `expected a frequency below design.measuredRing.frequency (${ring.frequency} Hz): an added capacitor lowers the ring, found ${ring.frequencyWithAddedCapacitor} Hz` });
    }
  }
  if (clamp) scenario.clamp = { ...clamp } as unknown as ClampParts;
  if (damper) scenario.damper = { resistance: damper.resistance!, capacitance: damper.capacitance! };

  const warnings: ValidationIssue[] = plausibilityWarnings(scenario);
  checkPhysics(scenario, issues, warnings);
  return issues.length > 0 ? { ok: false, issues } : { ok: true, scenario, warnings };
}

const fmt = (x: number): string => Number(x.toPrecision(4)).toString();

/** Inputs that parse but describe no circuit with a steady state. */
function checkPhysics(s: Scenario, issues: ValidationIssue[], warnings: ValidationIssue[]): void {
  const vin = s.supply.voltage;
  const vr = reflectedVoltage(s);
  const { magnetizingInductance: lm, leakageInductance: llk, primaryResistance: rp } = s.transformer;
  const period = 1 / s.switch.frequency;
  if (llk >= lm) {
    issues.push({
      path: 'transformer.leakageInductance',
      message: `expected a leakage inductance well below the magnetizing inductance (${fmt(lm)} H), found ${fmt(llk)} H`,
    });
  }
  const control = s.switch.control;
  if (control.kind === 'fixed-duty') {
    const d = control.dutyCycle;
    // Volt-second balance: with the output held, the core resets within the off time only if
    // D·Vin < (1 − D)·VR; otherwise (continuous conduction) the magnetizing current walks away.
    if (d * vin >= (1 - d) * vr) {
      issues.push({
        path: 'switch.dutyCycle',
        message: `expected a duty cycle below ${fmt(vr / (vin + vr))} so that the core resets each period (discontinuous conduction); found ${fmt(d)}, which is continuous conduction, where fixed duty with a fixed output has no steady state: lower the duty or use switch.peakCurrent`,
      });
    }
  } else {
    const ipk = control.peakCurrent;
    const dmax = control.maxDutyCycle;
    const finalCurrent = vin / (rp + s.switch.onResistance);
    const reachableFromZero = (vin * dmax * period) / (lm + llk);
    const resetsAtMaxDuty = dmax * vin < (1 - dmax) * vr;
    if (ipk >= finalCurrent || (resetsAtMaxDuty && ipk > reachableFromZero)) {
      const limit = resetsAtMaxDuty ? Math.min(finalCurrent, reachableFromZero) : finalCurrent;
      issues.push(s.output.power === undefined
        ? { path: 'switch.peakCurrent', message: `expected a peak current the primary can reach within switch.maxDutyCycle of the period (at most about ${fmt(limit)} A here), found ${fmt(ipk)} A` }
        : { path: 'output.power', message: `expected a load the primary can deliver within switch.maxDutyCycle of the period: it needs about ${fmt(ipk)} A at the peak (at most about ${fmt(limit)} A here), found ${fmt(s.output.power)} W` });
    }
  }
  const av = s.switch.avalancheVoltage;
  if (av !== undefined && av <= vin + vr) {
    issues.push({ path: 'switch.avalancheVoltage', message: `expected a breakdown voltage above Vin + VR = ${fmt(vin + vr)} V (the drain settles there every cycle), found ${fmt(av)} V` });
  } else if (av !== undefined && av < s.switch.voltageRating) {
    warnings.push({ path: 'switch.avalancheVoltage', message: `a breakdown voltage ${fmt(av)} V below the rating ${fmt(s.switch.voltageRating)} V is unusual (typically 1.1–1.3 × the rating, common practice)` });
  }
  if (s.switch.turnOffDelay > 0 && control.kind !== 'peak-current') {
    warnings.push({ path: 'switch.turnOffDelay', message: 'the delay applies to peak-current control only; with a fixed duty the switch opens at D·T' });
  }
  if (s.switch.turnOffDelay + s.switch.currentFallTime >= 0.5 * period) {
    issues.push({ path: s.switch.currentFallTime > s.switch.turnOffDelay ? 'switch.currentFallTime' : 'switch.turnOffDelay', message: `expected switch.turnOffDelay + switch.currentFallTime well below half the period (${fmt(0.5 * period)} s), found ${fmt(s.switch.turnOffDelay + s.switch.currentFallTime)} s` });
  }
  const clamp = s.clamp;
  if (clamp) {
    const hasVfp = clamp.diodeForwardRecoveryVoltage !== undefined, hasTfr = clamp.diodeForwardRecoveryTime !== undefined;
    if (hasVfp !== hasTfr) {
      issues.push({ path: hasVfp ? 'clamp.diodeForwardRecoveryTime' : 'clamp.diodeForwardRecoveryVoltage', message: 'expected clamp.diodeForwardRecoveryVoltage and clamp.diodeForwardRecoveryTime together (the datasheet gives VFP and tfr as a pair), found only one of them' });
    } else if (hasVfp && clamp.diodeForwardRecoveryVoltage! <= clamp.diodeDrop) {
      issues.push({ path: 'clamp.diodeForwardRecoveryVoltage', message: `expected a peak forward voltage above clamp.diodeDrop (${fmt(clamp.diodeDrop)} V), found ${fmt(clamp.diodeForwardRecoveryVoltage!)} V` });
    } else if (hasVfp && clamp.loopInductance === 0) {
      warnings.push({ path: 'clamp.loopInductance', message: `forward recovery needs a loop inductance (the diode's modulated resistance against Coss alone is stiff): ${FORWARD_RECOVERY_MINIMUM_LOOP_INDUCTANCE * 1e9} nH is assumed; give the board's value` });
    }
  }
  if (s.switch.voltageRating <= vin + vr) {
    warnings.push({
      path: 'switch.voltageRating',
      message: `the rating ${fmt(s.switch.voltageRating)} V is not above Vin + VR = ${fmt(vin + vr)} V: no clamp can keep the drain under it`,
    });
  }
}

/** The unit symbol of a numeric scenario field by its path ('' for ratios), or undefined for no such field. */
export function fieldUnit(path: string): string | undefined {
  let spec: FieldSpec = SCENARIO_SPEC;
  for (const key of path.split('.')) {
    if (spec.kind !== 'block' || !Object.hasOwn(spec.fields, key)) return undefined;
    spec = spec.fields[key]!;
  }
  return spec.kind === 'number' || spec.kind === 'curve' || spec.kind === 'share' ? spec.unit : undefined;
}

export function formatIssues(issues: readonly ValidationIssue[]): string {
  return issues.map((i) => `${i.path}: ${i.message}`).join('\n');
}
