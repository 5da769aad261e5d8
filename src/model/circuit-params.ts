// One variant's circuit, referred to the primary, in SI units.

import { reflectedVoltage, type ClampParts, type DamperParts, type Scenario, type SwitchControl, type VariantName } from '../circuit/scenario.js';

export interface CircuitParams {
  supplyVoltage: number;
  magnetizingInductance: number;
  leakageInductance: number;
  primaryResistance: number;
  /** VR = n·(Vo + Vf): the secondary seen from the primary while the output diode conducts. */
  reflectedVoltage: number;
  /** The part of VR that reaches the load, n·Vo (the rest is the output diode's drop). */
  reflectedLoadVoltage: number;
  onResistance: number;
  bodyDiodeDrop: number;
  drainCapacitance: number;
  clamp: ClampParts | null;
  damper: DamperParts | null;
  periodSeconds: number;
  control: SwitchControl;
}

export function circuitForVariant(scenario: Scenario, variant: VariantName): CircuitParams {
  return {
    supplyVoltage: scenario.supply.voltage,
    magnetizingInductance: scenario.transformer.magnetizingInductance,
    leakageInductance: scenario.transformer.leakageInductance,
    primaryResistance: scenario.transformer.primaryResistance,
    reflectedVoltage: reflectedVoltage(scenario),
    reflectedLoadVoltage: scenario.transformer.turnsRatio * scenario.output.voltage,
    onResistance: scenario.switch.onResistance,
    bodyDiodeDrop: scenario.switch.bodyDiodeDrop,
    drainCapacitance: scenario.switch.drainCapacitance,
    clamp: variant !== 'bare' && scenario.clamp ? scenario.clamp : null,
    damper: variant === 'damped' && scenario.damper ? scenario.damper : null,
    periodSeconds: 1 / scenario.switch.frequency,
    control: scenario.switch.control,
  };
}

/** Natural period of the leakage ring, 2π·√(Llk·Coss), in seconds: the fastest dynamics of the model. */
export function leakageRingPeriodSeconds(p: CircuitParams): number {
  return 2 * Math.PI * Math.sqrt(p.leakageInductance * p.drainCapacitance);
}

/** Scales for tolerances and the settle test: a current (A) and a voltage (V) typical of the circuit. */
export function stateScales(p: CircuitParams): { current: number; voltage: number } {
  const current = p.control.kind === 'peak-current'
    ? p.control.peakCurrent
    : (p.supplyVoltage * p.control.dutyCycle * p.periodSeconds) / (p.magnetizingInductance + p.leakageInductance);
  return { current, voltage: p.supplyVoltage + p.reflectedVoltage };
}
