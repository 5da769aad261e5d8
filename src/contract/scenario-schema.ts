// The scenario file as a zod schema: strict objects (an unknown key is an issue), SI strings
// transformed to numbers with their unit checked, the choice of control and the physics checks as
// refinements. Every field's unit, range and default come from the field table (field-metadata.ts);
// every message names what was expected and what was found, and every issue carries its path.
//
// Free of node-only modules: the page imports it through vite.

import * as z from 'zod';
import { parseSiNumber } from '../circuit/si-number.js';
import { peakCurrentForPower } from '../circuit/load-operating-point.js';
import {
  DEFAULT_SIMULATION, FORWARD_RECOVERY_MINIMUM_LOOP_INDUCTANCE, PREFERRED_SERIES, DAMPER_CHOICES, reflectedVoltage,
  type CapacitanceCurve, type DesignTargets, type Scenario, type Share, type SwitchControl,
} from '../circuit/scenario.js';
import {
  CONTROL_FIELD_PATHS, blocksOfBlock, fieldAt, fieldsOfBlock,
  type CurveFieldMetadata, type EnumFieldMetadata, type FieldMetadata, type FieldPresence, type NumberFieldMetadata, type ShareFieldMetadata,
} from './field-metadata.js';
import { describeFound, formatPath, issueAt, issueAtField, type PathKey, type ValidationIssue } from './issues.js';

const RANGE_TEXT: Record<NumberFieldMetadata['range'], string> = {
  positive: 'greater than 0',
  'non-negative': '0 or more',
  fraction: 'between 0 and 1 (exclusive)',
  whole: '1 or more (a whole number)',
  any: 'of any sign',
};

function rangeText(field: NumberFieldMetadata): string {
  return field.bounds
    ? `${field.range === 'whole' ? 'a whole number' : 'a value'} from ${field.bounds[0]} to ${field.bounds[1]}`
    : `a value ${RANGE_TEXT[field.range]}`;
}

function inRange(value: number, range: NumberFieldMetadata['range']): boolean {
  switch (range) {
    case 'positive': return value > 0;
    case 'non-negative': return value >= 0;
    case 'fraction': return value > 0 && value < 1;
    case 'whole': return Number.isInteger(value) && value >= 1;
    case 'any': return true;
  }
}

/** Whether a number lies within a field's range and bounds. */
export function withinFieldRange(value: number, field: NumberFieldMetadata): boolean {
  return inRange(value, field.range) && (!field.bounds || (value >= field.bounds[0] && value <= field.bounds[1]));
}

/** "a number in H greater than 0": what a required number field expects. */
export function numberExpectation(field: NumberFieldMetadata): string {
  const unit = field.unit === '' ? '' : ` in ${field.unit}`;
  return `a number${unit} ${rangeText(field).replace(/^a value /, '')}`;
}

/** What a number or an SI string is in JSON; the JSON Schema shows this for every numeric field. */
const siInput = (): z.ZodUnion<[z.ZodNumber, z.ZodString]> => z.union([z.number(), z.string()]);

/** Metadata for the JSON Schema: title, help, unit, default (editors show them). */
function describeField(field: FieldMetadata): Record<string, unknown> {
  const meta: Record<string, unknown> = { title: field.label, description: field.help };
  if (field.unit !== '') meta.unit = field.unit;
  return meta;
}

/** The message for a value that is neither a number nor a string, or that is missing. */
function wrongNumberType(field: NumberFieldMetadata, input: unknown): string {
  if (input === undefined) return `expected ${numberExpectation(field)}, found nothing (the field is required)`;
  const parsed = parseSiNumber(input, field.unit);
  return `expected ${parsed.ok ? numberExpectation(field) : parsed.expected}, found ${describeFound(input)}`;
}

const isKind = <K extends FieldMetadata['kind']>(field: FieldMetadata, kind: K): field is Extract<FieldMetadata, { kind: K }> => field.kind === kind;

/** A field's metadata; the schema and the table must agree on its kind and presence (checked when the module loads). */
function metadataOf<K extends FieldMetadata['kind']>(path: string, kind: K, presence: FieldPresence): Extract<FieldMetadata, { kind: K }> {
  const field = fieldAt(path);
  if (field && isKind(field, kind) && field.presence === presence) return field;
  throw new Error(`field table and schema disagree at ${path}: the schema wants a ${presence} ${kind}`);
}

function numberWithMessages(field: NumberFieldMetadata) {
  return z.union([z.number(), z.string()], { error: (issue) => wrongNumberType(field, issue.input) })
    .transform((value, ctx): number => {
      const parsed = parseSiNumber(value, field.unit);
      if (!parsed.ok) {
        ctx.addIssue({ code: 'custom', message: `expected ${parsed.expected}, found ${describeFound(value)}`, input: value });
        return z.NEVER;
      }
      if (!withinFieldRange(parsed.value, field)) {
        ctx.addIssue({ code: 'custom', message: `expected ${rangeText(field)}, found ${describeFound(value)}`, input: value });
        return z.NEVER;
      }
      return parsed.value;
    })
    .meta(describeField(field));
}

/** A number field that must be given. */
const requiredNumber = (path: string) => numberWithMessages(metadataOf(path, 'number', 'required'));
/** A number field filled with its default when absent. */
function defaultedNumber(path: string) {
  const field = metadataOf(path, 'number', 'defaulted');
  return numberWithMessages(field).default(field.defaultValue ?? 0);
}
/** A number field whose absence means something of its own. */
const optionalNumber = (path: string) => numberWithMessages(metadataOf(path, 'number', 'optional')).optional();

const PERCENT = /^\s*(\d{1,3}(?:\.\d{1,6})?)\s*%\s*$/;

function shareField(path: string) {
  const field: ShareFieldMetadata = metadataOf(path, 'share', 'defaulted');
  const expected = `a value in ${field.unit} (a number or a string with an SI prefix) or a percentage such as "3%" (at most ${field.maximumPercent} %)`;
  return z.union([z.number(), z.string()], { error: (issue) => `expected ${expected}, found ${describeFound(issue.input)}` })
    .transform((value, ctx): Share => {
      const percent = typeof value === 'string' ? PERCENT.exec(value) : null;
      if (percent && Number(percent[1]) <= field.maximumPercent) return { kind: 'fraction', value: Number(percent[1]) / 100 };
      const parsed = percent ? undefined : parseSiNumber(value, field.unit);
      if (parsed?.ok && parsed.value >= 0) return { kind: 'absolute', value: parsed.value };
      ctx.addIssue({ code: 'custom', message: `expected ${expected}, found ${describeFound(value)}`, input: value });
      return z.NEVER;
    })
    .default(field.defaultValue)
    .meta(describeField(field));
}

/** A field with a fixed list of words, the list held to the field table's. */
function enumField<const Options extends readonly [string, ...string[]]>(path: string, options: Options) {
  const field: EnumFieldMetadata = metadataOf(path, 'enum', 'defaulted');
  if (field.options.join() !== options.join()) throw new Error(`field table and schema disagree on the options of ${path}`);
  return z.enum(options, { error: (issue) => `expected one of ${field.options.join(', ')}, found ${describeFound(issue.input)}` })
    .default(options.find((name) => name === field.defaultValue) ?? options[0])
    .meta(describeField(field));
}

const seriesField = (path: string) => enumField(path, PREFERRED_SERIES);

function nameField() {
  const field = metadataOf('name', 'string', 'required');
  const message = (input: unknown): string => `expected a non-empty text, found ${describeFound(input)}`;
  return z.string({ error: (issue) => message(issue.input) })
    .refine((text) => text.trim() !== '', { error: (issue) => message(issue.input) })
    .meta(describeField(field));
}

/** Datasheet points [[V, C], …] or a constant; the points' own positions are in the issues' paths. */
function curveField(path: string) {
  const field: CurveFieldMetadata = metadataOf(path, 'curve', 'required');
  const unit = field.unit;
  const expected = `a capacitance in ${unit} (a number or a string with an SI prefix) or datasheet points [[V, C], …] with voltages strictly increasing from 0`;
  // The points' shape for the JSON Schema only: the transform below checks them with its own messages.
  const { $schema: _dialect, ...pointJsonSchema } = z.toJSONSchema(z.tuple([siInput(), siInput()]), { target: 'draft-2020-12' });
  return z.union([z.number(), z.string(), z.array(z.unknown()).meta({ items: pointJsonSchema, minItems: field.minimumPoints, maxItems: field.maximumPoints })], {
    error: (issue) => `expected ${expected}, found ${issue.input === undefined ? 'nothing (the field is required)' : describeFound(issue.input)}`,
  }).transform((value, ctx): number | CapacitanceCurve => {
    const add = (at: readonly PathKey[], message: string, input: unknown): void => { ctx.addIssue({ code: 'custom', path: [...at], message, input }); };
    if (!Array.isArray(value)) {
      const parsed = parseSiNumber(value, unit);
      if (!parsed.ok) { add([], `expected ${expected}, found ${describeFound(value)}`, value); return z.NEVER; }
      if (!(parsed.value > 0)) { add([], `expected a capacitance greater than 0, found ${describeFound(value)}`, value); return z.NEVER; }
      return parsed.value;
    }
    if (value.length < field.minimumPoints || value.length > field.maximumPoints) {
      add([], `expected from ${field.minimumPoints} to ${field.maximumPoints} points [[V, C], …], found ${value.length} point${value.length === 1 ? '' : 's'}`, value);
      return z.NEVER;
    }
    const points: Array<readonly [number, number]> = [];
    let failed = false;
    value.forEach((point: unknown, i: number) => {
      const problem = (at: readonly PathKey[], message: string, input: unknown): void => { failed = true; add([i, ...at], message, input); };
      if (!Array.isArray(point) || point.length !== 2) { problem([], `expected a point [V, C], found ${describeFound(point)}`, point); return; }
      const [voltageInput, capacitanceInput]: unknown[] = point;
      const v = parseSiNumber(voltageInput, 'V');
      const c = parseSiNumber(capacitanceInput, unit);
      if (!v.ok) problem([0], `expected a voltage: ${v.expected}, found ${describeFound(voltageInput)}`, voltageInput);
      if (!c.ok) problem([1], `expected a capacitance: ${c.expected}, found ${describeFound(capacitanceInput)}`, capacitanceInput);
      else if (!(c.value > 0)) problem([1], `expected a capacitance greater than 0, found ${describeFound(capacitanceInput)}`, capacitanceInput);
      if (!v.ok || !c.ok) return;
      if (i === 0 && v.value !== 0) problem([0], `expected the curve to start at 0 V, found ${describeFound(voltageInput)}`, voltageInput);
      const last = points[points.length - 1];
      if (i > 0 && last && !(v.value > last[0])) problem([0], `expected a voltage above the previous point's ${last[0]} V (strictly increasing), found ${describeFound(voltageInput)}`, voltageInput);
      points.push([v.value, c.value]);
    });
    return failed ? z.NEVER : points;
  }).meta(describeField(field));
}

/** A block: an object whose unknown keys are issues (named one by one, see `toValidationIssues`). */
function block<Shape extends z.ZodRawShape>(path: string, shape: Shape) {
  return z.strictObject(shape, {
    error: (issue) => (issue.code === 'invalid_type' ? `expected an object, found ${describeFound(issue.input)}` : undefined),
  }).meta({ title: blockTitle(path) });
}
const blockTitle = (path: string): string => blocksOfBlock(parentOf(path)).find((b) => b.path === path)?.title ?? 'Scenario';
const parentOf = (path: string): string => path.slice(0, Math.max(0, path.lastIndexOf('.')));

const measuredRingBlock = block('design.measuredRing', {
  frequency: requiredNumber('design.measuredRing.frequency'),
  frequencyWithAddedCapacitor: requiredNumber('design.measuredRing.frequencyWithAddedCapacitor'),
  addedCapacitance: requiredNumber('design.measuredRing.addedCapacitance'),
});

/** The file as written, SI strings already numbers and defaults filled, before the control is chosen. */
export const scenarioFileSchema = block('', {
  $schema: z.string().optional().meta({ description: 'the JSON Schema this file follows, for editors; ignored by flyclamp' }),
  name: nameField(),
  supply: block('supply', { voltage: requiredNumber('supply.voltage') }),
  transformer: block('transformer', {
    magnetizingInductance: requiredNumber('transformer.magnetizingInductance'),
    leakageInductance: requiredNumber('transformer.leakageInductance'),
    turnsRatio: requiredNumber('transformer.turnsRatio'),
    primaryResistance: defaultedNumber('transformer.primaryResistance'),
    windingCapacitance: defaultedNumber('transformer.windingCapacitance'),
  }),
  output: block('output', {
    voltage: requiredNumber('output.voltage'),
    diodeDrop: defaultedNumber('output.diodeDrop'),
    power: optionalNumber('output.power'),
    efficiency: defaultedNumber('output.efficiency'),
  }),
  switch: block('switch', {
    frequency: requiredNumber('switch.frequency'),
    peakCurrent: optionalNumber('switch.peakCurrent'),
    dutyCycle: optionalNumber('switch.dutyCycle'),
    maxDutyCycle: defaultedNumber('switch.maxDutyCycle'),
    peakCurrentLimit: optionalNumber('switch.peakCurrentLimit'),
    drainCapacitance: curveField('switch.drainCapacitance'),
    onResistance: requiredNumber('switch.onResistance'),
    bodyDiodeDrop: defaultedNumber('switch.bodyDiodeDrop'),
    voltageRating: requiredNumber('switch.voltageRating'),
    avalancheVoltage: optionalNumber('switch.avalancheVoltage'),
    turnOffDelay: defaultedNumber('switch.turnOffDelay'),
    currentFallTime: defaultedNumber('switch.currentFallTime'),
  }),
  clamp: block('clamp', {
    resistance: requiredNumber('clamp.resistance'),
    capacitance: requiredNumber('clamp.capacitance'),
    diodeDrop: defaultedNumber('clamp.diodeDrop'),
    loopInductance: defaultedNumber('clamp.loopInductance'),
    loopResistance: defaultedNumber('clamp.loopResistance'),
    diodeCapacitance: defaultedNumber('clamp.diodeCapacitance'),
    diodeRecoveryTime: optionalNumber('clamp.diodeRecoveryTime'),
    diodeTransitTimeRatio: defaultedNumber('clamp.diodeTransitTimeRatio'),
    diodeForwardRecoveryVoltage: optionalNumber('clamp.diodeForwardRecoveryVoltage'),
    diodeForwardRecoveryTime: optionalNumber('clamp.diodeForwardRecoveryTime'),
    diodeForwardRecoveryRate: defaultedNumber('clamp.diodeForwardRecoveryRate'),
  }).optional(),
  damper: block('damper', {
    resistance: requiredNumber('damper.resistance'),
    capacitance: requiredNumber('damper.capacitance'),
  }).optional(),
  design: block('design', {
    inputVoltageMinimum: optionalNumber('design.inputVoltageMinimum'),
    inputVoltageMaximum: optionalNumber('design.inputVoltageMaximum'),
    leakageTolerance: defaultedNumber('design.leakageTolerance'),
    drainDerating: defaultedNumber('design.drainDerating'),
    clampRippleMinimum: defaultedNumber('design.clampRippleMinimum'),
    clampRippleMaximum: defaultedNumber('design.clampRippleMaximum'),
    resistorSeries: seriesField('design.resistorSeries'),
    capacitorSeries: seriesField('design.capacitorSeries'),
    ambientTemperature: defaultedNumber('design.ambientTemperature'),
    damper: enumField('design.damper', DAMPER_CHOICES),
    damperCapacitanceRatio: defaultedNumber('design.damperCapacitanceRatio'),
    voltageAllowance: shareField('design.voltageAllowance'),
    lossBudget: shareField('design.lossBudget'),
    resistorTolerance: defaultedNumber('design.resistorTolerance'),
    capacitorTolerance: defaultedNumber('design.capacitorTolerance'),
    peakCurrentTolerance: defaultedNumber('design.peakCurrentTolerance'),
    drainCapacitanceTolerance: defaultedNumber('design.drainCapacitanceTolerance'),
    measuredRing: measuredRingBlock.optional(),
  }).optional(),
  simulation: block('simulation', {
    relativeTolerance: defaultedNumber('simulation.relativeTolerance'),
    settleTolerance: defaultedNumber('simulation.settleTolerance'),
    maxCycles: defaultedNumber('simulation.maxCycles'),
    recordedCycles: defaultedNumber('simulation.recordedCycles'),
    samplesPerCycle: defaultedNumber('simulation.samplesPerCycle'),
  }).optional(),
});

/** The file's values: what the schema gives before the switch control is chosen. */
export type ScenarioFileValues = z.output<typeof scenarioFileSchema>;
/** What a scenario file may hold (numbers or SI strings), as an editor sees it. */
export type ScenarioFileInput = z.input<typeof scenarioFileSchema>;

/** Exactly one of the control fields, checked on whatever was given so it is reported with the rest. */
function controlChoiceIssue(given: unknown): { path: PathKey[]; message: string } | undefined {
  const blockOf = (key: string): Record<string, unknown> | undefined => {
    if (typeof given !== 'object' || given === null) return undefined;
    const inner: unknown = Reflect.get(given, key);
    return typeof inner === 'object' && inner !== null ? { ...inner } : undefined;
  };
  const switchBlock = blockOf('switch');
  if (!switchBlock) return undefined;
  const outputBlock = blockOf('output');
  const present = CONTROL_FIELD_PATHS.filter((path) => {
    const [blockName, key] = path.split('.');
    const source = blockName === 'switch' ? switchBlock : outputBlock;
    return source !== undefined && key !== undefined && source[key] !== undefined;
  });
  if (present.length === 1) return undefined;
  const at = present.length === 0 ? 'switch.peakCurrent' : present[1]!;
  return {
    path: at.split('.'),
    message: `expected exactly one of switch.peakCurrent (peak-current control), switch.dutyCycle (fixed duty) and output.power (peak-current control at the current that delivers it), found ${present.length === 0 ? 'none' : present.join(' and ')}`,
  };
}

/** The scenario as the program sees it: the control chosen, the optional blocks in place. */
function toScenario(file: ScenarioFileValues): Scenario {
  const { transformer, output, supply } = file;
  const sw = file.switch;
  // With the load given, the peak current starts at the energy relation's estimate; the settled
  // simulation refines it before a run (src/simulation/operating-point.ts).
  const peakCurrent = output.power !== undefined
    ? peakCurrentForPower({
      power: output.power / output.efficiency, magnetizingInductance: transformer.magnetizingInductance,
      frequency: sw.frequency, supplyVoltage: supply.voltage,
      reflectedVoltage: transformer.turnsRatio * (output.voltage + output.diodeDrop),
    }).peakCurrent
    : sw.peakCurrent;
  const scenario: Scenario = {
    name: file.name,
    supply: { voltage: supply.voltage },
    transformer: { ...transformer },
    output: {
      voltage: output.voltage, diodeDrop: output.diodeDrop, efficiency: output.efficiency,
      ...(output.power !== undefined ? { power: output.power } : {}),
    },
    switch: {
      frequency: sw.frequency,
      control: chooseControl(peakCurrent, sw.dutyCycle, sw.maxDutyCycle),
      drainCapacitance: sw.drainCapacitance,
      onResistance: sw.onResistance,
      bodyDiodeDrop: sw.bodyDiodeDrop,
      voltageRating: sw.voltageRating,
      ...(sw.avalancheVoltage !== undefined ? { avalancheVoltage: sw.avalancheVoltage } : {}),
      ...(sw.peakCurrentLimit !== undefined ? { peakCurrentLimit: sw.peakCurrentLimit } : {}),
      turnOffDelay: sw.turnOffDelay,
      currentFallTime: sw.currentFallTime,
    },
    simulation: file.simulation ?? { ...DEFAULT_SIMULATION },
  };
  if (file.design) scenario.design = designTargets(file.design);
  if (file.clamp) {
    const { diodeRecoveryTime, diodeForwardRecoveryVoltage, diodeForwardRecoveryTime, ...always } = file.clamp;
    scenario.clamp = {
      ...always,
      ...(diodeRecoveryTime !== undefined ? { diodeRecoveryTime } : {}),
      ...(diodeForwardRecoveryVoltage !== undefined ? { diodeForwardRecoveryVoltage } : {}),
      ...(diodeForwardRecoveryTime !== undefined ? { diodeForwardRecoveryTime } : {}),
    };
  }
  if (file.damper) scenario.damper = { ...file.damper };
  return scenario;
}

function chooseControl(peakCurrent: number | undefined, dutyCycle: number | undefined, maxDutyCycle: number): SwitchControl {
  if (peakCurrent !== undefined) return { kind: 'peak-current', peakCurrent, maxDutyCycle };
  if (dutyCycle !== undefined) return { kind: 'fixed-duty', dutyCycle };
  // The control-choice refinement runs before this transform and stops it when neither is given.
  throw new Error('no switch control after the control-choice check');
}

function designTargets(design: NonNullable<ScenarioFileValues['design']>): DesignTargets {
  const { inputVoltageMinimum, inputVoltageMaximum, measuredRing, ...always } = design;
  return {
    ...always,
    ...(inputVoltageMinimum !== undefined ? { inputVoltageMinimum } : {}),
    ...(inputVoltageMaximum !== undefined ? { inputVoltageMaximum } : {}),
    ...(measuredRing !== undefined ? { measuredRing } : {}),
  };
}

const fmt = (x: number): string => Number(x.toPrecision(4)).toString();

/** Design targets that contradict each other. */
function designIssues(design: DesignTargets | undefined): ValidationIssue[] {
  if (!design) return [];
  const issues: ValidationIssue[] = [];
  if (design.clampRippleMinimum > design.clampRippleMaximum) {
    issues.push(issueAtField('design.clampRippleMinimum', `expected at most design.clampRippleMaximum (${design.clampRippleMaximum}), found ${design.clampRippleMinimum}`));
  }
  if (design.inputVoltageMinimum !== undefined && design.inputVoltageMaximum !== undefined && design.inputVoltageMinimum > design.inputVoltageMaximum) {
    issues.push(issueAtField('design.inputVoltageMinimum', `expected at most design.inputVoltageMaximum (${design.inputVoltageMaximum} V), found ${design.inputVoltageMinimum} V`));
  }
  const ring = design.measuredRing;
  if (ring && ring.frequencyWithAddedCapacitor >= ring.frequency) {
    issues.push(issueAtField('design.measuredRing.frequencyWithAddedCapacitor', `expected a frequency below design.measuredRing.frequency (${ring.frequency} Hz): an added capacitor lowers the ring, found ${ring.frequencyWithAddedCapacitor} Hz`));
  }
  return issues;
}

/** Inputs that parse but describe no circuit with a steady state (issues), or an unusual one (warnings). */
export function physicsChecks(s: Scenario): { issues: ValidationIssue[]; warnings: ValidationIssue[] } {
  const issues: ValidationIssue[] = [];
  const warnings: ValidationIssue[] = [];
  const vin = s.supply.voltage;
  const vr = reflectedVoltage(s);
  const { magnetizingInductance: lm, leakageInductance: llk, primaryResistance: rp } = s.transformer;
  const period = 1 / s.switch.frequency;
  if (llk >= lm) {
    issues.push(issueAtField('transformer.leakageInductance', `expected a leakage inductance well below the magnetizing inductance (${fmt(lm)} H), found ${fmt(llk)} H`));
  }
  const control = s.switch.control;
  if (control.kind === 'fixed-duty') {
    const d = control.dutyCycle;
    // Volt-second balance: with the output held, the core resets within the off time only if
    // D·Vin < (1 − D)·VR; otherwise (continuous conduction) the magnetizing current walks away.
    if (d * vin >= (1 - d) * vr) {
      issues.push(issueAtField('switch.dutyCycle', `expected a duty cycle below ${fmt(vr / (vin + vr))} so that the core resets each period (discontinuous conduction); found ${fmt(d)}, which is continuous conduction, where fixed duty with a fixed output has no steady state: lower the duty or use switch.peakCurrent`));
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
        ? issueAtField('switch.peakCurrent', `expected a peak current the primary can reach within switch.maxDutyCycle of the period (at most about ${fmt(limit)} A here), found ${fmt(ipk)} A`)
        : issueAtField('output.power', `expected a load the primary can deliver within switch.maxDutyCycle of the period: it needs about ${fmt(ipk)} A at the peak (at most about ${fmt(limit)} A here), found ${fmt(s.output.power)} W`));
    }
  }
  const av = s.switch.avalancheVoltage;
  if (av !== undefined && av <= vin + vr) {
    issues.push(issueAtField('switch.avalancheVoltage', `expected a breakdown voltage above Vin + VR = ${fmt(vin + vr)} V (the drain settles there every cycle), found ${fmt(av)} V`));
  } else if (av !== undefined && av < s.switch.voltageRating) {
    warnings.push(issueAtField('switch.avalancheVoltage', `a breakdown voltage ${fmt(av)} V below the rating ${fmt(s.switch.voltageRating)} V is unusual (typically 1.1–1.3 × the rating, common practice)`));
  }
  if (s.switch.turnOffDelay > 0 && control.kind !== 'peak-current') {
    warnings.push(issueAtField('switch.turnOffDelay', 'the delay applies to peak-current control only; with a fixed duty the switch opens at D·T'));
  }
  if (s.switch.turnOffDelay + s.switch.currentFallTime >= 0.5 * period) {
    issues.push(issueAtField(s.switch.currentFallTime > s.switch.turnOffDelay ? 'switch.currentFallTime' : 'switch.turnOffDelay', `expected switch.turnOffDelay + switch.currentFallTime well below half the period (${fmt(0.5 * period)} s), found ${fmt(s.switch.turnOffDelay + s.switch.currentFallTime)} s`));
  }
  const clamp = s.clamp;
  if (clamp) {
    const vfp = clamp.diodeForwardRecoveryVoltage, tfr = clamp.diodeForwardRecoveryTime;
    if ((vfp === undefined) !== (tfr === undefined)) {
      issues.push(issueAtField(vfp !== undefined ? 'clamp.diodeForwardRecoveryTime' : 'clamp.diodeForwardRecoveryVoltage', 'expected clamp.diodeForwardRecoveryVoltage and clamp.diodeForwardRecoveryTime together (the datasheet gives VFP and tfr as a pair), found only one of them'));
    } else if (vfp !== undefined && vfp <= clamp.diodeDrop) {
      issues.push(issueAtField('clamp.diodeForwardRecoveryVoltage', `expected a peak forward voltage above clamp.diodeDrop (${fmt(clamp.diodeDrop)} V), found ${fmt(vfp)} V`));
    } else if (vfp !== undefined && clamp.loopInductance === 0) {
      warnings.push(issueAtField('clamp.loopInductance', `forward recovery needs a loop inductance (the diode's modulated resistance against Coss alone is stiff): ${FORWARD_RECOVERY_MINIMUM_LOOP_INDUCTANCE * 1e9} nH is assumed; give the board's value`));
    }
  }
  if (s.switch.voltageRating <= vin + vr) {
    warnings.push(issueAtField('switch.voltageRating', `the rating ${fmt(s.switch.voltageRating)} V is not above Vin + VR = ${fmt(vin + vr)} V: no clamp can keep the drain under it`));
  }
  return { issues, warnings };
}

/**
 * The whole contract for a scenario: the file's fields, the control choice (reported together with
 * the fields' issues), then the scenario with its design and physics checks as refinements.
 */
export const scenarioSchema = scenarioFileSchema
  .superRefine((given, ctx) => {
    const issue = controlChoiceIssue(given);
    if (issue) ctx.addIssue({ code: 'custom', path: issue.path, message: issue.message, input: given });
  }, { when: () => true })
  .transform(toScenario)
  .superRefine((scenario, ctx) => {
    for (const issue of [...designIssues(scenario.design), ...physicsChecks(scenario).issues]) {
      ctx.addIssue({ code: 'custom', path: issue.pathKeys, message: issue.message, input: undefined });
    }
  });

/** The names a block accepts, in the file's order, as the unknown-field message lists them. */
function knownKeys(blockPath: string): string[] {
  const last = (path: string): string => path.slice(path.lastIndexOf('.') + 1);
  return [...fieldsOfBlock(blockPath).map((f) => last(f.path)), ...blocksOfBlock(blockPath).map((b) => last(b.path))];
}

/** The value at a path in the input, for quoting an unknown field's value. */
function valueAt(input: unknown, keys: readonly PathKey[]): unknown {
  let at: unknown = input;
  for (const key of keys) {
    if (typeof at !== 'object' || at === null) return undefined;
    at = Reflect.get(at, key);
  }
  return at;
}

/** zod's issues as the program reports them: an unknown-keys issue becomes one issue per key. */
export function toValidationIssues(zodIssues: readonly z.core.$ZodIssue[], input: unknown): ValidationIssue[] {
  const issues: ValidationIssue[] = [];
  for (const zodIssue of zodIssues) {
    const keys = zodIssue.path.filter((key): key is PathKey => typeof key !== 'symbol');
    if (zodIssue.code === 'unrecognized_keys') {
      const known = knownKeys(keys.filter((key) => typeof key === 'string').join('.')).join(', ');
      for (const key of zodIssue.keys) {
        issues.push(issueAt([...keys, key], `unknown field (expected one of: ${known}), found ${describeFound(valueAt(input, [...keys, key]))}`));
      }
    } else {
      issues.push(issueAt(keys, zodIssue.message));
    }
  }
  return issues;
}

export { formatPath };
