// Runs study points on a pool of worker processes (one per core by default), in order of submission; a failed
// point is kept with its reason, and an abort keeps the points already finished.

import { withNumberAt, type ScenarioJson } from '../circuit/scenario-json.js';
import type { SimulationReport } from '../analysis/simulation-report.js';
import { ProcessPool } from '../workers/process-pool.js';
import type { PointValues } from './study-points.js';
import { runPointTask, type PointResult, type PointTask } from './point-task.js';
import { validateScenario } from '../circuit/validate-scenario.js';
import { availableVariants } from '../circuit/scenario.js';

export interface StudyPoint {
  index: number;
  values: PointValues;
  variants?: SimulationReport['variants'];
  failure?: string;
}

export interface StudyRun { points: StudyPoint[]; interrupted: boolean; deratedLimit: number; voltageRating: number }

export interface StudyOptions {
  /** Worker processes (default one per core); 0 runs the points one after another in this process. */
  workers?: number;
  /** A pool to use (and keep) instead of one made for this study, e.g. a warm one. */
  pool?: StudyPool;
  signal?: AbortSignal;
  /** Points still running past this Date.now() fail with a time-cap message. */
  deadlineMs?: number;
  onProgress?: (done: number, total: number, failed: number) => void;
}

export type StudyPool = ProcessPool<PointTask, PointResult>;

/** A pool of worker processes for study points; the caller destroys it. */
export function createStudyPool(workers?: number): StudyPool {
  const fromSource = import.meta.url.endsWith('.ts');
  return new ProcessPool<PointTask, PointResult>(new URL(`./point-process.${fromSource ? 'ts' : 'js'}`, import.meta.url), workers);
}

export function scenarioAtPoint(base: ScenarioJson, values: PointValues): ScenarioJson {
  let json = base;
  for (const [path, value] of Object.entries(values)) json = withNumberAt(json, path, value);
  return json;
}

export async function runStudy(base: ScenarioJson, pointValues: readonly PointValues[], options: StudyOptions = {}): Promise<StudyRun> {
  const total = pointValues.length;
  const points: Array<StudyPoint | undefined> = new Array(total);
  let done = 0, failed = 0;
  let deratedLimit = NaN, voltageRating = NaN;
  const record = (index: number, result: PointResult): void => {
    const values = pointValues[index]!;
    if (result.ok) {
      points[index] = { index, values, variants: result.report.variants };
      deratedLimit = result.report.deratedLimit;
      voltageRating = result.report.voltageRating;
    } else {
      points[index] = { index, values, failure: result.failure };
      failed++;
    }
    done++;
    options.onProgress?.(done, total, failed);
  };
  const scenarioAt = (index: number): ScenarioJson => scenarioAtPoint(base, pointValues[index]!);
  const deadline = options.deadlineMs === undefined ? {} : { deadlineMs: options.deadlineMs };

  if (!options.pool && (options.workers ?? 1) === 0) {
    for (let i = 0; i < total && !options.signal?.aborted; i++) {
      record(i, runPointTask({ scenarioJson: scenarioAt(i), ...deadline }));
      await new Promise<void>((ok) => setImmediate(ok)); // let a Ctrl-C through between points
    }
  } else {
    const pool = options.pool ?? createStudyPool(options.workers);
    // Each variant of a point is its own task: with few points and two workers, whole points
    // would leave one worker idle at the end (9 points: at best 9/5 = 1.8×).
    const runPoint = async (i: number): Promise<PointResult> => {
      const scenarioJson = scenarioAt(i);
      const validated = validateScenario(scenarioJson);
      if (!validated.ok) return runPointTask({ scenarioJson }); // reports the issues
      const parts = await Promise.all(availableVariants(validated.scenario).map((v) => pool.run({ scenarioJson, variants: [v], ...deadline }, options.signal)));
      const failure = parts.find((r): r is Extract<PointResult, { ok: false }> => !r.ok);
      if (failure) return failure;
      const reports = parts.map((r) => (r as Extract<PointResult, { ok: true }>).report);
      return { ok: true, report: { ...reports[0]!, variants: Object.assign({}, ...reports.map((r) => r.variants)) as SimulationReport['variants'] } };
    };
    try {
      await Promise.all(pointValues.map(async (_, i) => {
        try {
          record(i, await runPoint(i));
        } catch (error) {
          if (options.signal?.aborted) return;
          record(i, { ok: false, failure: `worker error: ${(error as Error).message}` });
        }
      }));
    } finally {
      if (!options.pool) await pool.destroy();
    }
  }
  return {
    points: points.filter((p): p is StudyPoint => p !== undefined),
    interrupted: options.signal?.aborted ?? false,
    deratedLimit, voltageRating,
  };
}
