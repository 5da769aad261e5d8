// The library entry: `import { simulate, design, sweep, loadScenario } from 'flyclamp'`, for a
// script that runs a study of its own. The same checks as the CLI: a scenario is validated (a bad
// one throws ScenarioInvalid with every issue), and a run estimated over its time budget is refused
// before it starts (WorkBudgetExceeded).

import { loadScenarioFile } from './circuit/load-scenario.js';
import { validateScenario, type ValidationIssue } from './circuit/validate-scenario.js';
import { formatIssues, issueAtField } from './contract/issues.js';
import { availableVariants, type Scenario, type VariantName } from './circuit/scenario.js';
import { scenarioToJson, getNumberAt } from './circuit/scenario-json.js';
import { simulationReport, drainDerating, type SimulationReport } from './analysis/simulation-report.js';
import { checkWorkBudget, designVariantRuns } from './analysis/work-budget.js';
import { settleOperatingPoint } from './simulation/operating-point.js';
import { runVariant, SimulationFailure, type VariantRun } from './simulation/run-variant.js';
import { designClamp, type DesignResult } from './design/design-clamp.js';
import { DesignImpossible } from './design/hand-design.js';
import { choosePoints } from './study/choose-points.js';
import { runStudy, type StudyPoint } from './study/run-study.js';
import { peakDistribution, worstPerVariant, type PeakDistribution, type WorstCase } from './study/study-summary.js';
import { StudySpecError } from './study/study-spec.js';

/** The CLI's default budget, s: a run estimated over it is refused, one that runs over it is stopped. */
export const DEFAULT_MAX_SECONDS = 120;

/** A scenario that is not valid: `issues` names each field with what was expected and what was found. */
export class ScenarioInvalid extends Error {
  constructor(readonly issues: ValidationIssue[]) { super(`invalid scenario:\n${formatIssues(issues)}`); }
}

/** A run estimated over its budget, refused before it started; `issues` names the value that makes it expensive. */
export class WorkBudgetExceeded extends Error {
  constructor(readonly issues: ValidationIssue[]) { super(formatIssues(issues)); }
}

export { SimulationFailure, DesignImpossible, StudySpecError };

/** Reads and validates a scenario file (the CLI's checks: a regular file, 256 kB, no repeated keys). */
export async function loadScenario(file: string): Promise<Scenario> {
  const loaded = await loadScenarioFile(file);
  if (!loaded.ok) throw new ScenarioInvalid(loaded.issues);
  return loaded.scenario;
}

/** Validates a scenario object (as a file holds it: numbers or SI strings). */
export function parseScenario(input: unknown): Scenario {
  const validated = validateScenario(input);
  if (!validated.ok) throw new ScenarioInvalid(validated.issues);
  return validated.scenario;
}

export interface RunLimits {
  /** Work budget, s (default 120): refused before it starts when estimated over, stopped when it runs over. */
  maxSeconds?: number;
}

function refuseOverBudget(scenario: Scenario, variants: readonly VariantName[], maxSeconds: number): void {
  const refusals = checkWorkBudget(scenario, variants, maxSeconds, () => 'raise maxSeconds');
  if (refusals.length > 0) {
    throw new WorkBudgetExceeded(refusals.map(({ path, message }) => issueAtField(path, message)));
  }
}

export interface SimulateOptions extends RunLimits {
  /** Variants to run (default every one the scenario has: bare, and clamp and damped with their blocks). */
  variants?: VariantName[];
  /** Called each cycle while a variant settles: its cycle count and the last change against the settle tolerance. */
  onCycle?: (variant: VariantName, cycles: number, change: number) => void;
}

export interface SimulateResult {
  /** The metrics, as `flyclamp simulate --json` prints them. */
  report: SimulationReport;
  /** The recorded settled cycles of each variant, full resolution. */
  runs: VariantRun[];
  /** The scenario as simulated (with output.power given, the peak current found by the settled simulation). */
  scenario: Scenario;
}

/** Runs each variant to its settled state; throws SimulationFailure when one does not settle in time. */
export function simulate(scenario: Scenario, options: SimulateOptions = {}): SimulateResult {
  const maxSeconds = options.maxSeconds ?? DEFAULT_MAX_SECONDS;
  const supported = availableVariants(scenario);
  const variants = options.variants ?? supported;
  const missing = variants.filter((v) => !supported.includes(v));
  if (missing.length > 0) throw new RangeError(`variants: expected ones this scenario has (${supported.join(', ')}), found ${missing.join(', ')}`);
  refuseOverBudget(scenario, variants, maxSeconds);
  const deadlineMs = Date.now() + maxSeconds * 1000;
  const settled = settleOperatingPoint(scenario, { deadlineMs }).scenario;
  const onCycle = options.onCycle;
  const runs = variants.map((variant) => runVariant(settled, variant, {
    deadlineMs,
    ...(onCycle ? { onCycle: (cycles: number, change: number) => onCycle(variant, cycles, change) } : {}),
  }));
  return { report: simulationReport(settled, runs), runs, scenario: settled };
}

/** Sizes the clamp and damper by hand formulas and verifies them by simulation at the worst corners (`flyclamp design`). */
export async function design(scenario: Scenario, options: RunLimits = {}): Promise<DesignResult> {
  const maxSeconds = options.maxSeconds ?? DEFAULT_MAX_SECONDS;
  refuseOverBudget(scenario, designVariantRuns(scenario), maxSeconds);
  const { plots: _plots, ...result } = await designClamp(scenario, { deadlineMs: Date.now() + maxSeconds * 1000 });
  return result;
}

export interface SweepOptions extends RunLimits {
  /** Ranges as `flyclamp sweep --vary` takes them: "transformer.leakageInductance=-20%..+20%:9". */
  vary?: string[];
  /** Only the ends of each range (every combination of them). */
  corners?: boolean;
  /** Monte Carlo: this many samples of the `tolerance` ranges. */
  samples?: number;
  /** Monte Carlo ranges as `--tolerance` takes them: "clamp.resistance=±5%:normal". */
  tolerance?: string[];
  seed?: number;
  /** Worker processes (default one per core); 0 runs the points in this process. */
  workers?: number;
  signal?: AbortSignal;
  onProgress?: (done: number, total: number, failed: number) => void;
}

export interface SweepResult {
  kind: 'grid' | 'corners' | 'monte-carlo';
  points: StudyPoint[];
  worst: Partial<Record<VariantName, WorstCase>>;
  monteCarlo?: Partial<Record<VariantName, PeakDistribution>>;
  /** The base scenario's rating and derated limit (a point may vary the rating itself). */
  voltageRating: number;
  deratedLimit: number;
  /** Stopped before every point finished (the signal). */
  interrupted: boolean;
}

/** Runs a grid, its corners, or Monte Carlo samples on worker processes; a failed point keeps its reason. */
export async function sweep(scenario: Scenario, options: SweepOptions): Promise<SweepResult> {
  const base = scenarioToJson(scenario);
  const chosen = choosePoints({
    vary: options.vary ?? [], tolerance: options.tolerance ?? [], seed: options.seed ?? 1,
    ...(options.corners !== undefined ? { corners: options.corners } : {}),
    ...(options.samples !== undefined ? { samples: options.samples } : {}),
  }, (path) => getNumberAt(base, path));
  const maxSeconds = options.maxSeconds ?? DEFAULT_MAX_SECONDS;
  const study = await runStudy(base, chosen.points, {
    taskCapMs: maxSeconds * 1000,
    ...(options.workers !== undefined ? { workers: options.workers } : {}),
    ...(options.signal ? { signal: options.signal } : {}),
    ...(options.onProgress ? { onProgress: options.onProgress } : {}),
  });
  const deratedLimit = scenario.switch.voltageRating * drainDerating(scenario);
  return {
    kind: chosen.kind, points: study.points, worst: worstPerVariant(study.points),
    ...(chosen.kind === 'monte-carlo' ? { monteCarlo: peakDistribution(study.points, deratedLimit) } : {}),
    voltageRating: scenario.switch.voltageRating, deratedLimit, interrupted: study.interrupted,
  };
}

export { validateScenario, formatIssues };
export { SCENARIO_FIELDS, SCENARIO_BLOCKS, fieldAt, fieldUnit } from './contract/field-metadata.js';
export { scenarioSchema, scenarioFileSchema } from './contract/scenario-schema.js';
export { parseSiNumber, formatSi } from './circuit/si-number.js';
export type { FieldMetadata, BlockMetadata } from './contract/field-metadata.js';
export type { ScenarioFileInput } from './contract/scenario-schema.js';
export type { Scenario, VariantName, SimulationReport, VariantRun, DesignResult, StudyPoint, WorstCase, PeakDistribution, ValidationIssue };
export type * from './contract/api.js';
