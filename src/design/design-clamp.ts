// `flyclamp design`: hand design, part stresses, and verification of the chosen parts by the
// settled simulation at the worst-case corner and at nominal, with a one-step adjustment of the
// clamp resistor where the simulation disagrees with the formulas.

import { DEFAULT_CLAMP_EXTRAS, type Scenario, type VariantName } from '../circuit/scenario.js';
import { simulationReport, type SimulationReport } from '../analysis/simulation-report.js';
import { runVariant, type VariantRun } from '../simulation/run-variant.js';
import { settleOperatingPoint } from '../simulation/operating-point.js';
import { roundToSeries, stepInSeries, type PreferredSeries } from '../equations/preferred-values.js';
import { CHIP_RESISTOR_CASES, THROUGH_HOLE_RESISTORS, chooseResistorArrangement, capacitorVoltageMargin, type ResistorArrangement } from '../equations/part-ratings.js';
import { handDesign, type Corner, type HandDesign } from './hand-design.js';

/** Voltage ratings parts are commonly sold in (V), for suggesting a rating with margin. */
const CAPACITOR_VOLTAGE_RATINGS = [16, 25, 50, 63, 100, 160, 200, 250, 400, 450, 500, 630, 1000, 1500, 2000, 3000];
const DIODE_VOLTAGE_RATINGS = [50, 100, 150, 200, 400, 600, 800, 1000, 1200, 1500, 2000];
/** Capacitor and diode voltages kept to 80 % of the rating: common practice (IPC-9592B, from memory). */
const VOLTAGE_DERATING = 0.8;
const MAX_ADJUSTMENT_STEPS = 6;

export interface CornerVerification {
  conditions: Corner;
  variants: SimulationReport['variants'];
  /** Clamp alone and clamp with damper both keep the drain at or under the derated limit less the allowance. */
  pass: boolean;
  /** Derated limit less the allowance, minus the higher of the clamp and damped peaks, V. */
  margin: number;
}

/** A corner as `design --json` reports it. */
export interface CornerReport {
  name: string;
  inputVoltage: number;
  leakageInductance: number;
  peakCurrent: number;
  partValues: { clampResistance: number; clampCapacitance: number; damperResistance: number; damperCapacitance: number; drainCapacitanceFactor: number };
  variants: SimulationReport['variants'];
  /** The higher of the clamp and damped peaks, V. */
  peakDrainVoltage: number;
  pass: boolean;
}

/** A set of preferred parts tried at the worst case: the clamp, and the damper or none. */
export interface Candidate {
  clamp: { resistance: number; capacitance: number };
  damper: { resistance: number; capacitance: number } | null;
  /** The higher of the clamp-alone and (with a damper) the damped peaks at the worst case, V. */
  peakDrainVoltage: number;
  /** Clamp resistor and diode plus damper resistor at the worst case, W. */
  totalLoss: number;
  /** Under the derated limit less the allowance, settled, and within the loss budget there. */
  pass: boolean;
  /** Parts in the build: clamp R and C, and the damper's two when fitted. */
  partsCount: number;
}

export interface LossVerdict {
  /** At the worst-loss corner, clamp and damper fitted, W: the clamp's resistor and diode, the damper's resistor. */
  clamp: number;
  damper: number;
  total: number;
  outputPower: number;
  share: number;
  budget: number | null;
  pass: boolean;
  corner: string;
}

export interface PartStress {
  part: string;
  value: number;
  unit: string;
  workingVoltage: number;
  power?: number;
  peakCurrent?: number;
  suggestedRating?: number;
  voltageMargin?: number;
  arrangement?: ResistorArrangement;
  /** For a split resistor: the nearest preferred value for each part, and the total it makes. */
  preferredPerResistor?: { value: number; total: number };
  note?: string;
}

export interface DesignResult {
  scenario: string;
  hand: HandDesign;
  /** Blocks in the scenario format, to paste into a scenario file. */
  clamp: { resistance: number; capacitance: number; diodeDrop: number };
  damper: { resistance: number; capacitance: number };
  adjustments: Array<{ resistance: number; capacitance: number; worstCasePeak: number; reason: string }>;
  stresses: PartStress[];
  verification: { worstCase: CornerVerification; nominal: CornerVerification };
  /** V kept below the derated limit at every corner. */
  allowance: number;
  corners: CornerReport[];
  /** The corner with the least margin. */
  limitingCorner: string;
  losses: LossVerdict;
  /** The parts tried at the worst case, cheapest (least loss) first; the design takes the cheapest passing one with a damper. */
  candidates: Candidate[];
  pass: boolean;
  notes: string[];
}

interface Verified { corner: CornerVerification; runs: VariantRun[]; at: Scenario }

export function scenarioAtCorner(s: Scenario, hand: HandDesign, corner: Corner, parts: { r: number; c: number; rs: number; cs: number }): Scenario {
  // A capacitance extracted from a measured ring replaces the part's; otherwise the full curve is verified.
  const coss = hand.extracted ? hand.extracted.drainCapacitance : s.switch.drainCapacitance;
  const k = corner.drainCapacitanceFactor;
  const control = s.switch.control.kind === 'peak-current' ? { ...s.switch.control, peakCurrent: corner.peakCurrent } : s.switch.control;
  return {
    ...s,
    supply: { voltage: corner.supplyVoltage },
    switch: { ...s.switch, control, drainCapacitance: typeof coss === 'number' ? coss * k : coss.map(([v, c]) => [v, c * k] as const) },
    transformer: { ...s.transformer, leakageInductance: corner.leakageInductance, ...(hand.extracted ? { windingCapacitance: 0 } : {}) },
    clamp: { ...DEFAULT_CLAMP_EXTRAS, ...s.clamp, resistance: parts.r * corner.resistanceFactor, capacitance: parts.c * corner.capacitanceFactor, diodeDrop: hand.clampDiodeDrop },
    damper: { resistance: parts.rs, capacitance: parts.cs },
  };
}

/**
 * The verdict needs the clamp and damped variants only; the bare one (for the plot and the table)
 * runs at the final worst case, which keeps a design with several corners to two runs per corner.
 */
function verify(s: Scenario, hand: HandDesign, corner: Corner, parts: { r: number; c: number; rs: number; cs: number }, deadlineMs?: number): Verified {
  const placed = scenarioAtCorner(s, hand, corner, parts);
  // With the load given, the corner's current is the one that delivers it there.
  const settled = corner.fromLoad ? settleOperatingPoint(placed, deadlineMs === undefined ? {} : { deadlineMs }) : { scenario: placed, point: null };
  const at = settled.scenario;
  if (settled.point) corner = { ...corner, peakCurrent: settled.point.peakCurrent };
  const variants: VariantName[] = ['clamp', 'damped'];
  const runs = variants.map((v) => runVariant(at, v, deadlineMs === undefined ? {} : { deadlineMs }));
  const report = simulationReport(at, runs, hand.targets.drainDerating);
  const worst = Math.max(report.variants.clamp!.peakDrainVoltage, report.variants.damped!.peakDrainVoltage);
  // A run that did not settle has no steady-state peak to judge: it cannot pass.
  const allSettled = report.variants.clamp!.settled && report.variants.damped!.settled;
  const limit = hand.deratedLimit - hand.allowance;
  return {
    corner: { conditions: corner, variants: report.variants, pass: allSettled && worst <= limit, margin: limit - worst },
    runs,
    at,
  };
}

/**
 * Fewest resistors first (a practising engineer's preference: fewer joints, less placement),
 * then the smallest case that carries them.
 */
function fewestResistors(request: { resistance: number; power: number; voltage: number; ambientCelsius: number }): ResistorArrangement {
  // Chip parts where a few carry it; through-hole power resistors before many chips.
  const tables = [CHIP_RESISTOR_CASES, THROUGH_HOLE_RESISTORS];
  let last: ResistorArrangement | undefined;
  for (let count = 1; count <= 8; count++) {
    for (const cases of tables) {
      last = chooseResistorArrangement({ ...request, maxCount: count, cases });
      if (last.ok) return last;
    }
  }
  return last!;
}

const ratingAbove = (ratings: readonly number[], needed: number): number | undefined => ratings.find((r) => r >= needed);

export interface DesignOptions { deadlineMs?: number }

export function designClamp(s: Scenario, options: DesignOptions = {}): DesignResult & { worstCaseRuns: VariantRun[] } {
  const hand = handDesign(s);
  const series = hand.targets.resistorSeries;
  // The ripple rule follows the resistor when it moves: C at or above 1/(ΔVc/Vc·R·fsw).
  const capacitanceFor = (r: number): number =>
    roundToSeries(1 / (hand.targets.clampRippleMaximum * r * s.switch.frequency * (1 - hand.targets.capacitorTolerance)), hand.targets.capacitorSeries, 'up');
  const peakOf = (v: Verified): number => hand.deratedLimit - hand.allowance - v.corner.margin;
  let parts = { r: hand.resistance, c: hand.capacitance, rs: hand.damper.resistance, cs: hand.damper.capacitance };
  const adjustments: DesignResult['adjustments'] = [];
  const notes = [...hand.notes];
  let worst = verify(s, hand, hand.worstCase, parts, options.deadlineMs);

  // The formulas ignore the drain capacitance and the ring after the clamp: they can miss the
  // limit either way. Step the resistor down while the worst case fails…
  for (let n = 0; worst.corner.margin < 0 && n < MAX_ADJUSTMENT_STEPS; n++) {
    const r = stepInSeries(parts.r, series, -1);
    parts = { ...parts, r, c: capacitanceFor(r) };
    worst = verify(s, hand, hand.worstCase, parts, options.deadlineMs);
    adjustments.push({ resistance: r, capacitance: parts.c, worstCasePeak: peakOf(worst), reason: 'the simulated worst case exceeded the derated limit: clamp resistor one standard step down' });
  }
  // …and where the hand design passes, try one step up (less clamp loss) and keep it if it still passes.
  if (adjustments.length === 0 && worst.corner.pass) {
    const r = stepInSeries(parts.r, series, +1);
    const trial = { ...parts, r, c: capacitanceFor(r) };
    const tried = verify(s, hand, hand.worstCase, trial, options.deadlineMs);
    if (tried.corner.pass) {
      parts = trial;
      worst = tried;
      adjustments.push({ resistance: r, capacitance: trial.c, worstCasePeak: peakOf(tried), reason: 'the formulas were pessimistic here: one standard step up still keeps the simulated worst case under the derated limit, with less clamp loss' });
    }
  }
  if (!worst.corner.pass) notes.push(`After ${adjustments.length} resistor steps the worst case still exceeds the derated limit: a larger clamp capacitor, a lower leakage inductance or a higher-rated transistor is needed.`);
  // The cheapest parts that pass: neighbours of the chosen ones in the preferred series, with the
  // designed damper, a smaller one, or none, tried at the worst case.
  const candidates = searchCandidates(s, hand, parts, capacitanceFor, options.deadlineMs);
  const cheapest = candidates.find((c) => c.pass && c.damper !== null);
  if (cheapest && (cheapest.clamp.resistance !== parts.r || cheapest.damper!.capacitance !== parts.cs)) {
    const trial = { r: cheapest.clamp.resistance, c: cheapest.clamp.capacitance, rs: cheapest.damper!.resistance, cs: cheapest.damper!.capacitance };
    const tried = verify(s, hand, hand.worstCase, trial, options.deadlineMs);
    if (tried.corner.pass) {
      parts = trial;
      worst = tried;
      adjustments.push({ resistance: trial.r, capacitance: trial.c, worstCasePeak: peakOf(tried), reason: `the least loss among the preferred parts that pass at the worst case (${cheapest.totalLoss.toFixed(3)} W, damper ${trial.rs} Ω with ${(trial.cs * 1e12).toPrecision(3)} pF)` });
    }
  }
  const noDamper = candidates.find((c) => c.pass && c.damper === null);
  if (noDamper) notes.push(`Without a damper, clamp ${noDamper.clamp.resistance} Ω with ${(noDamper.clamp.capacitance * 1e9).toPrecision(3)} nF also passes at the worst case, at ${noDamper.totalLoss.toFixed(3)} W: the damper can be left out if the ring after the clamp is acceptable (verify the other corners with simulate).`);
  // Every other corner with the parts chosen at the worst case.
  // The bare circuit at the final worst case, for the plot and the table.
  const bare = runVariant(worst.at, 'bare', options.deadlineMs === undefined ? {} : { deadlineMs: options.deadlineMs });
  worst = { ...worst, runs: [bare, ...worst.runs] };
  worst.corner.variants = simulationReport(worst.at, worst.runs, hand.targets.drainDerating).variants;
  const verified = hand.corners.map((corner) => (corner === hand.worstCase ? worst : verify(s, hand, corner, parts, options.deadlineMs)));
  const nominal = verified[hand.corners.indexOf(hand.nominal)]!;
  for (const { corner: c } of verified) {
    const unsettled = (['clamp', 'damped'] as const).filter((v) => !c.variants[v]!.settled);
    if (unsettled.length > 0) notes.push(`At the corner "${c.conditions.name}" the ${unsettled.join(' and ')} variant did not settle (${unsettled.map((v) => c.variants[v]!.orbit).join(', ')}): the corner cannot pass until it does (fixed duty in continuous conduction at high line, or peak-current control above 50 % duty).`);
  }
  const corners: CornerReport[] = verified.map(({ corner: c }) => ({
    name: c.conditions.name,
    inputVoltage: c.conditions.supplyVoltage,
    leakageInductance: c.conditions.leakageInductance,
    peakCurrent: c.conditions.peakCurrent,
    partValues: {
      clampResistance: parts.r * c.conditions.resistanceFactor, clampCapacitance: parts.c * c.conditions.capacitanceFactor,
      damperResistance: parts.rs, damperCapacitance: parts.cs, drainCapacitanceFactor: c.conditions.drainCapacitanceFactor,
    },
    variants: c.variants,
    peakDrainVoltage: hand.deratedLimit - hand.allowance - c.margin,
    pass: c.pass,
  }));
  const limiting = verified.reduce((a, b) => (b.corner.margin < a.corner.margin ? b : a)).corner;
  const losses = lossVerdict(hand, verified.map((v) => v.corner));
  if (!(losses.outputPower > 0)) notes.push(`The circuit delivers no power at the corner "${losses.corner}": check the scenario's values (the warnings name the unusual ones).`);
  else if (!losses.pass) notes.push(`Clamp and damper dissipate ${losses.total.toFixed(2)} W at the corner "${losses.corner}", ${(100 * losses.share).toFixed(1)} % of the ${losses.outputPower.toFixed(2)} W output, over the budget of ${losses.budget!.toFixed(2)} W (design.lossBudget): a lower leakage inductance, a higher reflected voltage or a smaller damper capacitor lowers it.`);

  const stresses = partStresses(s, hand, parts, worst.corner);
  const damperPower = worst.corner.variants.damped!.damperResistorPower!;
  const clampPower = worst.corner.variants.clamp!.clampResistorPower!;
  if (damperPower > clampPower) {
    notes.push(`The damper dissipates ${damperPower.toFixed(2)} W at the worst case, more than the clamp (${clampPower.toFixed(2)} W): its loss grows with Cs·V²; a smaller damper capacitor trades ring damping for loss.`);
  }
  return {
    scenario: s.name,
    hand,
    clamp: { resistance: parts.r, capacitance: parts.c, diodeDrop: hand.clampDiodeDrop },
    damper: { resistance: parts.rs, capacitance: parts.cs },
    adjustments,
    stresses,
    verification: { worstCase: worst.corner, nominal: nominal.corner },
    allowance: hand.allowance,
    corners,
    limitingCorner: limiting.conditions.name,
    losses,
    candidates,
    pass: verified.every((v) => v.corner.pass) && losses.pass,
    notes,
    worstCaseRuns: worst.runs,
  };
}

/**
 * Every combination of the chosen clamp resistor and the next preferred value up (the capacitor
 * following by the ripple rule) with the designed damper, its capacitor one preferred step smaller,
 * or none, at the worst case. The clamp-alone run does not depend on the
 * damper, so each resistor costs one clamp run and one damped run per damper.
 */
function searchCandidates(s: Scenario, hand: HandDesign, parts: { r: number; c: number; rs: number; cs: number }, capacitanceFor: (r: number) => number, deadlineMs?: number): Candidate[] {
  const t = hand.targets;
  const options = deadlineMs === undefined ? {} : { deadlineMs };
  const limit = hand.deratedLimit - hand.allowance;
  // The adjustments above already moved the resistor down where the worst case needed it.
  const resistors = [parts.r, stepInSeries(parts.r, t.resistorSeries, +1)];
  const dampers: Array<{ resistance: number; capacitance: number } | null> = [
    { resistance: parts.rs, capacitance: parts.cs },
    { resistance: parts.rs, capacitance: stepInSeries(parts.cs, t.capacitorSeries, -1) },
    null,
  ];
  const budgetFor = (outputPower: number): number => (t.lossBudget.kind === 'absolute' ? t.lossBudget.value : t.lossBudget.value * outputPower);
  const out: Candidate[] = [];
  for (const r of resistors) {
    const c = capacitanceFor(r);
    const base = scenarioAtCorner(s, hand, hand.worstCase, { r, c, rs: parts.rs, cs: parts.cs });
    const at = hand.worstCase.fromLoad ? settleOperatingPoint(base, options).scenario : base;
    const clampAlone = simulationReport(at, [runVariant(at, 'clamp', options)]).variants.clamp!;
    for (const damper of dampers) {
      let peak = clampAlone.peakDrainVoltage, loss = (clampAlone.clampResistorPower ?? 0) + (clampAlone.clampDiodePower ?? 0);
      let settled = clampAlone.settled, outputPower = clampAlone.outputPower;
      if (damper) {
        const withDamper: Scenario = { ...at, damper };
        const m = simulationReport(withDamper, [runVariant(withDamper, 'damped', options)]).variants.damped!;
        peak = Math.max(peak, m.peakDrainVoltage);
        loss = (m.clampResistorPower ?? 0) + (m.clampDiodePower ?? 0) + (m.damperResistorPower ?? 0);
        settled &&= m.settled;
        outputPower = m.outputPower;
      }
      out.push({
        clamp: { resistance: r, capacitance: c }, damper, peakDrainVoltage: peak, totalLoss: loss,
        pass: settled && peak <= limit && outputPower > 0 && loss <= budgetFor(outputPower), partsCount: damper ? 4 : 2,
      });
    }
  }
  return out.sort((a, b) => a.totalLoss - b.totalLoss);
}

/** The loss of the built design (clamp and damper fitted) at the corner where it is highest, against the budget. */
function lossVerdict(hand: HandDesign, corners: readonly CornerVerification[]): LossVerdict {
  const of = (c: CornerVerification) => {
    const m = c.variants.damped!;
    const clamp = (m.clampResistorPower ?? 0) + (m.clampDiodePower ?? 0);
    const damper = m.damperResistorPower ?? 0;
    return { clamp, damper, total: clamp + damper, outputPower: m.outputPower, corner: c.conditions.name };
  };
  const worst = corners.map(of).reduce((a, b) => (b.total > a.total ? b : a));
  const b = hand.targets.lossBudget;
  const budget = b.kind === 'absolute' ? b.value : b.value * worst.outputPower;
  // A corner that delivers nothing (a circuit that cannot run as described) cannot pass.
  const share = worst.outputPower > 0 ? worst.total / worst.outputPower : Infinity;
  return { ...worst, share, budget, pass: worst.outputPower > 0 && worst.total <= budget };
}

function partStresses(s: Scenario, hand: HandDesign, parts: { r: number; c: number; rs: number; cs: number }, worst: CornerVerification): PartStress[] {
  const clamp = worst.variants.clamp!;
  const damped = worst.variants.damped!;
  const ambient = hand.targets.ambientTemperature;
  const vcMax = clamp.clampVoltageMean! + clamp.clampVoltageRipple! / 2;
  const vin = hand.worstCase.supplyVoltage;
  const capRating = ratingAbove(CAPACITOR_VOLTAGE_RATINGS, vcMax / VOLTAGE_DERATING);
  const diodeReverse = vin + vcMax;
  const diodeRating = ratingAbove(DIODE_VOLTAGE_RATINGS, diodeReverse / VOLTAGE_DERATING);
  const damperCapRating = ratingAbove(CAPACITOR_VOLTAGE_RATINGS, damped.peakDrainVoltage / VOLTAGE_DERATING);
  return [
    {
      part: 'clamp resistor', value: parts.r, unit: 'Ω', workingVoltage: vcMax, power: clamp.clampResistorPower!,
      arrangement: fewestResistors({ resistance: parts.r, power: clamp.clampResistorPower!, voltage: vcMax, ambientCelsius: ambient }),
      note: 'power and voltage from the simulated worst case, clamp alone (the damper only lowers them)',
    },
    {
      part: 'clamp capacitor', value: parts.c, unit: 'F', workingVoltage: vcMax,
      ...(capRating ? { suggestedRating: capRating, voltageMargin: capacitorVoltageMargin(vcMax, capRating) } : {}),
      note: 'a ceramic (C0G or X7R) or film part rated at least the suggested voltage; ripple current flows in it',
    },
    {
      part: 'clamp diode', value: hand.clampDiodeDrop, unit: 'V', workingVoltage: diodeReverse, peakCurrent: clamp.clampDiodePeakCurrent!,
      ...(diodeRating ? { suggestedRating: diodeRating, voltageMargin: capacitorVoltageMargin(diodeReverse, diodeRating) } : {}),
      note: 'reverse voltage while the switch is on: Vin,max + Vc; a fast or ultrafast recovery diode (give its trr and VFP in the scenario to verify with them)',
    },
    {
      part: 'damper resistor', value: parts.rs, unit: 'Ω', workingVoltage: damped.peakDrainVoltage, power: damped.damperResistorPower!,
      arrangement: fewestResistors({ resistance: parts.rs, power: damped.damperResistorPower!, voltage: damped.peakDrainVoltage, ambientCelsius: ambient }),
      note: 'pulse power: check the part\'s pulse rating too',
    },
    {
      part: 'damper capacitor', value: parts.cs, unit: 'F', workingVoltage: damped.peakDrainVoltage,
      ...(damperCapRating ? { suggestedRating: damperCapRating, voltageMargin: capacitorVoltageMargin(damped.peakDrainVoltage, damperCapRating) } : {}),
    },
  ].map((p: PartStress) => {
    const a = p.arrangement;
    const split = a && a.ok && a.count > 1 ? { preferredPerResistor: preferredSplit(p.value, a.count, hand.targets.resistorSeries) } : {};
    const note = s.clamp || p.part !== 'clamp diode' ? p.note : `${p.note}; diode drop assumed 1.0 V (no clamp block in the scenario)`;
    return { ...p, ...split, ...(note ? { note } : {}) };
  });
}

/**
 * Per-part value of a split resistor: from the design's series when n equal parts make the chosen
 * total within 1 %, else from E96 (every 1 % step), so that the parts built are the value verified
 * (5.6 kΩ: 2 × 2.7 kΩ = 5.4 kΩ in E24 is 3.6 % off; 2 × 2.8 kΩ in E96 is exact).
 */
export function preferredSplit(total: number, count: number, series: PreferredSeries): { value: number; total: number } {
  for (const s of [series, 'E96'] as const) {
    const value = roundToSeries(total / count, s, 'nearest');
    if (Math.abs((value * count) / total - 1) <= 0.01 + 1e-12) return { value, total: value * count };
  }
  const value = roundToSeries(total / count, 'E96', 'nearest');
  return { value, total: value * count };
}
