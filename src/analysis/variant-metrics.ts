// What an engineer designs against, from the recorded settled cycles of one variant.
// All values in SI units.

import { POWER_TERMS, type PowerTerm } from '../model/power.js';
import type { OrbitKind } from '../simulation/orbit.js';
import type { CycleRecord } from '../simulation/recorder.js';
import type { VariantRun } from '../simulation/run-variant.js';

export interface EnergyBalance {
  /** Per-period energies, J. */
  supply: number;
  delivered: number;
  dissipated: Record<PowerTerm | 'switchTurnOn', number>;
  storedChange: number;
  /** (supply − delivered − dissipated − storedChange) / supply. */
  relativeMismatch: number;
}

export interface VariantMetrics {
  peakDrainVoltage: number;
  /** Transistor rating minus the peak, V (negative: over the rating). */
  marginToRating: number;
  ringFrequency: number | null;
  settled: boolean;
  orbit: OrbitKind;
  cycles: number;
  conduction: 'DCM' | 'CCM';
  turnOff: CycleRecord['turnOffCause'];
  dutyCycle: number;
  peakPrimaryCurrent: number;
  clampVoltageMean?: number;
  clampVoltageRipple?: number;
  clampResistorPower?: number;
  clampDiodePeakCurrent?: number;
  /** Peak drain voltage minus the clamp level Vin + vc at that instant, V. */
  peakAboveClamp?: number;
  /** Forward, forward-recovery and reverse-recovery loss of the clamp diode, W. */
  clampDiodePower?: number;
  /** Charge the clamp diode conducts backwards each cycle (reverse recovery), C. */
  clampDiodeReverseCharge?: number;
  damperResistorPower?: number;
  switchTurnOnLossPower: number;
  /** Primary current when the switch actually opens, A. */
  turnOffCurrent: number;
  /** Channel loss while the current falls after opening, W. */
  turnOffLossPower: number;
  /** Energy the transistor absorbs in avalanche each cycle, J, and its mean power, W. */
  avalancheEnergyPerCycle: number;
  avalanchePower: number;
  inputPower: number;
  outputPower: number;
  energyBalance: EnergyBalance;
  stats: {
    derivativeEvaluations: number;
    evaluationsPerPeriod: number;
    steps: number;
    events: number;
    wallTimeMs: number;
    finalCycleChange: number;
    /** odex's relative tolerance on the orbit: the scenario's, or tighter where the solver's noise kept the settling from the settle tolerance. */
    relativeTolerance: number;
  };
}

/**
 * Ring frequency right after turn-off: spacing of successive drain maxima while the drain node
 * is free and the output diode conducts (the leakage inductance against the drain capacitance).
 * Only crests standing at least 10 % of the first crest's height above the ring's centre
 * (Vin + VR) count: below that their timing is solver noise. The median spacing is used, so that
 * one crest bent by a body-diode or output-diode interval does not move the result. Null when
 * fewer than two crests qualify (a ring damped within about a period).
 */
export function ringFrequencyAfterTurnOff(cycle: CycleRecord, ringCentreVoltage: number): number | null {
  const crests = cycle.drainMaxima
    .filter((m) => m.mode === 'free+out' && m.timeSeconds > cycle.turnOffSeconds)
    .sort((a, b) => a.timeSeconds - b.timeSeconds);
  const first = crests[0];
  if (!first) return null;
  const floor = 0.1 * (first.voltage - ringCentreVoltage);
  const times: number[] = [];
  for (const c of crests) {
    if (times.length >= 7 || !(c.voltage - ringCentreVoltage > floor)) break;
    times.push(c.timeSeconds);
  }
  if (times.length < 2) return null;
  const spacings = times.slice(1).map((t, i) => t - times[i]!).sort((a, b) => a - b);
  const mid = spacings.length >> 1;
  const median = spacings.length % 2 === 1 ? spacings[mid]! : (spacings[mid - 1]! + spacings[mid]!) / 2;
  return 1 / median;
}

export function variantMetrics(run: VariantRun, voltageRating: number): VariantMetrics {
  const cycles = run.recorder.cycles;
  const last = cycles[cycles.length - 1]!;
  const p = run.params;
  const period = p.periodSeconds;
  const peakDrainVoltage = Math.max(...cycles.map((c) => c.drainVoltage.max));
  const energy = (term: PowerTerm): number => last.energy[POWER_TERMS.indexOf(term)]!;

  const dissipated = {} as Record<PowerTerm | 'switchTurnOn', number>;
  for (const term of POWER_TERMS) if (term !== 'supply' && term !== 'load') dissipated[term] = energy(term);
  dissipated.switchTurnOn = last.turnOnLoss;
  const delivered = energy('load');
  const storedChange = last.storedEnergyEnd - last.storedEnergyStart;
  const lost = Object.values(dissipated).reduce((a, b) => a + b, 0);
  const supply = energy('supply');

  const metrics: VariantMetrics = {
    peakDrainVoltage,
    marginToRating: voltageRating - peakDrainVoltage,
    ringFrequency: ringFrequencyAfterTurnOff(last, p.supplyVoltage + p.reflectedVoltage),
    settled: run.orbit === 'settled',
    orbit: run.orbit,
    cycles: run.cycles,
    conduction: last.outputDiodeOnAtEnd ? 'CCM' : 'DCM',
    turnOff: last.turnOffCause,
    dutyCycle: last.turnOffSeconds / period,
    peakPrimaryCurrent: Math.max(...cycles.map((c) => c.primaryPeakCurrent)),
    switchTurnOnLossPower: last.turnOnLoss / period,
    turnOffCurrent: last.turnOffCurrent,
    turnOffLossPower: energy('switchTurnOff') / period,
    avalancheEnergyPerCycle: energy('avalanche'),
    avalanchePower: energy('avalanche') / period,
    inputPower: supply / period,
    outputPower: delivered / period,
    energyBalance: {
      supply, delivered, dissipated, storedChange,
      relativeMismatch: (supply - delivered - lost - storedChange) / supply,
    },
    stats: {
      derivativeEvaluations: run.stats.derivativeEvaluations,
      evaluationsPerPeriod: run.stats.derivativeEvaluations / run.cycles,
      steps: run.stats.steps,
      events: run.stats.events,
      wallTimeMs: run.stats.wallTimeMs,
      finalCycleChange: run.finalChange,
      relativeTolerance: run.stats.relativeTolerance,
    },
  };
  if (p.clamp) {
    metrics.clampVoltageMean = last.clampVoltageIntegral / period;
    metrics.clampVoltageRipple = last.clampVoltage.max - last.clampVoltage.min;
    metrics.clampResistorPower = energy('clampResistor') / period;
    metrics.clampDiodePeakCurrent = Math.max(...cycles.map((c) => c.clampDiodePeakCurrent));
    const peakCycle = cycles.reduce((a, b) => (b.drainVoltage.max > a.drainVoltage.max ? b : a));
    metrics.peakAboveClamp = peakCycle.drainVoltage.max - (p.supplyVoltage + peakCycle.clampVoltageAtDrainPeak);
    metrics.clampDiodePower = energy('clampDiode') / period;
    metrics.clampDiodeReverseCharge = last.clampDiodeReverseCharge;
  }
  if (p.damper) metrics.damperResistorPower = energy('damperResistor') / period;
  return metrics;
}
