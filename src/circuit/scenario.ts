// The circuit description as the rest of the program sees it: plain SI numbers, validated.

export interface Scenario {
  name: string;
  supply: { voltage: number };
  transformer: {
    magnetizingInductance: number;
    leakageInductance: number;
    turnsRatio: number;
    primaryResistance: number;
  };
  output: { voltage: number; diodeDrop: number };
  switch: {
    frequency: number;
    control: SwitchControl;
    drainCapacitance: number;
    onResistance: number;
    bodyDiodeDrop: number;
    voltageRating: number;
  };
  clamp?: ClampParts;
  damper?: DamperParts;
  /** Targets for `flyclamp design`; ignored by `simulate`. */
  design?: DesignTargets;
  simulation: SimulationSettings;
}

export const PREFERRED_SERIES = ['E12', 'E24', 'E96'] as const;
export type PreferredSeriesName = (typeof PREFERRED_SERIES)[number];

export interface DesignTargets {
  /** Input range, V; the worst case is the top. Both default to supply.voltage. */
  inputVoltageMinimum?: number;
  inputVoltageMaximum?: number;
  /** Leakage inductance spread as a fraction (0.2 for ±20 %); the worst case is the top. */
  leakageTolerance: number;
  /** Peak drain voltage allowed, as a fraction of the rating (0.8: common practice). */
  drainDerating: number;
  clampRippleMinimum: number;
  clampRippleMaximum: number;
  resistorSeries: PreferredSeriesName;
  capacitorSeries: PreferredSeriesName;
  /** °C, for the resistor power derating. */
  ambientTemperature: number;
  /** Damper capacitor as a multiple of the drain capacitance. */
  damperCapacitanceRatio: number;
  /** Ring measured on a sample, alone and with a known capacitor added across drain-source. */
  measuredRing?: { frequency: number; frequencyWithAddedCapacitor: number; addedCapacitance: number };
}

export const DEFAULT_DESIGN: Omit<DesignTargets, 'inputVoltageMinimum' | 'inputVoltageMaximum' | 'measuredRing'> = {
  leakageTolerance: 0.2,
  drainDerating: 0.8,
  clampRippleMinimum: 0.05,
  clampRippleMaximum: 0.1,
  resistorSeries: 'E24',
  capacitorSeries: 'E12',
  ambientTemperature: 50,
  damperCapacitanceRatio: 4,
};

export type SwitchControl =
  | { kind: 'peak-current'; peakCurrent: number; maxDutyCycle: number }
  | { kind: 'fixed-duty'; dutyCycle: number };

export interface ClampParts { resistance: number; capacitance: number; diodeDrop: number }
export interface DamperParts { resistance: number; capacitance: number }

export interface SimulationSettings {
  /** odex relative tolerance; absolute tolerances are this times each state's scale. */
  relativeTolerance: number;
  /** Settled when the period-start state changes by less than this, relative to its scale. */
  settleTolerance: number;
  maxCycles: number;
  /** Settled cycles kept at full resolution for the waveform and the metrics. */
  recordedCycles: number;
  /** Waveform samples per switching period (raised automatically to resolve the ring). */
  samplesPerCycle: number;
}

export const DEFAULT_SIMULATION: SimulationSettings = {
  relativeTolerance: 1e-7,
  settleTolerance: 1e-5,
  maxCycles: 2000,
  recordedCycles: 3,
  samplesPerCycle: 2000,
};

export type VariantName = 'bare' | 'clamp' | 'damped';
export const VARIANT_NAMES: readonly VariantName[] = ['bare', 'clamp', 'damped'];

/** Variants a scenario supports: `bare` always; `clamp` with a clamp block; `damped` with a damper block. */
export function availableVariants(scenario: Scenario): VariantName[] {
  const names: VariantName[] = ['bare'];
  if (scenario.clamp) names.push('clamp');
  if (scenario.damper) names.push('damped');
  return names;
}

/** Reflected output voltage VR = n·(Vo + Vf), in volts. */
export function reflectedVoltage(scenario: Scenario): number {
  return scenario.transformer.turnsRatio * (scenario.output.voltage + scenario.output.diodeDrop);
}
