// The same circuit with ideal, constant parts: what the model computed before real parts existed.
// A reference for the cost of real parts and for hand formulas that assume ideal parts.

import { reflectedVoltage, type Scenario } from '../circuit/scenario.js';
import { DrainCapacitance } from './drain-capacitance.js';

/**
 * Coss becomes the constant node capacitance at Vin + VR read off the curve (the single constant
 * that errs least on the peak), winding capacitance folded in; the clamp diode becomes ideal with no
 * loop; no avalanche, delay or current fall.
 */
export function withIdealParts(s: Scenario): Scenario {
  const node = new DrainCapacitance(s.switch.drainCapacitance, s.transformer.windingCapacitance);
  const { avalancheVoltage: _avalanche, ...sw } = s.switch;
  const out: Scenario = {
    ...s,
    transformer: { ...s.transformer, windingCapacitance: 0 },
    switch: { ...sw, drainCapacitance: node.at(s.supply.voltage + reflectedVoltage(s)), turnOffDelay: 0, currentFallTime: 0 },
  };
  if (s.clamp) {
    const { diodeRecoveryTime: _trr, diodeForwardRecoveryVoltage: _vfp, diodeForwardRecoveryTime: _tfr, ...clamp } = s.clamp;
    out.clamp = { ...clamp, loopInductance: 0, diodeCapacitance: 0 };
  }
  return out;
}

/**
 * The same circuit with every part's value held constant: Coss becomes its value at Vin + VR and
 * the clamp diode's forward-recovery resistance (which falls with its charge) is left out. The
 * loop, the junction capacitance, reverse recovery (a linear charge model), avalanche, delay and
 * current fall stay, so each mode is linear and the physics to resolve (the loop's fast ring, the
 * diode's recovery) is the same: the reference for what nonlinearity alone costs.
 */
export function withConstantParts(s: Scenario): Scenario {
  const coss = new DrainCapacitance(s.switch.drainCapacitance, 0);
  const out: Scenario = { ...s, switch: { ...s.switch, drainCapacitance: coss.at(s.supply.voltage + reflectedVoltage(s)) } };
  if (s.clamp) {
    const { diodeForwardRecoveryVoltage: _vfp, diodeForwardRecoveryTime: _tfr, ...clamp } = s.clamp;
    out.clamp = clamp;
  }
  return out;
}
