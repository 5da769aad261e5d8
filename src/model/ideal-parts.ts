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
