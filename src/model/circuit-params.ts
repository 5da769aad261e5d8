// One variant's circuit, referred to the primary, in SI units, with the device models' parameters
// derived from the datasheet values in the scenario.

import { FORWARD_RECOVERY_MINIMUM_LOOP_INDUCTANCE, reflectedVoltage, type ClampParts, type DamperParts, type Scenario, type SwitchControl, type VariantName } from '../circuit/scenario.js';
import { DrainCapacitance } from './drain-capacitance.js';

/** Charge-control diode (Lauritzen & Ma, 1991): carrier lifetime τ and transit time TM, s. */
export interface RecoveryParams { lifetime: number; transitTime: number }

/**
 * Forward recovery (after Ma & Lauritzen, 1993): while the stored charge q builds up, a
 * conductivity-modulated resistance R0·Q0/(Q0 + q) adds its drop to the diode's.
 */
export interface ForwardRecoveryParams { resistance: number; charge: number }

export interface ClampParams extends ClampParts {
  /** The loop inductance used (forward recovery without one assumes a minimum). */
  loopInductance: number;
  recovery: RecoveryParams | null;
  forwardRecovery: ForwardRecoveryParams | null;
}

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
  /** Everything that charges with the drain: Coss(v), the winding capacitance, a lumped junction. */
  drainNode: DrainCapacitance;
  avalancheVoltage: number | null;
  /** s */
  turnOffDelay: number;
  /** s */
  currentFallTime: number;
  clamp: ClampParams | null;
  damper: DamperParts | null;
  periodSeconds: number;
  control: SwitchControl;
}

/**
 * trr/τ of the charge-control model in the usual test: forward IF, a step to reverse IR = IF, trr
 * ends when the reverse current has decayed to 0.25·IR. Storage phase until the junction charge
 * qE = qM + TM·i reaches 0: τ·ln(2/(1 + r)); then i = −qM/TM decays with τ·r/(1 + r): ln 4 of it.
 */
export function recoveryTimeOverLifetime(transitTimeRatio: number): number {
  const r = transitTimeRatio;
  return Math.log(2 / (1 + r)) + (r / (1 + r)) * Math.log(4);
}

/** The excess peaks at t* and has fallen to 10 % of its peak at s·t*, s the larger root of 2s/(1 + s²) = 0.1. */
export const FORWARD_RECOVERY_TIME_OVER_PEAK_TIME = 10 + Math.sqrt(99);

/**
 * R0 and Q0 from VFP and tfr at di/dt = a, for a current ramp i = a·t from zero with q = a·t²/2:
 * the excess a·t·R0/(1 + a·t²/(2·Q0)) peaks at t* = √(2·Q0/a) with R0·a·t*·½ = VFP − Vf.
 */
export function forwardRecoveryParams(peakVoltage: number, diodeDrop: number, recoveryTime: number, rate: number): ForwardRecoveryParams {
  const peakTime = recoveryTime / FORWARD_RECOVERY_TIME_OVER_PEAK_TIME;
  return { charge: (rate * peakTime * peakTime) / 2, resistance: (2 * (peakVoltage - diodeDrop)) / (rate * peakTime) };
}

function clampParams(c: ClampParts): ClampParams {
  const forward = c.diodeForwardRecoveryVoltage !== undefined && c.diodeForwardRecoveryTime !== undefined
    ? forwardRecoveryParams(c.diodeForwardRecoveryVoltage, c.diodeDrop, c.diodeForwardRecoveryTime, c.diodeForwardRecoveryRate)
    : null;
  const lifetime = c.diodeRecoveryTime === undefined ? null : c.diodeRecoveryTime / recoveryTimeOverLifetime(c.diodeTransitTimeRatio);
  const loopInductance = forward && c.loopInductance === 0 ? FORWARD_RECOVERY_MINIMUM_LOOP_INDUCTANCE : c.loopInductance;
  return {
    ...c,
    loopInductance,
    // A loop resistance belongs to the loop: with no loop inductance the branch has no series element.
    loopResistance: loopInductance > 0 ? c.loopResistance : 0,
    recovery: lifetime === null ? null : { lifetime, transitTime: c.diodeTransitTimeRatio * lifetime },
    forwardRecovery: forward,
  };
}

export function circuitForVariant(scenario: Scenario, variant: VariantName): CircuitParams {
  const clamp = variant !== 'bare' && scenario.clamp ? clampParams(scenario.clamp) : null;
  // Without a loop inductance the junction capacitance is lumped with the drain node.
  const lumpedJunction = clamp && clamp.loopInductance === 0 ? clamp.diodeCapacitance : 0;
  return {
    supplyVoltage: scenario.supply.voltage,
    magnetizingInductance: scenario.transformer.magnetizingInductance,
    leakageInductance: scenario.transformer.leakageInductance,
    primaryResistance: scenario.transformer.primaryResistance,
    reflectedVoltage: reflectedVoltage(scenario),
    reflectedLoadVoltage: scenario.transformer.turnsRatio * scenario.output.voltage,
    onResistance: scenario.switch.onResistance,
    bodyDiodeDrop: scenario.switch.bodyDiodeDrop,
    drainNode: new DrainCapacitance(scenario.switch.drainCapacitance, scenario.transformer.windingCapacitance + lumpedJunction),
    avalancheVoltage: scenario.switch.avalancheVoltage ?? null,
    turnOffDelay: scenario.switch.turnOffDelay,
    currentFallTime: scenario.switch.currentFallTime,
    clamp,
    damper: variant === 'damped' && scenario.damper ? scenario.damper : null,
    periodSeconds: 1 / scenario.switch.frequency,
    control: scenario.switch.control,
  };
}

/** Natural period of the leakage ring at the smallest node capacitance, 2π·√(Llk·Cmin), s. */
export function leakageRingPeriodSeconds(p: CircuitParams): number {
  return 2 * Math.PI * Math.sqrt(p.leakageInductance * p.drainNode.minimum());
}

/**
 * The fastest natural period in the circuit, s: the leakage ring, or the clamp loop against the
 * diode's junction capacitance (tens of times faster) when both are present.
 */
export function fastestRingPeriodSeconds(p: CircuitParams): number {
  const leakage = leakageRingPeriodSeconds(p);
  const c = p.clamp;
  if (!c || c.loopInductance === 0 || c.diodeCapacitance === 0) return leakage;
  return Math.min(leakage, 2 * Math.PI * Math.sqrt(c.loopInductance * c.diodeCapacitance));
}

/** Scales for tolerances and the settle test: a current (A) and a voltage (V) typical of the circuit. */
export function stateScales(p: CircuitParams): { current: number; voltage: number } {
  const current = p.control.kind === 'peak-current'
    ? p.control.peakCurrent
    : (p.supplyVoltage * p.control.dutyCycle * p.periodSeconds) / (p.magnetizingInductance + p.leakageInductance);
  return { current, voltage: p.supplyVoltage + p.reflectedVoltage };
}
