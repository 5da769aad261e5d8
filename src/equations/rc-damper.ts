// RC damper for the ring the clamp leaves behind (the leakage inductance against the drain
// capacitance once the clamp diode stops conducting, and the magnetising ring in DCM). Sources:
// Todd, "Snubber Circuits: Theory, Design and Application", Unitrode SEM-900, 1993; Severns, "Design
// of Snubbers for Power Circuits" (neither at hand; the equations from memory):
//   Rs ≈ √(Llk/Cp), the ring's characteristic impedance: the ring current, not just its voltage,
//   must see a resistance of the order of Z0 to lose a good share of its energy each cycle;
//   Cs ≈ k·Cp with k = 3–4 ("a few times Coss"): at the ring frequency Cs has a reactance of Z0/k,
//   below Rs, so the resistor rather than Cs carries the ring current; a larger Cs damps little
//   better and costs loss in proportion;
//   P ≈ Cs·V²·fsw.
// Why the loss has no ½: each time the drain steps by V, Cs charges (or discharges) by V through
// Rs, and charging a capacitor through any resistor dissipates ½·Cs·V² in it. A switching cycle has
// two edges, turn-off and turn-on, so the resistor takes 2 · ½·Cs·V² per cycle.

export type DamperInputs = {
  /** Llk, the inductance that rings after the clamp, in H (e.g. from the added-capacitor method). */
  leakageInductance: number;
  /** Cp, the whole capacitance at the drain that rings with Llk (Coss plus winding and layout), in F. */
  drainCapacitance: number;
  /** fsw, the switching frequency, in Hz. */
  frequency: number;
  /**
   * V, the step of drain voltage at each switching edge, in V, taken equal on both edges. For a
   * flyback in CCM that is Vin + VR (the drain goes from about 0 to Vin + VR and back). In DCM the
   * turn-on edge starts from wherever the magnetising ring left the drain, lower than Vin + VR, so
   * Vin + VR overestimates the loss.
   */
  voltageStep: number;
  /** k in Cs = k·Cp; default 4 (the top of the sources' 3–4, the better-damped end). */
  capacitanceRatio?: number;
};

export type DamperDesign = {
  /** Rs = Z0, in Ω (unrounded: rounding to a preferred value is the caller's step). */
  resistance: number;
  /** Cs = k·Cp, in F (unrounded). */
  capacitance: number;
  /** Cs·V²·fsw, dissipated in Rs, in W. */
  lossPower: number;
  /** Z0 = √(Llk/Cp), in Ω. */
  characteristicImpedance: number;
};

export const DEFAULT_DAMPER_CAPACITANCE_RATIO = 4;

/** Rs, Cs and the damper loss (Todd, SEM-900; Severns). Throws a RangeError naming a bad field. */
export function designDamper(inputs: DamperInputs): DamperDesign {
  const { leakageInductance, drainCapacitance, frequency, voltageStep } = inputs;
  const capacitanceRatio = inputs.capacitanceRatio ?? DEFAULT_DAMPER_CAPACITANCE_RATIO;
  requirePositiveFinite(leakageInductance, 'leakageInductance');
  requirePositiveFinite(drainCapacitance, 'drainCapacitance');
  requirePositiveFinite(frequency, 'frequency');
  requirePositiveFinite(voltageStep, 'voltageStep');
  requirePositiveFinite(capacitanceRatio, 'capacitanceRatio');
  const characteristicImpedance = Math.sqrt(leakageInductance / drainCapacitance);
  const capacitance = capacitanceRatio * drainCapacitance;
  return {
    resistance: characteristicImpedance,
    capacitance,
    lossPower: capacitance * voltageStep ** 2 * frequency,
    characteristicImpedance,
  };
}

function requirePositiveFinite(input: number, name: string): void {
  if (typeof input !== 'number' || !Number.isFinite(input) || input <= 0) {
    throw new RangeError(`${name} must be a positive finite number, got ${String(input)}`);
  }
}
