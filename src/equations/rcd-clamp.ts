// Published hand equations of the RCD clamp (leakage energy plus the reflected-voltage share
// that flows while the clamp conducts). Source: Choi, "Design Guidelines for RCD Snubber of
// Flyback Converters", application note AN-4147, 2006 (from memory); the same energy argument in
// Mohan/Undeland/Robbins, Power Electronics, 3rd ed., ch. 27 (from memory). This project pins the
// form with the Vc/(Vc − VR) factor.

/** Clamp dissipation P = ½·Llk·Ipk²·fsw·Vc/(Vc − VR), in W. */
export function clampPower(leakageInductance: number, peakCurrent: number, frequency: number, clampVoltage: number, reflectedVoltage: number): number {
  return 0.5 * leakageInductance * peakCurrent ** 2 * frequency * (clampVoltage / (clampVoltage - reflectedVoltage));
}

/** Clamp resistor R = Vc²/P = 2·Vc·(Vc − VR)/(Llk·Ipk²·fsw), in Ω. */
export function clampResistance(leakageInductance: number, peakCurrent: number, frequency: number, clampVoltage: number, reflectedVoltage: number): number {
  return (2 * clampVoltage * (clampVoltage - reflectedVoltage)) / (leakageInductance * peakCurrent ** 2 * frequency);
}

/** Settled clamp voltage (above the rail) for a given R: the positive root of the resistor equation, in V. */
export function settledClampVoltage(resistance: number, leakageInductance: number, peakCurrent: number, frequency: number, reflectedVoltage: number): number {
  const half = reflectedVoltage / 2;
  return half + Math.sqrt(half * half + 0.5 * resistance * leakageInductance * peakCurrent ** 2 * frequency);
}

/** Clamp-capacitor ripple ΔVc ≈ Vc/(R·C·fsw), in V (AN-4147, from memory). */
export function clampRipple(clampVoltage: number, resistance: number, capacitance: number, frequency: number): number {
  return clampVoltage / (resistance * capacitance * frequency);
}
