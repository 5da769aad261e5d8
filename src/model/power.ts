// Instantaneous powers (W) of every source and sink, for energy accounting over a period.

import type { CircuitParams } from './circuit-params.js';
import type { ModeModel } from './modes.js';
import { IC, IM, IP, VC, VJ, VS } from './state.js';

export const POWER_TERMS = [
  'supply', 'load', 'outputDiode', 'primaryResistance', 'switchChannel', 'switchTurnOff',
  'clampResistor', 'clampDiode', 'clampLoopResistance', 'bodyDiode', 'avalanche', 'damperResistor',
] as const;
export type PowerTerm = (typeof POWER_TERMS)[number];
export const powerIndex = (term: PowerTerm): number => POWER_TERMS.indexOf(term);

/** Writes each term's instantaneous power into `out` (indexed like POWER_TERMS). */
export function instantaneousPowers(p: CircuitParams, mm: ModeModel, x: ArrayLike<number>, out: number[]): void {
  const s = mm.signals(x);
  const ip = x[IP]!;
  const vd = s.drainVoltage;
  const vc = x[VC]!;
  // The clamp branch returns its current to the supply rail.
  out[0] = p.supplyVoltage * (ip - s.clampBranchCurrent);
  out[1] = p.reflectedLoadVoltage * s.secondaryCurrent;
  out[2] = (p.reflectedVoltage - p.reflectedLoadVoltage) * s.secondaryCurrent;
  out[3] = p.primaryResistance * ip * ip;
  out[4] = s.switchCurrent * vd;
  out[5] = s.fallingChannelCurrent * vd;
  out[6] = p.clamp ? (vc * vc) / p.clamp.resistance : 0;
  out[7] = s.clampDiodeVoltage * s.clampDiodeCurrent;
  out[8] = p.clamp ? p.clamp.loopResistance * s.clampBranchCurrent * s.clampBranchCurrent : 0;
  out[9] = p.bodyDiodeDrop * s.bodyDiodeCurrent;
  out[10] = s.avalancheCurrent * vd;
  out[11] = p.damper ? s.damperCurrent * s.damperCurrent * p.damper.resistance : 0;
}

/** Energy (J) held in the inductances and capacitances. */
export function storedEnergy(p: CircuitParams, mm: ModeModel, x: ArrayLike<number>): number {
  const vd = mm.signals(x).drainVoltage;
  let e = 0.5 * p.leakageInductance * x[IP]! ** 2 + 0.5 * p.magnetizingInductance * x[IM]! ** 2 + p.drainNode.energy(vd);
  const c = p.clamp;
  if (c) {
    e += 0.5 * c.capacitance * x[VC]! ** 2;
    if (c.loopInductance > 0) e += 0.5 * c.loopInductance * x[IC]! ** 2;
    if (c.loopInductance > 0 && c.diodeCapacitance > 0) e += 0.5 * c.diodeCapacitance * x[VJ]! ** 2;
  }
  if (p.damper) e += 0.5 * p.damper.capacitance * x[VS]! ** 2;
  return e;
}
