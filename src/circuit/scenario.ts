// The circuit description as the rest of the program sees it: plain SI numbers, validated.

export interface Scenario {
  name: string;
  supply: { voltage: number };
  transformer: {
    magnetizingInductance: number;
    leakageInductance: number;
    turnsRatio: number;
    primaryResistance: number;
    /** Capacitance across the primary winding (drain to the supply rail), F. */
    windingCapacitance: number;
  };
  output: {
    voltage: number;
    diodeDrop: number;
    /** The load, W, when the peak current is to be found from it (instead of switch.peakCurrent). */
    power?: number;
    /** Share of the magnetizing energy that reaches the load (what the model leaves out of the secondary). */
    efficiency: number;
  };
  switch: {
    frequency: number;
    control: SwitchControl;
    /** Drain-source capacitance: a constant (F) or datasheet points. */
    drainCapacitance: number | CapacitanceCurve;
    onResistance: number;
    bodyDiodeDrop: number;
    voltageRating: number;
    /** Where the transistor breaks down and holds the drain, V; absent: no avalanche. */
    avalancheVoltage?: number;
    /** The controller's current limit, A: the overload corner of a design. */
    peakCurrentLimit?: number;
    /** Comparator and driver delay from the peak current to the switch opening, s. */
    turnOffDelay: number;
    /** The channel current falls linearly to zero over this time after opening, s. */
    currentFallTime: number;
  };
  clamp?: ClampParts;
  damper?: DamperParts;
  /** Targets for `flyclamp design`; ignored by `simulate`. */
  design?: DesignTargets;
  simulation: SimulationSettings;
}

export const PREFERRED_SERIES = ['E12', 'E24', 'E96'] as const;
export const DAMPER_CHOICES = ['least-loss', 'always', 'never'] as const;
export type DamperChoice = (typeof DAMPER_CHOICES)[number];
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
  /** Whether the design fits the RC damper: the least-loss passing set decides, or always, or never. */
  damper: DamperChoice;
  /** Kept below the derated limit at every corner for what the model leaves out; V or a fraction of the rating. */
  voltageAllowance: Share;
  /** Clamp plus damper loss allowed at the worst-loss corner; W or a fraction of the output power. */
  lossBudget: Share;
  /** Part tolerances (fractions), taken in the direction that hurts at each corner. */
  resistorTolerance: number;
  capacitorTolerance: number;
  peakCurrentTolerance: number;
  drainCapacitanceTolerance: number;
  /** Ring measured on a sample, alone and with a known capacitor added across drain-source. */
  measuredRing?: { frequency: number; frequencyWithAddedCapacitor: number; addedCapacitance: number };
}

/** A value in its field's unit, or a fraction of a reference named by the field (a rating, the output power). */
export type Share = { kind: 'absolute'; value: number } | { kind: 'fraction'; value: number };

export const DEFAULT_DESIGN: Omit<DesignTargets, 'inputVoltageMinimum' | 'inputVoltageMaximum' | 'measuredRing'> = {
  /**
   * 3 % of the rating for what the model leaves out: temperature (the breakdown voltage and Coss move
   * with it), core loss, a probe's view of the drain, spreads not entered as tolerances (common practice).
   */
  voltageAllowance: { kind: 'fraction', value: 0.03 },
  /** A clamp plus damper above a tenth of the output says: revisit the leakage or the reflected voltage (common practice). */
  lossBudget: { kind: 'fraction', value: 0.1 },
  /** Thick-film chip resistors ±5 %, X7R capacitors ±10 %, a controller's current-sense threshold ±7 %, Coss ±10 % (common practice; from memory for the controller). */
  resistorTolerance: 0.05,
  capacitorTolerance: 0.1,
  peakCurrentTolerance: 0.07,
  drainCapacitanceTolerance: 0.1,
  leakageTolerance: 0.2,
  drainDerating: 0.8,
  clampRippleMinimum: 0.05,
  clampRippleMaximum: 0.1,
  resistorSeries: 'E24',
  capacitorSeries: 'E12',
  ambientTemperature: 50,
  damperCapacitanceRatio: 4,
  damper: 'least-loss',
};

export type SwitchControl =
  | { kind: 'peak-current'; peakCurrent: number; maxDutyCycle: number }
  | { kind: 'fixed-duty'; dutyCycle: number };

/** Datasheet points [voltage V, capacitance F], voltages strictly increasing from 0; ln C is linear between points. */
export type CapacitanceCurve = ReadonlyArray<readonly [number, number]>;

export interface ClampParts {
  resistance: number;
  capacitance: number;
  diodeDrop: number;
  /** Stray inductance in series with the clamp diode, H (0: none). */
  loopInductance: number;
  /** Series resistance of that loop (capacitor ESR, traces), Ω; with the loop inductance only. */
  loopResistance: number;
  /** The clamp diode's junction capacitance while it blocks, F (0: none). */
  diodeCapacitance: number;
  /** Datasheet reverse-recovery time at IF = IR, recovered at 0.25·IR, s; absent: an ideal diode. */
  diodeRecoveryTime?: number;
  /** Transit time over carrier lifetime, TM/τ, of the charge-control diode model. */
  diodeTransitTimeRatio: number;
  /** Datasheet forward-recovery peak voltage VFP, V, and time tfr, s (both or neither). */
  diodeForwardRecoveryVoltage?: number;
  diodeForwardRecoveryTime?: number;
  /** The datasheet's di/dt for VFP and tfr, A/s. */
  diodeForwardRecoveryRate: number;
}
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

/** Defaults of the optional part fields: ideal parts, as before these fields existed. */
export const DEFAULT_CLAMP_EXTRAS = {
  loopInductance: 0,
  loopResistance: 0,
  diodeCapacitance: 0,
  /** TM/τ = 0.1: an assumption (the survey behind the model saw clamp loss move up to 1.6× across this ratio); set it per diode. */
  diodeTransitTimeRatio: 0.1,
  /** 100 A/µs, a usual datasheet condition for VFP (from memory). */
  diodeForwardRecoveryRate: 1e8,
} as const;

/** 0.85: a small flyback's usual share of the stored energy that reaches the load (common practice). */
export const DEFAULT_OUTPUT_EFFICIENCY = 0.85;

/** Loop inductance assumed when forward recovery is given without one, H: a few nH always exist on a board (common practice). */
export const FORWARD_RECOVERY_MINIMUM_LOOP_INDUCTANCE = 1e-9;

/** Reflected output voltage VR = n·(Vo + Vf), in volts. */
export function reflectedVoltage(scenario: Scenario): number {
  return scenario.transformer.turnsRatio * (scenario.output.voltage + scenario.output.diodeDrop);
}
