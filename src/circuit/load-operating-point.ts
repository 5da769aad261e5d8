// Part of reading a scenario that gives its load: the first estimate of the peak current.
// The peak primary current that moves a given power through the magnetizing inductance, from the
// flyback's energy relation (any power-electronics text, e.g. Mohan/Undeland/Robbins, Power
// Electronics, the flyback converter; from memory):
// DCM: all of ½·Lm·Ipk² goes to the output each period, P = ½·Lm·Ipk²·fsw.
// CCM: the current falls only to Ipk − ΔI, ΔI = Vin·D·T/Lm with D = VR/(Vin + VR) from the volt-second
// balance, and P = ½·Lm·(Ipk² − (Ipk − ΔI)²)·fsw.

export interface OperatingPointInputs {
  /** Power to move through the magnetizing inductance, W. */
  power: number;
  magnetizingInductance: number;
  frequency: number;
  supplyVoltage: number;
  reflectedVoltage: number;
}

export function peakCurrentForPower(x: OperatingPointInputs): { peakCurrent: number; conduction: 'DCM' | 'CCM' } {
  const energyPerCycle = x.power / x.frequency;
  const dcm = Math.sqrt((2 * energyPerCycle) / x.magnetizingInductance);
  const duty = x.reflectedVoltage / (x.supplyVoltage + x.reflectedVoltage);
  const ripple = (x.supplyVoltage * duty) / (x.frequency * x.magnetizingInductance);
  if (dcm <= ripple) return { peakCurrent: dcm, conduction: 'DCM' };
  // ½·Lm·(2·Ipk·ΔI − ΔI²) = E.
  return { peakCurrent: ((2 * energyPerCycle) / x.magnetizingInductance + ripple * ripple) / (2 * ripple), conduction: 'CCM' };
}
