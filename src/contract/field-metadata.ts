// Every scenario field once: its dotted path, what it is called on the page, its unit, its default,
// its group and a line of help. The validation schema (scenario-schema.ts), the sweep flags, the
// JSON Schema and the page all read this table, so a field is added in one place.
//
// Imported by the page through vite: it must stay free of node-only modules (imports only from
// src/circuit files that are themselves plain TypeScript).

import {
  DAMPER_CHOICES, DEFAULT_CLAMP_EXTRAS, DEFAULT_DESIGN, DEFAULT_OUTPUT_EFFICIENCY, DEFAULT_SIMULATION, PREFERRED_SERIES,
  type PreferredSeriesName, type Share,
} from '../circuit/scenario.js';

/** The unit symbols the SI parser knows ('' for a ratio or a count). */
export type SiUnit = '' | 'V' | 'A' | 'H' | 'F' | 'Hz' | 's' | 'W' | 'A/s' | 'Ω';

/** Every unit symbol, '' (no unit) first. */
export const SI_UNITS: readonly SiUnit[] = ['', 'V', 'A', 'H', 'F', 'Hz', 's', 'W', 'A/s', 'Ω'];

/** What values a number may take; `bounds` on a field narrows it further. */
export type FieldRange = 'positive' | 'non-negative' | 'fraction' | 'whole' | 'any';

/** How a field may be left out: `required`; `defaulted` (the default is filled in); `optional` (absent has a meaning of its own). */
export type FieldPresence = 'required' | 'defaulted' | 'optional';

export type FieldKind = 'number' | 'curve' | 'share' | 'string' | 'enum';

/** The switch control a field belongs to; the page shows it only under that control. */
export type ControlKindName = 'peak-current' | 'fixed-duty';

export type GroupKey = 'general' | 'supply' | 'transformer' | 'output' | 'switch' | 'clamp' | 'damper' | 'design' | 'simulation';

interface FieldCommon {
  /** Dotted scenario path, as issues name it ("switch.drainCapacitance"). */
  path: string;
  group: GroupKey;
  /** The form's label. */
  label: string;
  /** One line for a tooltip or a note: what the value means and where it comes from. */
  help: string;
  /** SI unit symbol of the value ('' for a ratio, a count or text). */
  unit: SiUnit;
  /** The unit as shown beside the input ('0–1' for a fraction, '°C', '×'). */
  displayUnit: string;
  presence: FieldPresence;
  /** The default as shown as a placeholder ("0", "3%", "supply.voltage"); absent for required fields. */
  defaultText?: string;
  /** For `optional` fields: what leaving it out means ("none: no avalanche"). */
  absentMeaning?: string;
  /** Only for this switch control. */
  when?: ControlKindName;
  /** A sub-heading the page puts above this field (the first field of a sub-section). */
  heading?: string;
}

export interface NumberFieldMetadata extends FieldCommon {
  kind: 'number';
  range: FieldRange;
  /** Inclusive limits (settings bounded so no value can ask for unbounded memory or time). */
  bounds?: readonly [number, number];
  defaultValue?: number;
}
/** A number (F), or datasheet points [[V, C], …]. */
export interface CurveFieldMetadata extends FieldCommon {
  kind: 'curve';
  /** Fewest and most points a curve may have. */
  minimumPoints: number;
  maximumPoints: number;
}
/** A value in `unit`, or a percentage of a reference ("3%") of at most `maximumPercent`. */
export interface ShareFieldMetadata extends FieldCommon {
  kind: 'share';
  maximumPercent: number;
  /** What the percentage is of. */
  percentOf: string;
  defaultValue: Share;
}
export interface StringFieldMetadata extends FieldCommon { kind: 'string'; maximumLength: number }
export interface EnumFieldMetadata extends FieldCommon {
  kind: 'enum';
  options: readonly string[];
  defaultValue: string;
}

export type FieldMetadata = NumberFieldMetadata | CurveFieldMetadata | ShareFieldMetadata | StringFieldMetadata | EnumFieldMetadata;

/** A block of the scenario file (an object of fields). */
export interface BlockMetadata {
  /** Dotted path of the block ('' for the scenario itself). */
  path: string;
  group: GroupKey;
  title: string;
  /** An optional block is left out as a whole; when given, its required fields are required. */
  optional: boolean;
  /** The page folds it away (settings that rarely change). */
  collapsible?: boolean;
  note?: string;
}

/** Longest text for a name (the input limits allow 200 characters for any text). */
export const MAX_NAME_LENGTH = 200;
/** Most points a capacitance curve may have: datasheet curves are read off at a handful of voltages. */
export const MAX_CURVE_POINTS = 64;
export const MIN_CURVE_POINTS = 2;

type NumberOptions = Partial<Pick<NumberFieldMetadata, 'bounds' | 'defaultValue' | 'defaultText' | 'absentMeaning' | 'when' | 'heading' | 'displayUnit'>> & { presence?: FieldPresence };

function numberField(group: GroupKey, path: string, unit: SiUnit, range: FieldRange, label: string, help: string, options: NumberOptions = {}): NumberFieldMetadata {
  const presence: FieldPresence = options.presence ?? (options.defaultValue !== undefined ? 'defaulted' : 'required');
  const field: NumberFieldMetadata = {
    kind: 'number', path, group, label, help, unit, range, presence,
    displayUnit: options.displayUnit ?? (range === 'fraction' && unit === '' ? '0–1' : unit),
  };
  if (options.bounds !== undefined) field.bounds = options.bounds;
  if (options.defaultValue !== undefined) {
    field.defaultValue = options.defaultValue;
    field.defaultText = options.defaultText ?? String(options.defaultValue);
  } else if (options.defaultText !== undefined) field.defaultText = options.defaultText;
  if (options.absentMeaning !== undefined) field.absentMeaning = options.absentMeaning;
  if (options.when !== undefined) field.when = options.when;
  if (options.heading !== undefined) field.heading = options.heading;
  return field;
}

/** A solver or design setting with inclusive limits and a default. */
function setting(group: GroupKey, path: string, range: FieldRange, defaultValue: number, bounds: readonly [number, number], label: string, help: string, displayUnit?: string): NumberFieldMetadata {
  return numberField(group, path, '', range, label, help, displayUnit === undefined ? { defaultValue, bounds } : { defaultValue, bounds, displayUnit });
}

const shareText = (share: Share): string => (share.kind === 'fraction' ? `${Number((share.value * 100).toPrecision(6))}%` : String(share.value));

const seriesField = (path: string, label: string, defaultValue: PreferredSeriesName): EnumFieldMetadata => ({
  kind: 'enum', path, group: 'design', label, unit: '', displayUnit: '', presence: 'defaulted',
  options: PREFERRED_SERIES, defaultValue, defaultText: defaultValue,
  help: 'preferred-value series the part values are picked from: E12, E24 or E96',
});

const D = DEFAULT_DESIGN;
const S = DEFAULT_SIMULATION;
const C = DEFAULT_CLAMP_EXTRAS;

/** The scenario's fields in the file's order. */
export const SCENARIO_FIELDS: readonly FieldMetadata[] = [
  { kind: 'string', path: 'name', group: 'general', label: 'Design name', unit: '', displayUnit: '', presence: 'required', maximumLength: MAX_NAME_LENGTH, help: 'a name for the design, shown in reports and file names' },

  numberField('supply', 'supply.voltage', 'V', 'positive', 'Input voltage (top of the range)', 'input rail; use the top of the range for the worst case'),

  numberField('transformer', 'transformer.magnetizingInductance', 'H', 'positive', 'Magnetizing inductance, primary', 'primary magnetizing inductance'),
  numberField('transformer', 'transformer.leakageInductance', 'H', 'positive', 'Leakage inductance, primary side', 'primary-side leakage inductance; below the magnetizing inductance'),
  numberField('transformer', 'transformer.turnsRatio', '', 'positive', 'Turns ratio Np : Ns', 'primary turns over secondary turns, Np/Ns', { displayUnit: 'Np/Ns' }),
  numberField('transformer', 'transformer.primaryResistance', 'Ω', 'non-negative', 'Primary winding resistance', "the winding's series resistance, what damps the bare ring", { defaultValue: 0 }),
  numberField('transformer', 'transformer.windingCapacitance', 'F', 'non-negative', 'Winding capacitance across the primary', 'capacitance across the primary (drain to rail); it charges with the drain in every variant', { defaultValue: 0 }),

  numberField('output', 'output.voltage', 'V', 'positive', 'Regulated output voltage', 'regulated output voltage'),
  numberField('output', 'output.diodeDrop', 'V', 'non-negative', 'Output rectifier forward drop', "the output rectifier's forward drop", { defaultValue: 0 }),
  numberField('output', 'output.power', 'W', 'positive', 'Load power, instead of a peak current', 'the load, instead of switch.peakCurrent: the peak current that delivers it is found at each input voltage', { presence: 'optional', absentMeaning: 'none: switch.peakCurrent or switch.dutyCycle sets the operating point' }),
  numberField('output', 'output.efficiency', '', 'fraction', 'Share of the stored energy reaching the load', 'the share of the magnetizing energy that reaches the load (what the model leaves out of the secondary; common practice)', { defaultValue: DEFAULT_OUTPUT_EFFICIENCY, bounds: [0.3, 1] }),

  numberField('switch', 'switch.frequency', 'Hz', 'positive', 'Switching frequency', 'switching frequency'),
  numberField('switch', 'switch.peakCurrent', 'A', 'positive', 'Primary current at turn-off', 'peak-current control: turn off when the primary current reaches it (exactly one of switch.peakCurrent, switch.dutyCycle and output.power)', { presence: 'optional', when: 'peak-current' }),
  numberField('switch', 'switch.dutyCycle', '', 'fraction', 'Duty cycle', 'fixed duty instead of peak-current control; must leave the core time to reset (DCM)', { presence: 'optional', when: 'fixed-duty' }),
  numberField('switch', 'switch.maxDutyCycle', '', 'fraction', 'Maximum duty cycle', 'the longest on-time under peak-current control, as a fraction of the period', { defaultValue: 0.9, when: 'peak-current' }),
  numberField('switch', 'switch.peakCurrentLimit', 'A', 'positive', 'Controller current limit (overload corner of a design)', "the controller's current limit; design verifies an overload corner there", { presence: 'optional', when: 'peak-current', absentMeaning: 'none: no overload corner' }),
  { kind: 'curve', path: 'switch.drainCapacitance', group: 'switch', label: 'Drain–source capacitance', unit: 'F', displayUnit: 'F', presence: 'required', minimumPoints: MIN_CURVE_POINTS, maximumPoints: MAX_CURVE_POINTS, help: 'a constant, or datasheet points [[V, C], …] with voltages strictly increasing from 0; ln C is linear between points' },
  numberField('switch', 'switch.onResistance', 'Ω', 'non-negative', 'On-resistance', "the transistor's on-resistance"),
  numberField('switch', 'switch.bodyDiodeDrop', 'V', 'non-negative', 'Body diode forward drop', "the body diode's forward drop", { defaultValue: 0.7 }),
  numberField('switch', 'switch.voltageRating', 'V', 'positive', 'Rated drain–source voltage', "the transistor's rated drain-source voltage"),
  numberField('switch', 'switch.avalancheVoltage', 'V', 'positive', 'Breakdown (avalanche) voltage', 'where the transistor breaks down and holds the drain (typically 1.1–1.3 × the rating, common practice); above Vin + VR', { presence: 'optional', absentMeaning: 'none: no avalanche', heading: 'Real parts (optional)' }),
  numberField('switch', 'switch.turnOffDelay', 's', 'non-negative', 'Delay from current limit to switch opening', 'comparator and driver delay from the peak current to the switch opening (peak-current control)', { defaultValue: 0 }),
  numberField('switch', 'switch.currentFallTime', 's', 'non-negative', 'Drain current fall time at turn-off', 'the channel current falls linearly to zero over this time after opening', { defaultValue: 0 }),

  numberField('clamp', 'clamp.resistance', 'Ω', 'positive', 'Clamp resistor', 'the clamp resistor'),
  numberField('clamp', 'clamp.capacitance', 'F', 'positive', 'Clamp capacitor', 'the clamp capacitor'),
  numberField('clamp', 'clamp.diodeDrop', 'V', 'non-negative', 'Clamp diode forward drop', "the clamp diode's forward drop", { defaultValue: 1.0, defaultText: '1.0' }),
  numberField('clamp', 'clamp.loopInductance', 'H', 'non-negative', 'Stray inductance of the clamp loop', 'stray inductance in series with the clamp diode (board loop, capacitor ESL)', { defaultValue: C.loopInductance, heading: 'Real parts (optional)' }),
  numberField('clamp', 'clamp.loopResistance', 'Ω', 'non-negative', 'Clamp loop resistance (ESR, traces)', "series resistance of that loop; used only with a loop inductance", { defaultValue: C.loopResistance }),
  numberField('clamp', 'clamp.diodeCapacitance', 'F', 'non-negative', 'Clamp diode junction capacitance', "the diode's junction capacitance while it blocks", { defaultValue: C.diodeCapacitance }),
  numberField('clamp', 'clamp.diodeRecoveryTime', 's', 'positive', 'Clamp diode reverse recovery time trr', 'datasheet reverse-recovery time trr at IF = IR, recovered at 0.25·IR; enables the recovery model', { presence: 'optional', absentMeaning: 'none: ideal diode' }),
  setting('clamp', 'clamp.diodeTransitTimeRatio', 'positive', C.diodeTransitTimeRatio, [0.001, 10], 'Recovery model transit-time ratio TM/τ', 'TM/τ of the charge-control recovery model (an assumption; set it per diode if known)'),
  numberField('clamp', 'clamp.diodeForwardRecoveryVoltage', 'V', 'positive', 'Forward recovery peak voltage VFP (with tfr)', 'datasheet VFP; given together with clamp.diodeForwardRecoveryTime', { presence: 'optional', absentMeaning: 'none' }),
  numberField('clamp', 'clamp.diodeForwardRecoveryTime', 's', 'positive', 'Forward recovery time tfr (with VFP)', 'datasheet tfr; given together with clamp.diodeForwardRecoveryVoltage', { presence: 'optional', absentMeaning: 'none' }),
  numberField('clamp', 'clamp.diodeForwardRecoveryRate', 'A/s', 'positive', 'di/dt of the VFP and tfr test', 'the di/dt at which VFP and tfr were measured (100 A/µs, a usual datasheet condition, from memory)', { defaultValue: C.diodeForwardRecoveryRate }),

  numberField('damper', 'damper.resistance', 'Ω', 'positive', 'Damper resistor', 'the damper resistor (series RC from drain to ground)'),
  numberField('damper', 'damper.capacitance', 'F', 'positive', 'Damper capacitor', 'the damper capacitor (series RC from drain to ground)'),

  numberField('design', 'design.inputVoltageMinimum', 'V', 'positive', 'Input range, lowest', 'input range, lowest; defaults to supply.voltage', { presence: 'optional', defaultText: 'supply.voltage', absentMeaning: 'supply.voltage' }),
  numberField('design', 'design.inputVoltageMaximum', 'V', 'positive', 'Input range, highest', 'input range, highest (the worst case); defaults to supply.voltage', { presence: 'optional', defaultText: 'supply.voltage', absentMeaning: 'supply.voltage' }),
  setting('design', 'design.leakageTolerance', 'non-negative', D.leakageTolerance, [0, 0.9], 'Leakage inductance spread (0.2 = ±20 %)', 'leakage spread as a fraction; the worst case is the top'),
  setting('design', 'design.drainDerating', 'fraction', D.drainDerating, [0.3, 1], 'Allowed peak drain, fraction of rating', 'peak drain voltage allowed, as a fraction of the rating (0.8: common practice)', '0–1'),
  setting('design', 'design.clampRippleMinimum', 'fraction', D.clampRippleMinimum, [0.001, 0.5], 'Clamp ripple, lowest (fraction)', 'clamp ripple target, lowest, as a fraction of the clamp voltage', '0–1'),
  setting('design', 'design.clampRippleMaximum', 'fraction', D.clampRippleMaximum, [0.001, 0.5], 'Clamp ripple, highest (fraction)', 'clamp ripple target, highest, as a fraction of the clamp voltage', '0–1'),
  seriesField('design.resistorSeries', 'Resistor values from', D.resistorSeries),
  seriesField('design.capacitorSeries', 'Capacitor values from', D.capacitorSeries),
  setting('design', 'design.ambientTemperature', 'any', D.ambientTemperature, [-40, 150], 'Ambient temperature', 'ambient temperature, °C, for the resistor power derating', '°C'),
  {
    kind: 'enum', path: 'design.damper', group: 'design', label: 'Damper in the design', unit: '', displayUnit: '', presence: 'defaulted',
    options: DAMPER_CHOICES, defaultValue: D.damper, defaultText: D.damper,
    help: 'least-loss: the passing part set with the least loss decides, with or without the RC damper; always; never',
  },
  setting('design', 'design.damperCapacitanceRatio', 'positive', D.damperCapacitanceRatio, [1, 20], 'Damper capacitor, times drain capacitance', 'damper capacitor as a multiple of the drain capacitance', '×'),
  { kind: 'share', path: 'design.voltageAllowance', group: 'design', label: 'Allowance kept below the derated limit, in volts or a percentage of the rating', unit: 'V', displayUnit: 'V', presence: 'defaulted', maximumPercent: 30, percentOf: 'switch.voltageRating', defaultValue: D.voltageAllowance, defaultText: shareText(D.voltageAllowance), help: 'kept below the derated limit at every corner for what the model leaves out (common practice: a few percent)' },
  { kind: 'share', path: 'design.lossBudget', group: 'design', label: 'Clamp and damper loss budget, in watts or a percentage of the output', unit: 'W', displayUnit: 'W', presence: 'defaulted', maximumPercent: 100, percentOf: 'output power', defaultValue: D.lossBudget, defaultText: shareText(D.lossBudget), help: 'clamp plus damper loss allowed at the worst-loss corner (common practice: a tenth of the output)' },
  setting('design', 'design.resistorTolerance', 'non-negative', D.resistorTolerance, [0, 0.5], 'Clamp resistor tolerance (0.05 = ±5 %)', "the clamp resistor's tolerance as a fraction"),
  setting('design', 'design.capacitorTolerance', 'non-negative', D.capacitorTolerance, [0, 0.5], 'Clamp capacitor tolerance (0.1 = ±10 %)', "the clamp capacitor's tolerance as a fraction"),
  setting('design', 'design.peakCurrentTolerance', 'non-negative', D.peakCurrentTolerance, [0, 0.5], 'Current-sense threshold tolerance', "the controller's current-sense threshold spread as a fraction"),
  setting('design', 'design.drainCapacitanceTolerance', 'non-negative', D.drainCapacitanceTolerance, [0, 0.5], 'Drain capacitance spread', 'spread of the drain capacitance as a fraction (a curve is scaled as a whole)'),
  numberField('design', 'design.measuredRing.frequency', 'Hz', 'positive', 'Ring frequency as measured', 'the drain ring measured on a sample', { heading: 'Ring measured on a sample (optional, all three)' }),
  numberField('design', 'design.measuredRing.frequencyWithAddedCapacitor', 'Hz', 'positive', 'Ring with a capacitor added across drain–source', 'the ring with a known capacitor added across drain-source; below the ring alone'),
  numberField('design', 'design.measuredRing.addedCapacitance', 'F', 'positive', 'That added capacitor', 'the capacitor added for the second measurement'),

  setting('simulation', 'simulation.relativeTolerance', 'positive', S.relativeTolerance, [1e-12, 1e-3], 'Relative tolerance', "the integrator's relative tolerance; absolute tolerances are this times each state's scale"),
  setting('simulation', 'simulation.settleTolerance', 'positive', S.settleTolerance, [1e-12, 1e-2], 'Settled when a cycle changes less than', 'change of the period-start state per cycle, relative to its scale, below which the run is settled'),
  setting('simulation', 'simulation.maxCycles', 'whole', S.maxCycles, [1, 100_000], 'Cycle limit', 'most switching cycles simulated before giving up'),
  setting('simulation', 'simulation.recordedCycles', 'whole', S.recordedCycles, [1, 20], 'Settled cycles recorded', 'settled cycles kept at full resolution for the waveform and the metrics'),
  setting('simulation', 'simulation.samplesPerCycle', 'whole', S.samplesPerCycle, [100, 20_000], 'Waveform samples per cycle', 'waveform samples per switching period (raised automatically to resolve the ring)'),
];

/** The scenario's blocks, outermost first; a field belongs to the block whose path is its prefix. */
export const SCENARIO_BLOCKS: readonly BlockMetadata[] = [
  { path: '', group: 'general', title: 'Scenario', optional: false },
  { path: 'supply', group: 'supply', title: 'Supply', optional: false },
  { path: 'transformer', group: 'transformer', title: 'Transformer', optional: false },
  { path: 'output', group: 'output', title: 'Output', optional: false },
  { path: 'switch', group: 'switch', title: 'Switch', optional: false },
  { path: 'clamp', group: 'clamp', title: 'Fit an RCD clamp', optional: true, note: 'diode from the drain into C ∥ R, returned to the input rail' },
  { path: 'damper', group: 'damper', title: 'Fit an RC damper', optional: true, note: 'series R and C from the drain to ground' },
  { path: 'design', group: 'design', title: 'Design targets', optional: true, collapsible: true, note: 'for sizing parts with flyclamp design; this simulation does not use them, the saved file keeps them' },
  { path: 'design.measuredRing', group: 'design', title: 'Ring measured on a sample', optional: true, note: 'all three together' },
  { path: 'simulation', group: 'simulation', title: 'Solver settings', optional: true, collapsible: true },
];

/** The fields that choose the switch control: exactly one of them is given. */
export const CONTROL_FIELD_PATHS = ['switch.peakCurrent', 'switch.dutyCycle', 'output.power'] as const;

const FIELDS_BY_PATH: ReadonlyMap<string, FieldMetadata> = new Map(SCENARIO_FIELDS.map((field) => [field.path, field]));

/** The field at a dotted path, or undefined when there is no such field. */
export function fieldAt(path: string): FieldMetadata | undefined {
  return FIELDS_BY_PATH.get(path);
}

/** The block at a dotted path, or undefined. */
export function blockAt(path: string): BlockMetadata | undefined {
  return SCENARIO_BLOCKS.find((block) => block.path === path);
}

/** The fields directly inside a block (not those of the blocks nested in it). */
export function fieldsOfBlock(blockPath: string): FieldMetadata[] {
  return SCENARIO_FIELDS.filter((field) => parentPath(field.path) === blockPath);
}

/** The blocks directly inside a block. */
export function blocksOfBlock(blockPath: string): BlockMetadata[] {
  return SCENARIO_BLOCKS.filter((block) => block.path !== '' && parentPath(block.path) === blockPath);
}

/** "design.measuredRing.frequency" → "design.measuredRing"; "name" → "". */
export function parentPath(path: string): string {
  const dot = path.lastIndexOf('.');
  return dot < 0 ? '' : path.slice(0, dot);
}

/** The unit symbol of a numeric scenario field by its path ('' for ratios), or undefined for no such field or a non-numeric one. */
export function fieldUnit(path: string): SiUnit | undefined {
  const field = fieldAt(path);
  return field && (field.kind === 'number' || field.kind === 'curve' || field.kind === 'share') ? field.unit : undefined;
}

/** Every numeric field's path (a number or a curve): what a sweep may vary. */
export const NUMERIC_FIELD_PATHS: readonly string[] = SCENARIO_FIELDS.filter((field) => field.kind === 'number' || field.kind === 'curve').map((field) => field.path);
