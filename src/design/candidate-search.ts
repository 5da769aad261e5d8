// The cheapest parts that pass: preferred clamp resistors and capacitors, and the damper or none,
// tried at the worst case with the full model, the simulations of each round side by side on the
// design's runner.
//
// The grid: clamp resistor R at whole steps of its preferred series from the hand design's value
// (level 0), and for each R the capacitor by the ripple rule (step 0) or one or two preferred steps
// larger (less ripple, so a lower peak at the same mean clamp voltage) while the ripple stays at or
// above the design's minimum. The peak falls as R falls (the clamp holds lower) and as C grows; the
// loss falls as R grows (a higher clamp voltage takes less of the reflected energy). So for each
// capacitor step the search looks for the largest R that passes: the hand formula, calibrated by one
// simulation per step at the hand resistor, predicts it, and the rounds walk from there until the
// largest passing level is bracketed by a failing one above it. The damper (as designed, one
// preferred capacitor step smaller, or none) is tried on the best clamp set, and the hand design
// is simulated as built.

import type { Scenario } from '../circuit/scenario.js';
import { reflectedVoltage } from '../circuit/scenario.js';
import { settledClampVoltage } from '../equations/rcd-clamp.js';
import { roundToSeries, stepInSeries } from '../equations/preferred-values.js';
import type { VariantMetrics } from '../analysis/variant-metrics.js';
import type { Corner, HandDesign } from './hand-design.js';

/** A set of preferred parts tried at the worst case: the clamp, and the damper or none. */
export interface Candidate {
  clamp: { resistance: number; capacitance: number };
  damper: { resistance: number; capacitance: number } | null;
  /** The higher of the clamp-alone and (with a damper) the damped peaks at the worst case, V. */
  peakDrainVoltage: number;
  /** Derated limit less the allowance, minus that peak, V. */
  margin: number;
  /** Clamp resistor and diode plus damper resistor at the worst case, W. */
  totalLoss: number;
  /** Settled, and the peak at or under the derated limit less the allowance (the loss not counted). */
  withinLimit: boolean;
  /** Within the limit, delivering power, and within the loss budget there. */
  pass: boolean;
  /** Parts in the build: clamp R and C, and the damper's two when fitted. */
  partsCount: number;
  /** The hand design's own parts (the starting point). */
  handDesign: boolean;
}

export interface SearchContext {
  scenario: Scenario;
  hand: HandDesign;
  /** The worst case with its peak current settled on the load where a load is given. */
  worstCase: Corner;
  /** One variant simulated at the worst case with these parts (the design's runner and its memo). */
  simulate: (parts: { r: number; c: number; rs: number; cs: number }, variant: 'clamp' | 'damped') => Promise<VariantMetrics>;
  /** Try dampers at all ('never' skips them). */
  withDampers: boolean;
}

export interface SearchResult {
  /** Least loss first. */
  candidates: Candidate[];
  /** Clamp sets simulated, and variant runs in all. */
  clampSets: number;
  simulations: number;
  rounds: number;
}

/** Capacitor steps above the ripple rule's value. */
const MAX_CAPACITOR_STEPS = 2;
/** Resistor levels from the hand design's value: the formulas are seldom more than a few steps off. */
const LOWEST_LEVEL = -12;
const HIGHEST_LEVEL = 4;
const MAX_ROUNDS = 8;

interface ClampTrial { level: number; step: number; resistance: number; capacitance: number; metrics: VariantMetrics }

export async function searchCandidates(ctx: SearchContext): Promise<SearchResult> {
  const { scenario: s, hand, worstCase } = ctx;
  const t = hand.targets;
  const f = s.switch.frequency;
  const limit = hand.deratedLimit - hand.allowance;
  const budgetFor = (outputPower: number): number => (t.lossBudget.kind === 'absolute' ? t.lossBudget.value : t.lossBudget.value * outputPower);
  const designed = { resistance: hand.damper.resistance, capacitance: hand.damper.capacitance };
  let simulations = 0;

  const resistanceAt = (level: number): number => (level === 0 ? hand.resistance : stepInSeries(hand.resistance, t.resistorSeries, level));
  // The ripple rule follows the resistor: C at or above 1/(ΔVc/Vc·R·fsw), allowing for the capacitor's tolerance.
  const capacitanceAt = (level: number, step: number): number | null => {
    const r = resistanceAt(level);
    const ruled = roundToSeries(1 / (t.clampRippleMaximum * r * f * (1 - t.capacitorTolerance)), t.capacitorSeries, 'up');
    const c = step === 0 ? ruled : stepInSeries(ruled, t.capacitorSeries, step);
    // A larger capacitor only while the ripple stays at or above the minimum aimed at.
    return step === 0 || 1 / (r * c * f) >= t.clampRippleMinimum ? c : null;
  };

  const trials = new Map<string, ClampTrial>();
  const key = (level: number, step: number): string => `${level}/${step}`;
  const passes = (m: VariantMetrics): boolean => m.settled && m.peakDrainVoltage <= limit;
  const tryClamps = async (cells: ReadonlyArray<{ level: number; step: number }>): Promise<void> => {
    await Promise.all(cells.map(async ({ level, step }) => {
      const resistance = resistanceAt(level), capacitance = capacitanceAt(level, step)!;
      simulations++;
      const metrics = await ctx.simulate({ r: resistance, c: capacitance, rs: designed.resistance, cs: designed.capacitance }, 'clamp');
      trials.set(key(level, step), { level, step, resistance, capacitance, metrics });
    }));
  };
  const steps = Array.from({ length: MAX_CAPACITOR_STEPS + 1 }, (_, k) => k);
  const allowed = (level: number, step: number): boolean => level >= LOWEST_LEVEL && level <= HIGHEST_LEVEL && capacitanceAt(level, step) !== null;

  // Round 1: the hand resistor with every capacitor step, and the hand design as built (with its damper).
  const handDamped = ctx.withDampers
    ? (async () => {
      simulations++;
      return ctx.simulate({ r: hand.resistance, c: hand.capacitance, rs: designed.resistance, cs: designed.capacitance }, 'damped');
    })()
    : null;
  // Awaited after the clamps; should they fail first, its own failure must not go unhandled.
  handDamped?.catch(() => undefined);
  await tryClamps(steps.filter((step) => allowed(0, step)).map((step) => ({ level: 0, step })));
  let rounds = 1;

  // The hand formula's clamp voltage plus an offset found at the hand resistor predicts the peak at every level.
  const vr = reflectedVoltage(s);
  const formulaPeak = (level: number): number =>
    settledClampVoltage(resistanceAt(level) * worstCase.resistanceFactor, worstCase.leakageInductance, worstCase.peakCurrent, f, vr);
  const predictedLevel = (step: number): number => {
    const at = trials.get(key(0, step));
    if (!at) return 0;
    const offset = at.metrics.peakDrainVoltage - formulaPeak(0);
    let level = HIGHEST_LEVEL;
    while (level > LOWEST_LEVEL && formulaPeak(level) + offset > limit) level--;
    return level;
  };

  for (; rounds < MAX_ROUNDS; rounds++) {
    const next: Array<{ level: number; step: number }> = [];
    const propose = (level: number, step: number): void => {
      if (allowed(level, step) && !trials.has(key(level, step)) && !next.some((n) => n.level === level && n.step === step)) next.push({ level, step });
    };
    for (const step of steps) {
      if (!trials.has(key(0, step))) continue; // a step the ripple minimum rules out at the hand resistor
      const mine = [...trials.values()].filter((x) => x.step === step);
      const passing = mine.filter((x) => passes(x.metrics)).map((x) => x.level);
      const failing = mine.filter((x) => !passes(x.metrics)).map((x) => x.level);
      if (rounds === 1) {
        // Bracket the prediction in one round: the predicted level and the one above it.
        const predicted = predictedLevel(step);
        propose(predicted, step);
        propose(predicted + 1, step);
      } else if (passing.length === 0) {
        propose(Math.min(...failing) - 1, step);
      } else {
        propose(Math.max(...passing) + 1, step);
      }
    }
    if (next.length === 0) break;
    await tryClamps(next);
  }

  const candidates: Candidate[] = [];
  const add = (trial: ClampTrial, damper: Candidate['damper'], peak: number, loss: number, settled: boolean, outputPower: number): void => {
    const withinLimit = settled && peak <= limit;
    candidates.push({
      clamp: { resistance: trial.resistance, capacitance: trial.capacitance }, damper,
      peakDrainVoltage: peak, margin: limit - peak, totalLoss: loss, withinLimit,
      pass: withinLimit && outputPower > 0 && loss <= budgetFor(outputPower), partsCount: damper ? 4 : 2,
      handDesign: trial.level === 0 && trial.step === 0 && (damper === null || (damper.resistance === designed.resistance && damper.capacitance === designed.capacitance)),
    });
  };
  const clampLoss = (m: VariantMetrics): number => (m.clampResistorPower ?? 0) + (m.clampDiodePower ?? 0);
  for (const trial of trials.values()) add(trial, null, trial.metrics.peakDrainVoltage, clampLoss(trial.metrics), trial.metrics.settled, trial.metrics.outputPower);

  if (ctx.withDampers) {
    const hand0 = trials.get(key(0, 0))!;
    const dampedAtHand = await handDamped!;
    const damperLoss = (m: VariantMetrics): number => clampLoss(m) + (m.damperResistorPower ?? 0);
    add(hand0, designed, Math.max(hand0.metrics.peakDrainVoltage, dampedAtHand.peakDrainVoltage), damperLoss(dampedAtHand), hand0.metrics.settled && dampedAtHand.settled, dampedAtHand.outputPower);
    // The best clamp set (within the limit by least loss, else by lowest peak) with each damper:
    // a damper adds about the same loss to any clamp set, so the best set stays the best with one.
    const ranked = [...trials.values()].sort((a, b) => {
      const pa = passes(a.metrics), pb = passes(b.metrics);
      if (pa !== pb) return pa ? -1 : 1;
      return pa ? clampLoss(a.metrics) - clampLoss(b.metrics) : a.metrics.peakDrainVoltage - b.metrics.peakDrainVoltage;
    }).slice(0, 1);
    const smaller = { resistance: designed.resistance, capacitance: stepInSeries(designed.capacitance, t.capacitorSeries, -1) };
    const jobs = ranked.flatMap((trial) => [designed, smaller]
      .filter((d) => !(trial === hand0 && d === designed))
      .map((damper) => ({ trial, damper })));
    await Promise.all(jobs.map(async ({ trial, damper }) => {
      simulations++;
      const m = await ctx.simulate({ r: trial.resistance, c: trial.capacitance, rs: damper.resistance, cs: damper.capacitance }, 'damped');
      add(trial, damper, Math.max(trial.metrics.peakDrainVoltage, m.peakDrainVoltage), damperLoss(m), trial.metrics.settled && m.settled, m.outputPower);
    }));
  } else if (handDamped) {
    await handDamped;
  }
  // Least loss first; ties (equal to the last digit) keep the larger margin first, then fewer parts.
  candidates.sort((a, b) => a.totalLoss - b.totalLoss || b.margin - a.margin || a.partsCount - b.partsCount);
  return { candidates, clampSets: trials.size, simulations, rounds };
}
