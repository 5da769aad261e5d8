// The added-capacitor method for the parasitic LC of a switching node: measure the ring frequency
// f1, add a known capacitor Cadd across the drain, measure f2. With the same L both times,
// (f1/f2)² = (Cp + Cadd)/Cp, so Cp = Cadd/((f1/f2)² − 1) and L = 1/((2π·f1)²·Cp).
// Sources: Todd, "Snubber Circuits: Theory, Design and Application", Unitrode Power Supply Design
// Seminar SEM-900, 1993; Severns, "Design of Snubbers for Power Circuits". Both texts were not at
// hand: the equations are from memory of them.
//
// Errors are returned, not thrown: the inputs are bench measurements typed in by a person, so a
// swapped f1/f2 is an expected outcome the caller reports against the field, not a program fault.

/** Bench measurements for the added-capacitor method, in Hz and F. */
export type AddedCapacitorMeasurement = {
  /** Ring frequency of the drain node as built, f1. */
  ringFrequency: number;
  /** Ring frequency with the known capacitor added across the drain, f2 (below f1). */
  ringFrequencyWithAddedCapacitor: number;
  /** The added capacitor, Cadd. */
  addedCapacitance: number;
};

export type RingParameters = {
  /** Cp, the capacitance already at the node (Coss, winding and layout), in F. */
  parasiticCapacitance: number;
  /** L, the inductance that rings with Cp (the leakage inductance, for a flyback drain), in H. */
  inductance: number;
  /** Z0 = √(L/Cp), in Ω. */
  characteristicImpedance: number;
};

export type RingExtraction =
  | ({ ok: true } & RingParameters)
  | { ok: false; field: keyof AddedCapacitorMeasurement; message: string };

/** Ring frequency f0 = 1/(2π·√(L·C)), in Hz (any circuits text, e.g. Nilsson & Riedel). */
export function ringFrequency(inductance: number, capacitance: number): number {
  requirePositiveFinite(inductance, 'inductance');
  requirePositiveFinite(capacitance, 'capacitance');
  return 1 / (2 * Math.PI * Math.sqrt(inductance * capacitance));
}

/**
 * Cp, L and Z0 from f1, f2 and Cadd (Todd, SEM-900; Severns). Returns `{ ok: false, field, message }`
 * for a non-positive or non-finite field, and for f2 ≥ f1 (added capacitance can only lower the
 * frequency, so the two readings are swapped or the capacitor was not connected).
 */
export function extractFromAddedCapacitor(measurement: AddedCapacitorMeasurement): RingExtraction {
  const fields = ['ringFrequency', 'ringFrequencyWithAddedCapacitor', 'addedCapacitance'] as const;
  for (const field of fields) {
    const value = measurement[field];
    if (typeof value !== 'number' || !Number.isFinite(value) || value <= 0) {
      return { ok: false, field, message: `${field} must be a positive finite number, got ${String(value)}` };
    }
  }
  const { ringFrequency: f1, ringFrequencyWithAddedCapacitor: f2, addedCapacitance } = measurement;
  if (f2 >= f1) {
    return {
      ok: false,
      field: 'ringFrequencyWithAddedCapacitor',
      message: `ringFrequencyWithAddedCapacitor (${f2} Hz) must be below ringFrequency (${f1} Hz): an added capacitor lowers the ring frequency`,
    };
  }
  const ratio = f1 / f2;
  const parasiticCapacitance = addedCapacitance / (ratio * ratio - 1);
  const inductance = 1 / ((2 * Math.PI * f1) ** 2 * parasiticCapacitance);
  return {
    ok: true,
    parasiticCapacitance,
    inductance,
    characteristicImpedance: Math.sqrt(inductance / parasiticCapacitance),
  };
}

function requirePositiveFinite(input: number, name: string): void {
  if (typeof input !== 'number' || !Number.isFinite(input) || input <= 0) {
    throw new RangeError(`${name} must be a positive finite number, got ${String(input)}`);
  }
}
