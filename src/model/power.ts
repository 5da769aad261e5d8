// Instantaneous powers (W) of every source and sink, for energy accounting over a period.

import { evaluate, IM, IP, VC, VS } from './affine.js';
import type { CircuitParams } from './circuit-params.js';
import type { ModeModel } from './modes.js';

export const POWER_TERMS = [
  'supply', 'load', 'outputDiode', 'primaryResistance', 'switchChannel',
  'clampResistor', 'clampDiode', 'bodyDiode', 'damperResistor',
] as const;
export type PowerTerm = (typeof POWER_TERMS)[number];

/** Writes each term's instantaneous power into `out` (indexed like POWER_TERMS). */
export function instantaneousPowers(p: CircuitParams, mm: ModeModel, x: ArrayLike<number>, out: number[]): void {
  const f = mm.forms;
  const xs = x as number[];
  const ip = x[IP]!;
  const icd = evaluate(f.clampDiodeCurrent, xs);
  const isec = evaluate(f.secondaryCurrent, xs);
  const id = evaluate(f.damperCurrent, xs);
  const isw = evaluate(f.switchCurrent, xs);
  const vc = x[VC]!;
  // The clamp returns its current to the supply rail, so the supply delivers Vin·(ip − icd).
  out[0] = p.supplyVoltage * (ip - icd);
  out[1] = p.reflectedLoadVoltage * isec;
  out[2] = (p.reflectedVoltage - p.reflectedLoadVoltage) * isec;
  out[3] = p.primaryResistance * ip * ip;
  out[4] = isw * evaluate(f.drainVoltage, xs);
  out[5] = p.clamp ? (vc * vc) / p.clamp.resistance : 0;
  out[6] = p.clamp ? p.clamp.diodeDrop * icd : 0;
  out[7] = p.bodyDiodeDrop * evaluate(f.bodyDiodeCurrent, xs);
  out[8] = p.damper ? id * id * p.damper.resistance : 0;
}

/** Energy (J) held in the inductances and capacitances. */
export function storedEnergy(p: CircuitParams, mm: ModeModel, x: ArrayLike<number>): number {
  const vd = evaluate(mm.forms.drainVoltage, x as number[]);
  const lm = p.magnetizingInductance;
  const llk = p.leakageInductance;
  let e = 0.5 * llk * x[IP]! ** 2 + 0.5 * lm * x[IM]! ** 2 + 0.5 * p.drainCapacitance * vd * vd;
  if (p.clamp) e += 0.5 * p.clamp.capacitance * x[VC]! ** 2;
  if (p.damper) e += 0.5 * p.damper.capacitance * x[VS]! ** 2;
  return e;
}
