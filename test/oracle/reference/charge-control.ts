// The clamp diode's stored charge: reverse recovery by the charge-control model of Lauritzen & Ma
// (1991), with the stored charge qM, lifetime τ and transit time TM, and forward recovery after
// Ma & Lauritzen (1993) as a conductivity-modulated series resistance. Parameters are derived from
// datasheet numbers exactly as the README's "The model, its assumptions and limits" writes them.

export interface ChargeControl {
  /** τ, s. */
  readonly lifetimeSeconds: number;
  /** TM = r·τ, s. */
  readonly transitSeconds: number;
}

/**
 * τ from the datasheet trr at IF = IR (recovered at 0.25·IR): with qM = IF·τ at the step, the reverse
 * current −IR lasts until qM has fallen to IR·TM, which takes τ·ln((IF + IR)/(IR·(1 + r))), then
 * iD = −qM/TM decays at the rate 1/τ + 1/TM to a quarter, which takes ln 4·r·τ/(1 + r):
 * trr = τ·[ln(2/(1 + r)) + (r/(1 + r))·ln 4].
 */
export function chargeControlFromRecoveryTime(recoverySeconds: number, transitTimeRatio: number): ChargeControl {
  const r = transitTimeRatio;
  const bracket = Math.log(2 / (1 + r)) + (r / (1 + r)) * Math.log(4);
  const lifetimeSeconds = recoverySeconds / bracket;
  return { lifetimeSeconds, transitSeconds: r * lifetimeSeconds };
}

/** dqM/dt while the diode conducts: iD − qM/τ (no decay when only forward recovery is modelled). */
export function conductingChargeRate(diodeAmps: number, storedCoulombs: number, model: ChargeControl | undefined): number {
  return model === undefined ? diodeAmps : diodeAmps - storedCoulombs / model.lifetimeSeconds;
}

/** The junction charge qE = qM + TM·iD; conduction ends when it falls to 0. */
export function junctionCharge(diodeAmps: number, storedCoulombs: number, model: ChargeControl): number {
  return storedCoulombs + model.transitSeconds * diodeAmps;
}

/** While recovering the diode is a current source iD = −qM/TM. */
export function recoveringCurrent(storedCoulombs: number, model: ChargeControl): number {
  return -storedCoulombs / model.transitSeconds;
}

/** dqM/dt while recovering: iD − qM/τ with iD = −qM/TM. */
export function recoveringChargeRate(storedCoulombs: number, model: ChargeControl): number {
  return -storedCoulombs * (1 / model.lifetimeSeconds + 1 / model.transitSeconds);
}

export interface ForwardRecovery {
  /** R0, Ω. */
  readonly resistanceOhms: number;
  /** Q0, C. */
  readonly chargeCoulombs: number;
  /** t* of the datasheet ramp, s. */
  readonly peakSeconds: number;
}

/** 2s/(1 + s²) = 0.1 at s ≈ 19.95: the spec takes tfr as that time (it writes 19.95; the exact root is 19.9499). */
export const FORWARD_RECOVERY_TIME_RATIO = 19.95;

/**
 * For a ramp iD = a·t from 0 with qM = a·t²/2, vfr = a·t·R0·Q0/(Q0 + a·t²/2) peaks at t* = √(2·Q0/a)
 * with R0·√(a·Q0/2) = VFP − Vf: t* = tfr/19.95, Q0 = a·t*²/2, R0 = 2·(VFP − Vf)/(a·t*).
 */
export function forwardRecoveryFromDatasheet(peakVolts: number, forwardVolts: number, recoverySeconds: number, rampAmpsPerSecond: number): ForwardRecovery {
  const peakSeconds = recoverySeconds / FORWARD_RECOVERY_TIME_RATIO;
  return {
    resistanceOhms: (2 * (peakVolts - forwardVolts)) / (rampAmpsPerSecond * peakSeconds),
    chargeCoulombs: 0.5 * rampAmpsPerSecond * peakSeconds * peakSeconds,
    peakSeconds,
  };
}

/** vfr = iD·R0·Q0/(Q0 + qM), V. */
export function forwardRecoveryVolts(diodeAmps: number, storedCoulombs: number, model: ForwardRecovery): number {
  return (diodeAmps * model.resistanceOhms * model.chargeCoulombs) / (model.chargeCoulombs + storedCoulombs);
}
