// The state vector. Indices are fixed; a circuit uses the shortest prefix that holds its parts,
// so a circuit of constant, ideal parts keeps the five states it always had.

import type { CircuitParams } from './circuit-params.js';

/** Primary (leakage) current A, magnetizing current A, drain V, clamp capacitor above the rail V, damper capacitor V. */
export const IP = 0, IM = 1, VD = 2, VC = 3, VS = 4;
/** Clamp-loop current A (with a loop inductance), clamp diode voltage V (with a junction capacitance too). */
export const IC = 5, VJ = 6;
/** Charge stored in the clamp diode, C (recovery models). */
export const QD = 7;
/** Channel current while it falls after opening A, and its constant rate of fall A/s. */
export const ICH = 8, KF = 9;

export const MAX_STATE_SIZE = 10;
export type State = Float64Array | number[];

export function stateSizeFor(p: CircuitParams): number {
  if (p.currentFallTime > 0) return KF + 1;
  const c = p.clamp;
  if (c && (c.recovery || c.forwardRecovery)) return QD + 1;
  if (c && c.loopInductance > 0 && c.diodeCapacitance > 0) return VJ + 1;
  if (c && c.loopInductance > 0) return IC + 1;
  return VS + 1;
}
