// The clamp and damper from published equations at the worst case, rounded to preferred values
// in the direction that keeps the drain under its limit.

import { DrainCapacitance } from '../model/drain-capacitance.js';
import { peakCurrentForPower } from '../circuit/load-operating-point.js';
import { reflectedVoltage, DEFAULT_DESIGN, type DesignTargets, type Scenario } from '../circuit/scenario.js';
import { clampPower, clampResistance, clampRipple, settledClampVoltage } from '../equations/rcd-clamp.js';
import { roundToSeries } from '../equations/preferred-values.js';
import { extractFromAddedCapacitor } from '../equations/ring-extraction.js';
import { designDamper } from '../equations/rc-damper.js';

export class DesignImpossible extends Error {}

/** One line of the worked design: what, the formula, the value (SI) and where the formula comes from. */
export interface EquationUse { quantity: string; formula: string; value: number; unit: string; source: string }

/**
 * Where a design is verified: input voltage, leakage inductance and peak current, and each part's
 * value as a factor on its nominal (1 at nominal; a tolerance in the direction that hurts elsewhere).
 */
export interface Corner {
  name: string;
  /** The peak current is found from the load at this corner (output.power), not fixed. */
  fromLoad: boolean;
  supplyVoltage: number;
  leakageInductance: number;
  peakCurrent: number;
  resistanceFactor: number;
  capacitanceFactor: number;
  drainCapacitanceFactor: number;
}

export interface HandDesign {
  targets: DesignTargets;
  /** Drain-node values the design works with (from the scenario, or extracted from the measured ring). */
  drainCapacitance: number;
  leakageInductance: number;
  extracted?: { drainCapacitance: number; leakageInductance: number; characteristicImpedance: number };
  reflectedVoltage: number;
  /** switch.voltageRating, V: the page draws it and the derated limit from the answer, not from margins. */
  voltageRating: number;
  deratedLimit: number;
  worstCase: Corner;
  nominal: Corner;
  /** Every corner the design is verified at: the worst case first, nominal last. */
  corners: Corner[];
  /** Kept below the derated limit at every corner, V. */
  allowance: number;
  clampDiodeDrop: number;
  clampVoltageTarget: number;
  resistanceExact: number;
  resistance: number;
  capacitanceExact: number;
  capacitance: number;
  damper: { resistanceExact: number; capacitanceExact: number; resistance: number; capacitance: number; lossPower: number; voltageStep: number };
  equations: EquationUse[];
  notes: string[];
}

const SRC_CLAMP = 'Choi, AN-4147 "Design Guidelines for RCD Snubber of Flyback Converters", 2006 (from memory)';
const SRC_RING = 'Todd, "Snubber Circuits: Theory, Design and Application", Unitrode SEM-900, 1993; Severns, "Design of Snubbers for Power Circuits"';
const SRC_SERIES = 'IEC 60063:2015 preferred-number series';

/** Peak primary current at a corner: set by the controller, or reached in D·T under fixed duty. */
export function peakCurrentAt(s: Scenario, supplyVoltage: number, leakageInductance: number): number {
  const c = s.switch.control;
  if (s.output.power !== undefined) {
    // The load sets the current at each input voltage; verification settles it by simulation.
    const vr = reflectedVoltage(s);
    return peakCurrentForPower({ power: s.output.power / s.output.efficiency, magnetizingInductance: s.transformer.magnetizingInductance, frequency: s.switch.frequency, supplyVoltage, reflectedVoltage: vr }).peakCurrent;
  }
  if (c.kind === 'peak-current') return c.peakCurrent;
  return (supplyVoltage * c.dutyCycle) / s.switch.frequency / (s.transformer.magnetizingInductance + leakageInductance);
}

export function handDesign(s: Scenario): HandDesign {
  const targets: DesignTargets = s.design ?? { ...DEFAULT_DESIGN };
  const f = s.switch.frequency;
  const vr = reflectedVoltage(s);
  const equations: EquationUse[] = [];
  const notes: string[] = [];
  const use = (quantity: string, formula: string, value: number, unit: string, source: string): number => {
    equations.push({ quantity, formula, value, unit, source });
    return value;
  };

  // Where a formula needs one constant, the node capacitance at Vin + VR read off the curve errs least.
  let coss = new DrainCapacitance(s.switch.drainCapacitance, s.transformer.windingCapacitance).at(s.supply.voltage + vr);
  let llk = s.transformer.leakageInductance;
  let extracted: HandDesign['extracted'];
  if (targets.measuredRing) {
    const m = targets.measuredRing;
    const result = extractFromAddedCapacitor({
      ringFrequency: m.frequency, ringFrequencyWithAddedCapacitor: m.frequencyWithAddedCapacitor, addedCapacitance: m.addedCapacitance,
    });
    if (!result.ok) throw new DesignImpossible(`design.measuredRing.${result.field}: ${result.message}`);
    coss = use('drain-node capacitance', 'Cp = Cadd / ((f1/f2)² − 1)', result.parasiticCapacitance, 'F', SRC_RING);
    llk = use('leakage inductance', 'L = 1 / ((2π·f1)²·Cp)', result.inductance, 'H', SRC_RING);
    extracted = { drainCapacitance: coss, leakageInductance: llk, characteristicImpedance: result.characteristicImpedance };
    notes.push('The measured ring replaces the scenario\'s drain capacitance and leakage inductance.');
  }

  const vinMax = targets.inputVoltageMaximum ?? s.supply.voltage;
  const vinMin = targets.inputVoltageMinimum ?? s.supply.voltage;
  const llkWorst = llk * (1 + targets.leakageTolerance);
  const fromLoad = s.output.power !== undefined;
  // A regulated load sets the current whatever the sense threshold: its tolerance matters at the limit.
  const senseFactor = fromLoad ? 1 : 1 + targets.peakCurrentTolerance;
  const nominalCorner = (name: string, supplyVoltage: number): Corner => ({
    name, fromLoad, supplyVoltage, leakageInductance: llk, peakCurrent: peakCurrentAt(s, supplyVoltage, llk),
    resistanceFactor: 1, capacitanceFactor: 1, drainCapacitanceFactor: 1,
  });
  // Higher leakage, peak current and clamp resistor, a smaller clamp capacitor (more ripple) and a
  // smaller Coss (more of the leakage energy reaches the clamp) all raise the clamped peak.
  const peakCorner = (name: string, supplyVoltage: number): Corner => ({
    name, fromLoad, supplyVoltage, leakageInductance: llkWorst,
    peakCurrent: peakCurrentAt(s, supplyVoltage, llkWorst) * senseFactor,
    resistanceFactor: 1 + targets.resistorTolerance, capacitanceFactor: 1 - targets.capacitorTolerance,
    drainCapacitanceFactor: 1 - targets.drainCapacitanceTolerance,
  });
  const worstCase = peakCorner('high line, parts at their worst for the peak', vinMax);
  const nominal = nominalCorner('nominal', s.supply.voltage);
  const corners: Corner[] = [
    worstCase,
    // A lower clamp resistor holds the clamp lower, where the clamp takes more of the reflected energy.
    { ...worstCase, name: 'high line, parts at their worst for the loss', resistanceFactor: 1 - targets.resistorTolerance, capacitanceFactor: 1 },
    ...(vinMin < vinMax ? [peakCorner('low line, parts at their worst for the peak', vinMin)] : []),
    // Overload: the controller's current limit at the top of its tolerance, whatever the load.
    ...(s.switch.peakCurrentLimit !== undefined && s.switch.control.kind === 'peak-current'
      ? [{ ...worstCase, name: 'overload: current limit, high line, parts at their worst for the peak', fromLoad: false, peakCurrent: s.switch.peakCurrentLimit * (1 + targets.peakCurrentTolerance) }]
      : []),
    nominal,
  ];
  const ipk = worstCase.peakCurrent;
  const vf = s.clamp?.diodeDrop ?? 1.0;
  const deratedLimit = use('derated drain limit', 'Vlimit = derating · V(BR)DSS', targets.drainDerating * s.switch.voltageRating, 'V', 'derating of the drain voltage: common practice (IPC-9592B asks for derating, from memory)');
  const allowance = targets.voltageAllowance.kind === 'absolute' ? targets.voltageAllowance.value : targets.voltageAllowance.value * s.switch.voltageRating;
  use('allowance for what the model leaves out', 'design.voltageAllowance', allowance, 'V', 'common practice: a few percent of the rating');

  const vcTarget = use('clamp voltage target (above the rail)', 'Vc = Vlimit − allowance − Vin,max − Vf', deratedLimit - allowance - vinMax - vf, 'V', 'drain = rail + clamp + diode drop');
  if (!(vcTarget > vr * 1.05)) {
    throw new DesignImpossible(`the derated limit ${deratedLimit.toFixed(1)} V leaves no room for a clamp above VR = ${vr.toFixed(1)} V at Vin = ${vinMax} V (the clamp voltage must exceed VR, or the clamp would carry the output's energy): raise switch.voltageRating, design.drainDerating, or lower the turns ratio`);
  }
  if (vcTarget < 1.5 * vr || vcTarget > 2.5 * vr) {
    notes.push(`The clamp voltage target ${vcTarget.toFixed(1)} V is ${(vcTarget / vr).toFixed(2)} × VR; 1.5–2.5 × VR is usual (common practice): ${vcTarget < 1.5 * vr ? 'close to VR the clamp dissipates much of the reflected energy' : 'the transistor has headroom for a higher reflected voltage'}.`);
  }
  const rExact = use('clamp resistor (exact)', 'R = 2·Vc·(Vc − VR) / (Llk·Ipk²·fsw)', clampResistance(llkWorst, ipk, f, vcTarget, vr), 'Ω', SRC_CLAMP);
  // A smaller R holds the clamp lower: round down, with room for the part's tolerance upwards.
  const r = use(`clamp resistor (${targets.resistorSeries}, rounded down)`, `the preferred value at or below R/(1 + ${targets.resistorTolerance})`, roundToSeries(rExact / (1 + targets.resistorTolerance), targets.resistorSeries, 'down'), 'Ω', SRC_SERIES);
  const vc = use('clamp voltage with that resistor', 'Vc = VR/2 + √(VR²/4 + ½·R·Llk·Ipk²·fsw)', settledClampVoltage(r, llkWorst, ipk, f, vr), 'V', SRC_CLAMP);
  use('clamp power', 'P = ½·Llk·Ipk²·fsw·Vc/(Vc − VR)', clampPower(llkWorst, ipk, f, vc, vr), 'W', SRC_CLAMP);
  // A larger C keeps the ripple (and the peak) lower: the smallest preferred value meeting the maximum ripple.
  const cExact = use('clamp capacitor (exact)', `C = 1 / (ΔVc/Vc · R · fsw · (1 − ${targets.capacitorTolerance})), at the maximum ripple`, 1 / (targets.clampRippleMaximum * r * f * (1 - targets.capacitorTolerance)), 'F', SRC_CLAMP);
  const c = use(`clamp capacitor (${targets.capacitorSeries}, rounded up)`, 'the preferred value at or above C', roundToSeries(cExact, targets.capacitorSeries, 'up'), 'F', SRC_SERIES);
  const ripple = use('clamp ripple', 'ΔVc ≈ Vc / (R·C·fsw)', clampRipple(vc, r, c, f), 'V', SRC_CLAMP);
  if (ripple / vc < targets.clampRippleMinimum) {
    notes.push(`The ripple ${(100 * ripple / vc).toFixed(1)} % is below the ${(100 * targets.clampRippleMinimum).toFixed(0)} % aimed at: the next smaller ${targets.capacitorSeries} value would exceed ${(100 * targets.clampRippleMaximum).toFixed(0)} %.`);
  }

  const voltageStep = vinMax + vr;
  const damperExact = designDamper({ leakageInductance: llk, drainCapacitance: coss, frequency: f, voltageStep, capacitanceRatio: targets.damperCapacitanceRatio });
  use('damper resistor (exact)', 'Rs = √(Llk/Coss)', damperExact.resistance, 'Ω', SRC_RING);
  use('damper capacitor (exact)', `Cs = ${targets.damperCapacitanceRatio} · Coss`, damperExact.capacitance, 'F', SRC_RING);
  const rs = use(`damper resistor (${targets.resistorSeries}, nearest)`, 'the nearest preferred value', roundToSeries(damperExact.resistance, targets.resistorSeries, 'nearest'), 'Ω', SRC_SERIES);
  const cs = use(`damper capacitor (${targets.capacitorSeries}, nearest)`, 'the nearest preferred value', roundToSeries(damperExact.capacitance, targets.capacitorSeries, 'nearest'), 'F', SRC_SERIES);
  const damperLoss = use('damper loss', 'P ≈ Cs·V²·fsw, V = Vin,max + VR', cs * voltageStep ** 2 * f, 'W', SRC_RING);

  return {
    targets, drainCapacitance: coss, leakageInductance: llk, ...(extracted ? { extracted } : {}),
    reflectedVoltage: vr, voltageRating: s.switch.voltageRating, deratedLimit, worstCase, nominal, corners, allowance, clampDiodeDrop: vf,
    clampVoltageTarget: vcTarget, resistanceExact: rExact, resistance: r, capacitanceExact: cExact, capacitance: c,
    damper: { resistanceExact: damperExact.resistance, capacitanceExact: damperExact.capacitance, resistance: rs, capacitance: cs, lossPower: damperLoss, voltageStep },
    equations, notes,
  };
}
