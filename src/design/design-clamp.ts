// `flyclamp design`: hand design, the search for the cheapest preferred parts that pass at the
// worst case, part stresses, and verification of the chosen parts by the settled simulation at
// every corner; the simulations of each step run side by side on the design's runner.

import { DEFAULT_CLAMP_EXTRAS, type DamperChoice, type Scenario, type VariantName } from '../circuit/scenario.js';
import { formatSi } from '../circuit/si-number.js';
import type { SimulationReport } from '../analysis/simulation-report.js';
import { roundToSeries, type PreferredSeries } from '../equations/preferred-values.js';
import { CHIP_RESISTOR_CASES, THROUGH_HOLE_RESISTORS, chooseResistorArrangement, capacitorVoltageMargin, type ResistorArrangement } from '../equations/part-ratings.js';
import { handDesign, type Corner, type HandDesign } from './hand-design.js';
import { searchCandidates, type Candidate } from './candidate-search.js';
import { inProcessRunner, processRunner, type DesignRunner, type DesignRunSuccess } from './design-runner.js';
import type { DrainTraces } from './design-run-task.js';

export type { Candidate } from './candidate-search.js';

/** Voltage ratings parts are commonly sold in (V), for suggesting a rating with margin. */
const CAPACITOR_VOLTAGE_RATINGS = [16, 25, 50, 63, 100, 160, 200, 250, 400, 450, 500, 630, 1000, 1500, 2000, 3000];
const DIODE_VOLTAGE_RATINGS = [50, 100, 150, 200, 400, 600, 800, 1000, 1200, 1500, 2000];
/** Capacitor and diode voltages kept to 80 % of the rating: common practice (IPC-9592B, from memory). */
const VOLTAGE_DERATING = 0.8;

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

export interface LossVerdict {
  /** At the worst-loss corner, as built (with the damper only when fitted), W: the clamp's resistor and diode, the damper's resistor. */
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
  /** Blocks in the scenario format, to paste into a scenario file (the damper only when fitted). */
  clamp: { resistance: number; capacitance: number; diodeDrop: number };
  /** The damper fitted, or (when `damperFitted` is false) the one designed, simulated for comparison only. */
  damper: { resistance: number; capacitance: number };
  /** Whether the design fits the damper: the least-loss passing set may have none (design.damper). */
  damperFitted: boolean;
  adjustments: Array<{ resistance: number; capacitance: number; worstCasePeak: number; reason: string }>;
  stresses: PartStress[];
  verification: { worstCase: CornerVerification; nominal: CornerVerification };
  /** V kept below the derated limit at every corner. */
  allowance: number;
  corners: CornerReport[];
  /** The corner with the least margin. */
  limitingCorner: string;
  losses: LossVerdict;
  /** The parts tried at the worst case, least loss first; the design takes the first that passes (design.damper may rule out the sets with or without a damper). */
  candidates: Candidate[];
  /** What the design cost: clamp sets tried, settled simulations in all (variant runs and load settlings), rounds of the search, worker processes (0: one process). */
  search: { clampSets: number; simulations: number; rounds: number; workers: number };
  /** Index in `candidates` of the set the design took. */
  chosenCandidate: number;
  pass: boolean;
  notes: string[];
}

type Parts = { r: number; c: number; rs: number; cs: number };

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

/** The total a resistor is built at: itself, or n equal preferred parts in series where one part cannot carry it. */
function resistorBuild(value: number, load: { power: number; voltage: number; ambientCelsius: number }, series: PreferredSeries): { total: number; count: number; perResistor: number } {
  const arrangement = fewestResistors({ resistance: value, ...load });
  if (!arrangement.ok || arrangement.count === 1) return { total: value, count: 1, perResistor: value };
  const split = preferredSplit(value, arrangement.count, series);
  return { total: split.total, count: arrangement.count, perResistor: split.value };
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

export interface DesignOptions {
  deadlineMs?: number;
  /** Where the simulations run (the caller closes it); else `workers` processes, or this process when 0 (the default). */
  runner?: DesignRunner;
  workers?: number;
  /** Pixel columns of the drain traces kept for the plots. */
  traceColumns?: number;
}

/** Drain traces for the plots: every variant at the worst case, and the corner that sets the peak. */
export interface DesignPlots {
  worstCase: Partial<Record<VariantName, DrainTraces>>;
  limiting: { corner: string; traces: Partial<Record<VariantName, DrainTraces>> };
}

const DEFAULT_TRACE_COLUMNS = 800;

export async function designClamp(s: Scenario, options: DesignOptions = {}): Promise<DesignResult & { plots: DesignPlots }> {
  const hand = handDesign(s);
  const runner = options.runner ?? ((options.workers ?? 0) > 0 ? processRunner(options.workers!) : inProcessRunner());
  try {
    return await designWith(s, hand, runner, options);
  } finally {
    if (!options.runner) await runner.close();
  }
}

async function designWith(s: Scenario, hand: HandDesign, runner: DesignRunner, options: DesignOptions): Promise<DesignResult & { plots: DesignPlots }> {
  const t = hand.targets;
  const deadline = options.deadlineMs === undefined ? {} : { deadlineMs: options.deadlineMs };
  const base = { drainDerating: t.drainDerating, ...deadline };
  const notes = [...hand.notes];

  // With the load given, each corner's current is the one that delivers it there. The bare
  // circuit sets it (the clamp parts do not enter), so corners that differ only in the clamp's
  // tolerances share one settling, and every corner settles side by side before the search.
  const settleKey = (c: Corner): string => `${c.supplyVoltage}/${c.leakageInductance}/${c.drainCapacitanceFactor}`;
  const settling = new Map<string, Promise<number>>();
  for (const c of hand.corners.filter((x) => x.fromLoad)) {
    if (settling.has(settleKey(c))) continue;
    const placed = scenarioAtCorner(s, hand, c, { r: hand.resistance, c: hand.capacitance, rs: hand.damper.resistance, cs: hand.damper.capacitance });
    settling.set(settleKey(c), runner.run({ ...base, scenario: placed, settle: true, variants: [] }).then((r) => r.peakCurrent!));
  }
  const settledCurrents = new Map<string, number>();
  // All awaited together: a failed settling must not leave the others' failures unhandled.
  const settledValues = await Promise.all(settling.values());
  [...settling.keys()].forEach((k, i) => settledCurrents.set(k, settledValues[i]!));
  const settledCorner = (c: Corner): Corner => (c.fromLoad ? { ...c, peakCurrent: settledCurrents.get(settleKey(c))! } : c);
  const corners = hand.corners.map(settledCorner);
  const worstCase = corners[hand.corners.indexOf(hand.worstCase)]!;
  const place = (corner: Corner, parts: Parts): Scenario => scenarioAtCorner(s, hand, corner, parts);
  const columns = options.traceColumns ?? DEFAULT_TRACE_COLUMNS;
  // Every variant run of the design, once: the search's runs at the worst case serve the
  // verification of the parts it chose. The clamp-alone and bare runs do not depend on the damper.
  const runs = new Map<string, Promise<DesignRunSuccess>>();
  const simulate = (corner: Corner, parts: Parts, variant: VariantName): Promise<DesignRunSuccess> => {
    const key = [corner.name, variant, ...(variant === 'bare' ? [] : [parts.r, parts.c]), ...(variant === 'damped' ? [parts.rs, parts.cs] : [])].join('|');
    let run = runs.get(key);
    if (!run) {
      run = runner.run({ ...base, scenario: place(corner, parts), variants: [variant], traceColumns: columns });
      runs.set(key, run);
    }
    return run;
  };

  const search = await searchCandidates({
    scenario: s, hand, worstCase, withDampers: t.damper !== 'never',
    simulate: async (parts, variant) => (await simulate(worstCase, parts, variant)).variants[variant]!,
  });
  const candidates = search.candidates;
  const chosen = chooseCandidate(candidates, t.damper);
  const fitted = chosen.damper !== null;
  // Without a damper the designed one still runs at every corner, for comparison (and the plot).
  const damper = { ...(chosen.damper ?? { resistance: hand.damper.resistance, capacitance: hand.damper.capacitance }) };
  const searched: Parts = { r: chosen.clamp.resistance, c: chosen.clamp.capacitance, rs: damper.resistance, cs: damper.capacitance };
  const adjustments: DesignResult['adjustments'] = [];
  if (!chosen.handDesign) {
    const what = chosen.pass ? 'the least loss among the preferred sets that pass at the worst case' : chosen.withinLimit ? 'no set passes the loss budget: the least loss among those under the limit' : 'no set keeps the worst case under the limit: the lowest peak';
    adjustments.push({
      resistance: searched.r, capacitance: searched.c, worstCasePeak: chosen.peakDrainVoltage,
      reason: `${what} (${chosen.totalLoss.toFixed(3)} W, ${fitted ? `damper ${formatSi(damper.resistance, 'Ω')} with ${formatSi(damper.capacitance, 'F')}` : 'no damper'}; ${search.clampSets} clamp sets and ${search.candidates.length} candidates)`,
    });
  }
  // A resistor split into equal preferred parts is verified at the total actually built (2 × 41.2 Ω
  // is 82.4 Ω, not 82 Ω): the arrangement comes from the worst case's power and voltage.
  const [wcClamp, wcDamped] = await Promise.all([simulate(worstCase, searched, 'clamp'), simulate(worstCase, searched, 'damped')]);
  const clampAlone = wcClamp.variants.clamp!, damped = wcDamped.variants.damped!;
  const ambientCelsius = t.ambientTemperature;
  const clampBuild = resistorBuild(searched.r, { power: clampAlone.clampResistorPower!, voltage: clampAlone.clampVoltageMean! + clampAlone.clampVoltageRipple! / 2, ambientCelsius }, t.resistorSeries);
  const damperBuild = resistorBuild(searched.rs, { power: damped.damperResistorPower!, voltage: damped.peakDrainVoltage, ambientCelsius }, t.resistorSeries);
  const parts: Parts = { ...searched, r: clampBuild.total, rs: damperBuild.total };
  const splitAdjustment = parts.r === searched.r ? null : adjustments[adjustments.push({ resistance: parts.r, capacitance: parts.c, worstCasePeak: chosen.peakDrainVoltage, reason: `the clamp resistor is built as ${clampBuild.count} × ${formatSi(clampBuild.perResistor, 'Ω')} = ${formatSi(parts.r, 'Ω')}: every corner is verified at that total` }) - 1]!;
  damper.resistance = parts.rs;

  // Every corner with the chosen parts, each variant its own task so that the workers share them evenly.
  const verified = await Promise.all(corners.map(async (corner) => {
    const variants: VariantName[] = corner === worstCase ? ['bare', 'clamp', 'damped'] : ['clamp', 'damped'];
    const results = await Promise.all(variants.map((v) => simulate(corner, parts, v)));
    const metrics: SimulationReport['variants'] = Object.assign({}, ...results.map((r) => r.variants));
    const traces: Partial<Record<VariantName, DrainTraces>> = Object.assign({}, ...results.map((r) => r.traces ?? {}));
    // The verdict is on the circuit built: with a damper, the clamp alone must pass too (the damper only lowers it).
    const judged = fitted ? [metrics.clamp!, metrics.damped!] : [metrics.clamp!];
    const worst = Math.max(...judged.map((m) => m.peakDrainVoltage));
    const limit = hand.deratedLimit - hand.allowance;
    const verification: CornerVerification = { conditions: corner, variants: metrics, pass: judged.every((m) => m.settled) && worst <= limit, margin: limit - worst };
    return { verification, traces };
  }));
  const worst = verified[corners.indexOf(worstCase)]!;
  if (splitAdjustment) splitAdjustment.worstCasePeak = hand.deratedLimit - hand.allowance - worst.verification.margin;
  const nominal = verified[corners.indexOf(corners[hand.corners.indexOf(hand.nominal)]!)]!;
  for (const { verification: c } of verified) {
    const unsettled = (fitted ? (['clamp', 'damped'] as const) : (['clamp'] as const)).filter((v) => !c.variants[v]!.settled);
    if (unsettled.length > 0) notes.push(`At the corner "${c.conditions.name}" the ${unsettled.join(' and ')} variant did not settle (${unsettled.map((v) => c.variants[v]!.orbit).join(', ')}): the corner cannot pass until it does (fixed duty in continuous conduction at high line, or peak-current control above 50 % duty).`);
  }
  const cornerReports: CornerReport[] = verified.map(({ verification: c }) => ({
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
  const limiting = verified.reduce((a, b) => (b.verification.margin < a.verification.margin ? b : a));
  const losses = lossVerdict(hand, verified.map((v) => v.verification), fitted);
  if (!(losses.outputPower > 0)) notes.push(`The circuit delivers no power at the corner "${losses.corner}": check the scenario's values (the warnings name the unusual ones).`);
  else if (!losses.pass) notes.push(`Clamp${fitted ? ' and damper' : ''} dissipate${fitted ? '' : 's'} ${losses.total.toFixed(2)} W at the corner "${losses.corner}", ${(100 * losses.share).toFixed(1)} % of the ${losses.outputPower.toFixed(2)} W output, over the budget of ${losses.budget!.toFixed(2)} W (design.lossBudget): a lower leakage inductance, a higher reflected voltage${fitted ? ' or a smaller damper capacitor' : ''} lowers it.`);
  if (!chosen.withinLimit) notes.push(`No preferred set keeps the worst case under the derated limit less the allowance: a larger clamp capacitor, a lower leakage inductance or a higher-rated transistor is needed.`);

  const noDamper = candidates.find((c) => c.pass && c.damper === null);
  if (!fitted) {
    notes.push(t.damper === 'never'
      ? 'No damper (design.damper "never"): the ring after the clamp is left undamped; the designed damper is simulated at every corner for comparison only.'
      : `No damper: the least-loss set ${chosen.pass ? 'that passes' : 'found'} has none, as a damper adds its Cs·V²·fsw to the loss and the clamp alone already sets the peak. The ring after the clamp is left undamped (the designed damper is simulated at every corner for comparison); set design.damper to "always" to fit one.`);
  } else if (noDamper && noDamper.totalLoss < chosen.totalLoss) {
    notes.push(`Without a damper, clamp ${formatSi(noDamper.clamp.resistance, 'Ω')} with ${formatSi(noDamper.clamp.capacitance, 'F')} also passes at the worst case, at ${noDamper.totalLoss.toFixed(3)} W${t.damper === 'always' ? ' (design.damper "always" keeps the damper)' : ''}.`);
  }

  const stresses = partStresses(s, hand, parts, worst.verification, fitted);
  const damperPower = worst.verification.variants.damped!.damperResistorPower!;
  const clampPower = worst.verification.variants.clamp!.clampResistorPower!;
  if (fitted && damperPower > clampPower) {
    notes.push(`The damper dissipates ${damperPower.toFixed(2)} W at the worst case, more than the clamp (${clampPower.toFixed(2)} W): its loss grows with Cs·V²; a smaller damper capacitor trades ring damping for loss.`);
  }
  return {
    scenario: s.name,
    hand,
    clamp: { resistance: parts.r, capacitance: parts.c, diodeDrop: hand.clampDiodeDrop },
    damper,
    damperFitted: fitted,
    adjustments,
    stresses,
    verification: { worstCase: worst.verification, nominal: nominal.verification },
    allowance: hand.allowance,
    corners: cornerReports,
    limitingCorner: limiting.verification.conditions.name,
    losses,
    candidates,
    chosenCandidate: candidates.indexOf(chosen),
    search: { clampSets: search.clampSets, simulations: runs.size + settling.size, rounds: search.rounds, workers: runner.workers },
    pass: verified.every((v) => v.verification.pass) && losses.pass,
    notes,
    plots: { worstCase: worst.traces, limiting: { corner: limiting.verification.conditions.name, traces: limiting.traces } },
  };
}

/** The few best candidates, and the hand design (the starting point) wherever it ranks. */
export function shownCandidates(d: DesignResult, count = 6): DesignResult['candidates'] {
  const best = d.candidates.slice(0, count);
  const chosen = d.candidates[d.chosenCandidate];
  const more = d.candidates.filter((c) => (c.handDesign || c === chosen) && !best.includes(c));
  return [...best, ...more];
}

/**
 * The design's parts: the least-loss candidate that passes, among those the damper choice allows;
 * when none passes, the least loss under the limit (the loss budget fails), else the lowest peak.
 */
export function chooseCandidate(candidates: readonly Candidate[], choice: DamperChoice): Candidate {
  const allowed = candidates.filter((c) => choice === 'least-loss' || (choice === 'always') === (c.damper !== null));
  const pool = allowed.length > 0 ? allowed : [...candidates];
  const byLoss = [...pool].sort((a, b) => a.totalLoss - b.totalLoss);
  return byLoss.find((c) => c.pass) ?? byLoss.find((c) => c.withinLimit) ?? [...pool].sort((a, b) => a.peakDrainVoltage - b.peakDrainVoltage)[0]!;
}

/** The loss of the built design (the damper only when fitted) at the corner where it is highest, against the budget. */
function lossVerdict(hand: HandDesign, corners: readonly CornerVerification[], damperFitted: boolean): LossVerdict {
  const of = (c: CornerVerification) => {
    const m = damperFitted ? c.variants.damped! : c.variants.clamp!;
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

function partStresses(s: Scenario, hand: HandDesign, parts: Parts, worst: CornerVerification, damperFitted: boolean): PartStress[] {
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
    let note = s.clamp || p.part !== 'clamp diode' ? p.note : `${p.note}; diode drop assumed 1.0 V (no clamp block in the scenario)`;
    if (!damperFitted && p.part.startsWith('damper')) note = `not fitted: the designed damper, should one be fitted${note ? `; ${note}` : ''}`;
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
