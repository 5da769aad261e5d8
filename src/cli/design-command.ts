import { loadScenarioFile } from '../circuit/load-scenario.js';
import { formatIssues } from '../circuit/validate-scenario.js';
import { formatSi } from '../circuit/si-number.js';
import { designClamp, shownCandidates, type DesignResult } from '../design/design-clamp.js';
import { designWorkers } from '../design/design-runner.js';
import { DesignImpossible } from '../design/hand-design.js';
import { designReportHtml } from '../design/design-report-html.js';
import { SimulationFailure } from '../simulation/run-variant.js';
import { BadInput, outputFor, SimulationFailed } from './cli-errors.js';
import { checkOutputPath, writeFileAtomic } from './write-atomic.js';
import { enforceWorkBudget, readMaxSeconds, withBudgetHint } from './work-limits.js';
import { nonFinitePaths } from '../analysis/result-checks.js';
import { designVariantRuns } from '../analysis/work-budget.js';

export interface DesignOptions { json?: boolean; report?: string; maxSeconds?: string }

export async function runDesignCommand(file: string, options: DesignOptions): Promise<void> {
  const maxSeconds = readMaxSeconds(options.maxSeconds);
  const loaded = await loadScenarioFile(file);
  if (!loaded.ok) throw new BadInput(formatIssues(loaded.issues));
  if (options.report) {
    if (!/\.html?$/i.test(options.report)) throw new BadInput(`--report: expected a file name ending in .html, found ${options.report}`);
    await outputFor('--report', () => checkOutputPath(options.report!, [file]));
  }
  enforceWorkBudget(loaded.scenario, designVariantRuns(loaded.scenario), maxSeconds);
  let result: Awaited<ReturnType<typeof designClamp>>;
  try {
    result = await designClamp(loaded.scenario, { deadlineMs: Date.now() + maxSeconds * 1000, workers: designWorkers(loaded.scenario) });
  } catch (error) {
    if (error instanceof DesignImpossible || error instanceof SimulationFailure) throw new SimulationFailed(withBudgetHint(error.message, maxSeconds));
    throw error;
  }
  const { plots, ...json } = result;
  const notFinite = nonFinitePaths(json);
  if (notFinite.length > 0) throw new SimulationFailed(`the design has no finite value for ${notFinite.join(', ')}: check the scenario's part values for a wrong SI prefix`);
  process.stdout.write(options.json ? `${JSON.stringify(json, null, 2)}\n` : `${designTable(json)}\n`);
  if (options.report) {
    await outputFor('--report', () => writeFileAtomic(options.report!, designReportHtml(loaded.scenario, json, plots, loaded.raw), [file]));
    if (!options.json) process.stdout.write(`Report written to ${options.report}\n`);
  }
}

const v = (x: number | undefined, unit: string): string => (x === undefined ? '—' : formatSi(x, unit));

export function designTable(d: DesignResult): string {
  const h = d.hand;
  const lines: string[] = [
    `Clamp design for: ${d.scenario}`,
    `Worst case: Vin ${v(h.worstCase.supplyVoltage, 'V')}, Llk ${v(h.worstCase.leakageInductance, 'H')} (+${(100 * h.targets.leakageTolerance).toFixed(0)} %), Ipk ${v(h.worstCase.peakCurrent, 'A')} (+${(100 * h.targets.peakCurrentTolerance).toFixed(0)} %), clamp R +${(100 * h.targets.resistorTolerance).toFixed(0)} %, C −${(100 * h.targets.capacitorTolerance).toFixed(0)} %, Coss −${(100 * h.targets.drainCapacitanceTolerance).toFixed(0)} %`,
    `Limit: derated ${v(h.deratedLimit, 'V')} (${(100 * h.targets.drainDerating).toFixed(0)} % of the rating) less an allowance of ${v(d.allowance, 'V')} for what the model leaves out: every corner's peak ≤ ${v(h.deratedLimit - d.allowance, 'V')}`,
  ];
  if (h.extracted) lines.push(`From the measured ring: Coss ${v(h.extracted.drainCapacitance, 'F')}, Llk ${v(h.extracted.leakageInductance, 'H')}, Z0 ${v(h.extracted.characteristicImpedance, 'Ω')} (replace the scenario's values)`);
  lines.push('', 'Equations');
  for (const e of h.equations) lines.push(`  ${e.quantity.padEnd(42)} ${e.formula.padEnd(46)} ${v(e.value, e.unit).padStart(11)}   [${e.source}]`);
  lines.push('', 'Chosen parts (paste into the scenario file)', `  "clamp": ${JSON.stringify(d.clamp)}`);
  lines.push(d.damperFitted ? `  "damper": ${JSON.stringify(d.damper)}` : `  no damper (leave the damper block out; the designed one, ${v(d.damper.resistance, 'Ω')} + ${v(d.damper.capacitance, 'F')}, is simulated for comparison only)`);
  for (const a of d.adjustments) lines.push(`  adjusted: R = ${v(a.resistance, 'Ω')}, C = ${v(a.capacitance, 'F')} (worst-case peak ${v(a.worstCasePeak, 'V')}): ${a.reason}`);
  lines.push('', 'Part stresses (worst case, simulated)');
  for (const s of d.stresses) {
    const arr = s.arrangement ? (s.arrangement.ok
      ? `${s.arrangement.count} × ${s.arrangement.caseName}${s.preferredPerResistor ? ` of ${v(s.preferredPerResistor.value, 'Ω')} in series (${v(s.preferredPerResistor.total, 'Ω')} in all)` : ''}, ${v(s.arrangement.powerPerResistor, 'W')} and ${v(s.arrangement.voltagePerResistor, 'V')} each${s.arrangement.hotSpot ? ' (hot spot: over 0.1 W per part)' : ''}`
      : `no chip arrangement: ${s.arrangement.reason}`) : '';
    const rating = s.suggestedRating ? `rated ≥ ${v(s.suggestedRating, 'V')} (margin ${(100 * s.voltageMargin!).toFixed(0)} %)` : '';
    lines.push(`  ${s.part.padEnd(16)} ${v(s.value, s.unit).padStart(9)}  working ${v(s.workingVoltage, 'V')}${s.power !== undefined ? `, ${v(s.power, 'W')}` : ''}${s.peakCurrent !== undefined ? `, peak ${v(s.peakCurrent, 'A')}` : ''}  ${rating}${arr}`);
  }
  lines.push('', 'Verification by settled simulation, at every corner');
  for (const c of d.corners) {
    const peaks = (['bare', 'clamp', 'damped'] as const).map((k) => `${k} ${v(c.variants[k]?.peakDrainVoltage, 'V')}`).join(', ');
    const limiting = c.name === d.limitingCorner ? '  ← sets the peak' : '';
    lines.push(`  ${c.name}: Vin ${v(c.inputVoltage, 'V')}, Llk ${v(c.leakageInductance, 'H')}, Ipk ${v(c.peakCurrent, 'A')}, R ${v(c.partValues.clampResistance, 'Ω')}, C ${v(c.partValues.clampCapacitance, 'F')}`);
    lines.push(`      peaks ${peaks}; ${c.pass ? 'PASS' : 'FAIL'}, margin ${v(h.deratedLimit - d.allowance - c.peakDrainVoltage, 'V')}${limiting}`);
  }
  const l = d.losses;
  lines.push('', `Losses at "${l.corner}", as built: clamp ${v(l.clamp, 'W')} + damper ${d.damperFitted ? v(l.damper, 'W') : 'none'} = ${v(l.total, 'W')}, ${(100 * l.share).toFixed(1)} % of the ${v(l.outputPower, 'W')} output; budget ${l.budget === null ? 'none' : v(l.budget, 'W')}: ${l.pass ? 'PASS' : 'FAIL'}`);
  lines.push('', `Parts tried at the worst case, least loss first (${d.search.clampSets} clamp sets, ${d.candidates.length} candidates; the design takes the first that passes${d.hand.targets.damper === 'least-loss' ? '' : `, design.damper "${d.hand.targets.damper}"`})`);
  for (const c of shownCandidates(d)) {
    const damper = c.damper ? `damper ${v(c.damper.resistance, 'Ω')} + ${v(c.damper.capacitance, 'F')}` : 'no damper';
    const chosen = c === d.candidates[d.chosenCandidate];
    lines.push(`  ${c.pass ? 'pass' : 'FAIL'}  clamp ${v(c.clamp.resistance, 'Ω')} ∥ ${v(c.clamp.capacitance, 'F')}, ${damper}: peak ${v(c.peakDrainVoltage, 'V')}, margin ${v(c.margin, 'V')}, loss ${v(c.totalLoss, 'W')}, ${c.partsCount} parts${c.handDesign ? '  (hand design)' : ''}${chosen ? '  ← chosen' : ''}`);
  }
  lines.push('', `Overall: ${d.pass ? 'PASS' : 'FAIL'} against the derated limit less the allowance at every corner, and the loss budget.`);
  for (const n of d.notes) lines.push(`Note: ${n}`);
  lines.push('', 'Design aid only, not compliance evidence: check parts against their datasheets and local codes. See the README, "Safety".');
  return lines.join('\n');
}
