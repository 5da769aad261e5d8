// The scenario file's fields as the form shows them, in the file's grouping. `path` is the scenario
// path the server names in its issues, so one list drives the inputs, the saved file and where an
// error is shown. `fallback` is the default of an optional field (shown as the placeholder).

export type ControlKind = 'peak-current' | 'fixed-duty';

export interface FormField {
  path: string;
  label: string;
  /** The unit shown beside the input: an SI symbol, or '0–1', '×', '°C', '' for a plain number. */
  unit: string;
  fallback?: string;
  /** What leaving an optional field out means, shown as its placeholder. */
  absent?: string;
  when?: ControlKind;
  curve?: boolean;
  choices?: readonly string[];
  text?: boolean;
}
export type FormItem = FormField | { heading: string } | { control: true };

export interface FormGroup {
  key: string;
  title: string;
  optionalBlock?: boolean;
  collapsible?: boolean;
  note?: string;
  fields: FormItem[];
}

export const isField = (item: FormItem): item is FormField => 'path' in item;

export const GROUPS: readonly FormGroup[] = [
  { key: 'supply', title: 'Supply', fields: [
    { path: 'supply.voltage', label: 'Input voltage (top of the range)', unit: 'V' },
  ] },
  { key: 'transformer', title: 'Transformer', fields: [
    { path: 'transformer.magnetizingInductance', label: 'Magnetizing inductance, primary', unit: 'H' },
    { path: 'transformer.leakageInductance', label: 'Leakage inductance, primary side', unit: 'H' },
    { path: 'transformer.turnsRatio', label: 'Turns ratio Np : Ns', unit: '' },
    { path: 'transformer.primaryResistance', label: 'Primary winding resistance', unit: 'Ω', fallback: '0' },
    { path: 'transformer.windingCapacitance', label: 'Winding capacitance across the primary', unit: 'F', fallback: '0' },
  ] },
  { key: 'output', title: 'Output', fields: [
    { path: 'output.voltage', label: 'Regulated output voltage', unit: 'V' },
    { path: 'output.diodeDrop', label: 'Output rectifier forward drop', unit: 'V', fallback: '0' },
    { path: 'output.power', label: 'Load power, instead of a peak current', unit: 'W' },
    { path: 'output.efficiency', label: 'Share of the stored energy reaching the load', unit: '0–1', fallback: '0.85' },
  ] },
  { key: 'switch', title: 'Switch', fields: [
    { path: 'switch.frequency', label: 'Switching frequency', unit: 'Hz' },
    { control: true },
    { path: 'switch.peakCurrent', label: 'Primary current at turn-off', unit: 'A', when: 'peak-current' },
    { path: 'switch.maxDutyCycle', label: 'Maximum duty cycle', unit: '0–1', fallback: '0.9', when: 'peak-current' },
    { path: 'switch.peakCurrentLimit', label: 'Controller current limit (overload corner of a design)', unit: 'A', when: 'peak-current' },
    { path: 'switch.dutyCycle', label: 'Duty cycle', unit: '0–1', when: 'fixed-duty' },
    { path: 'switch.drainCapacitance', label: 'Drain–source capacitance', unit: 'F', curve: true },
    { path: 'switch.onResistance', label: 'On-resistance', unit: 'Ω' },
    { path: 'switch.bodyDiodeDrop', label: 'Body diode forward drop', unit: 'V', fallback: '0.7' },
    { path: 'switch.voltageRating', label: 'Rated drain–source voltage', unit: 'V' },
    { heading: 'Real parts (optional)' },
    { path: 'switch.avalancheVoltage', label: 'Breakdown (avalanche) voltage', unit: 'V', absent: 'none: no avalanche' },
    { path: 'switch.turnOffDelay', label: 'Delay from current limit to switch opening', unit: 's', fallback: '0' },
    { path: 'switch.currentFallTime', label: 'Drain current fall time at turn-off', unit: 's', fallback: '0' },
  ] },
  { key: 'clamp', title: 'Fit an RCD clamp', optionalBlock: true, note: 'diode from the drain into C ∥ R, returned to the input rail', fields: [
    { path: 'clamp.resistance', label: 'Clamp resistor', unit: 'Ω' },
    { path: 'clamp.capacitance', label: 'Clamp capacitor', unit: 'F' },
    { path: 'clamp.diodeDrop', label: 'Clamp diode forward drop', unit: 'V', fallback: '1.0' },
    { heading: 'Real parts (optional)' },
    { path: 'clamp.loopInductance', label: 'Stray inductance of the clamp loop', unit: 'H', fallback: '0' },
    { path: 'clamp.loopResistance', label: 'Clamp loop resistance (ESR, traces)', unit: 'Ω', fallback: '0' },
    { path: 'clamp.diodeCapacitance', label: 'Clamp diode junction capacitance', unit: 'F', fallback: '0' },
    { path: 'clamp.diodeRecoveryTime', label: 'Clamp diode reverse recovery time trr', unit: 's', absent: 'none: ideal diode' },
    { path: 'clamp.diodeTransitTimeRatio', label: 'Recovery model transit-time ratio TM/τ', unit: '', fallback: '0.1' },
    { path: 'clamp.diodeForwardRecoveryVoltage', label: 'Forward recovery peak voltage VFP (with tfr)', unit: 'V', absent: 'none' },
    { path: 'clamp.diodeForwardRecoveryTime', label: 'Forward recovery time tfr (with VFP)', unit: 's', absent: 'none' },
    { path: 'clamp.diodeForwardRecoveryRate', label: 'di/dt of the VFP and tfr test', unit: 'A/s', fallback: '1e8' },
  ] },
  { key: 'damper', title: 'Fit an RC damper', optionalBlock: true, note: 'series R and C from the drain to ground', fields: [
    { path: 'damper.resistance', label: 'Damper resistor', unit: 'Ω' },
    { path: 'damper.capacitance', label: 'Damper capacitor', unit: 'F' },
  ] },
  { key: 'design', title: 'Design targets', collapsible: true,
    note: 'for sizing parts with flyclamp design; this simulation does not use them, the saved file keeps them', fields: [
    { path: 'design.inputVoltageMinimum', label: 'Input range, lowest', unit: 'V', fallback: 'supply' },
    { path: 'design.inputVoltageMaximum', label: 'Input range, highest', unit: 'V', fallback: 'supply' },
    { path: 'design.leakageTolerance', label: 'Leakage inductance spread (0.2 = ±20 %)', unit: '', fallback: '0.2' },
    { path: 'design.drainDerating', label: 'Allowed peak drain, fraction of rating', unit: '0–1', fallback: '0.8' },
    { path: 'design.clampRippleMinimum', label: 'Clamp ripple, lowest (fraction)', unit: '0–1', fallback: '0.05' },
    { path: 'design.clampRippleMaximum', label: 'Clamp ripple, highest (fraction)', unit: '0–1', fallback: '0.1' },
    { path: 'design.resistorSeries', label: 'Resistor values from', unit: '', choices: ['E12', 'E24', 'E96'], fallback: 'E24' },
    { path: 'design.capacitorSeries', label: 'Capacitor values from', unit: '', choices: ['E12', 'E24', 'E96'], fallback: 'E12' },
    { path: 'design.ambientTemperature', label: 'Ambient temperature', unit: '°C', fallback: '50' },
    { path: 'design.damperCapacitanceRatio', label: 'Damper capacitor, times drain capacitance', unit: '×', fallback: '4' },
    { path: 'design.voltageAllowance', label: 'Allowance kept below the derated limit, in volts or a percentage of the rating', unit: 'V', fallback: '3%' },
    { path: 'design.lossBudget', label: 'Clamp and damper loss budget, in watts or a percentage of the output', unit: 'W', fallback: '10%' },
    { path: 'design.resistorTolerance', label: 'Clamp resistor tolerance (0.05 = ±5 %)', unit: '', fallback: '0.05' },
    { path: 'design.capacitorTolerance', label: 'Clamp capacitor tolerance (0.1 = ±10 %)', unit: '', fallback: '0.10' },
    { path: 'design.peakCurrentTolerance', label: 'Current-sense threshold tolerance', unit: '', fallback: '0.07' },
    { path: 'design.drainCapacitanceTolerance', label: 'Drain capacitance spread', unit: '', fallback: '0.10' },
    { heading: 'Ring measured on a sample (optional, all three)' },
    { path: 'design.measuredRing.frequency', label: 'Ring frequency as measured', unit: 'Hz' },
    { path: 'design.measuredRing.frequencyWithAddedCapacitor', label: 'Ring with a capacitor added across drain–source', unit: 'Hz' },
    { path: 'design.measuredRing.addedCapacitance', label: 'That added capacitor', unit: 'F' },
  ] },
  { key: 'simulation', title: 'Solver settings', collapsible: true, fields: [
    { path: 'simulation.relativeTolerance', label: 'Relative tolerance', unit: '', fallback: '1e-7' },
    { path: 'simulation.settleTolerance', label: 'Settled when a cycle changes less than', unit: '', fallback: '1e-5' },
    { path: 'simulation.maxCycles', label: 'Cycle limit', unit: '', fallback: '2000' },
    { path: 'simulation.recordedCycles', label: 'Settled cycles recorded', unit: '', fallback: '3' },
    { path: 'simulation.samplesPerCycle', label: 'Waveform samples per cycle', unit: '', fallback: '2000' },
  ] },
];

export const NAME_FIELD: FormField = { path: 'name', label: 'Design name', unit: '', text: true };

/** Every field of the form, the name first. */
export const ALL_FIELDS: readonly FormField[] = [NAME_FIELD, ...GROUPS.flatMap((g) => g.fields.filter(isField))];

export function formField(path: string): FormField | undefined { return ALL_FIELDS.find((f) => f.path === path); }

/** Units in words, so a screen reader announces "in farads" rather than a bare letter. */
export const UNIT_WORDS: Readonly<Record<string, string>> = {
  V: 'volts', A: 'amperes', H: 'henries', F: 'farads', Hz: 'hertz', s: 'seconds', W: 'watts', 'Ω': 'ohms',
  'A/s': 'amperes per second', '°C': 'degrees Celsius',
};
export const RATIO_WORDS: Readonly<Record<string, string>> = { '': 'a plain number', '0–1': 'a fraction from 0 to 1', '×': 'a multiple' };
