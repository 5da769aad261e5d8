// Runs study points on a pool of worker processes (one per core by default), in order of submission; a failed
// point is kept with its reason, and an abort keeps the points already finished.

import { withNumberAt, type ScenarioJson } from '../circuit/scenario-json.js';
import type { SimulationReport } from '../analysis/simulation-report.js';
import { ProcessPool } from '../workers/process-pool.js';
import type { PointValues } from './study-points.js';
import { runPointTask, type PointResult, type PointTask, type StartStates, type Jacobians } from './point-task.js';
import { validateScenario } from '../circuit/validate-scenario.js';
import { availableVariants } from '../circuit/scenario.js';

export interface StudyPoint {
  index: number;
  values: PointValues;
  variants?: SimulationReport['variants'];
  /** This point's rating and derated limit, V (a study may vary the rating or the derating itself). */
  voltageRating?: number;
  deratedLimit?: number;
  failure?: string;
}

export interface StudyRun {
  points: StudyPoint[];
  /** Stopped before every point finished: by the signal (Ctrl-C, a closed request) or at the deadline. */
  interrupted: boolean;
  stoppedBy?: 'signal' | 'deadline';
}

export interface StudyOptions {
  /** Worker processes (default one per core, or none for SMALL_STUDY_POINTS points or fewer); 0 runs the points one after another in this process. */
  workers?: number;
  /** A pool to use (and keep) instead of one made for this study, e.g. a warm one. */
  pool?: StudyPool;
  signal?: AbortSignal;
  /** At this Date.now() the study stops: queued points are dropped, running ones stopped, finished ones kept. */
  deadlineMs?: number;
  /** Time cap of each point's variant, ms, from when a worker starts it. */
  taskCapMs?: number;
  onProgress?: (done: number, total: number, failed: number) => void;
}

export type StudyPool = ProcessPool<PointTask, PointResult>;

/** A pool of worker processes for study points; the caller destroys it. */
export function createStudyPool(workers?: number): StudyPool {
  const fromSource = import.meta.url.endsWith('.ts');
  return new ProcessPool<PointTask, PointResult>(new URL(`./point-process.${fromSource ? 'ts' : 'js'}`, import.meta.url), workers);
}

/**
 * Cycles each point's variant may run unless the scenario sets simulation.maxCycles itself: a
 * normal point settles in 10–40 (measured on the demos with the shooting), so a point that never
 * settles costs about ten of them instead of the 300 cycles it takes to call it non-periodic.
 * Such a point reports orbit 'cycle-cap' (not settled).
 */
export const STUDY_POINT_CYCLE_BUDGET = 150;

/** Points a study runs in this process unless told otherwise (measured: two worker processes take about 0.6 s to start). */
export const SMALL_STUDY_POINTS = 2;

export function scenarioAtPoint(base: ScenarioJson, values: PointValues): ScenarioJson {
  let json = base;
  for (const [path, value] of Object.entries(values)) json = withNumberAt(json, path, value);
  const simulation = json['simulation'];
  const given = typeof simulation === 'object' && simulation !== null ? simulation as Record<string, unknown> : undefined;
  if (given?.['maxCycles'] === undefined) json = { ...json, simulation: { ...given, maxCycles: STUDY_POINT_CYCLE_BUDGET } };
  return json;
}

export async function runStudy(base: ScenarioJson, pointValues: readonly PointValues[], options: StudyOptions = {}): Promise<StudyRun> {
  const total = pointValues.length;
  const points: Array<StudyPoint | undefined> = new Array(total);
  let done = 0, failed = 0;
  // One signal for both ways to stop, so the pool drops queued tasks and stops running ones alike.
  const stop = new AbortController();
  let stoppedBy: StudyRun['stoppedBy'];
  const stopFor = (why: NonNullable<StudyRun['stoppedBy']>): void => { stoppedBy ??= why; stop.abort(); };
  const onSignal = (): void => stopFor('signal');
  if (options.signal?.aborted) stopFor('signal');
  options.signal?.addEventListener('abort', onSignal, { once: true });
  const timer = options.deadlineMs === undefined ? undefined : setTimeout(() => stopFor('deadline'), Math.max(0, options.deadlineMs - Date.now()));
  const record = (index: number, result: PointResult): void => {
    if (stop.signal.aborted) return; // finished as the study stopped: its result may be a stop artefact
    const values = pointValues[index]!;
    if (result.ok) {
      points[index] = { index, values, variants: result.report.variants, voltageRating: result.report.voltageRating, deratedLimit: result.report.deratedLimit };
    } else {
      points[index] = { index, values, failure: result.failure };
      failed++;
    }
    done++;
    options.onProgress?.(done, total, failed);
  };
  const scenarioAt = (index: number): ScenarioJson => scenarioAtPoint(base, pointValues[index]!);
  const deadline = {
    ...(options.deadlineMs === undefined ? {} : { deadlineMs: options.deadlineMs }),
    ...(options.taskCapMs === undefined ? {} : { capMs: options.taskCapMs }),
  };

  // Every point after the first starts each variant from the first point's orbit (a warm start:
  // a guess the run checks, so a point's answer does not depend on it beyond the settle
  // tolerance). The same rule in both ways of running keeps their answers identical.
  // Measured on 100 Monte Carlo points of gate-drive-24v: 2,737 cycles instead of 4,204, 20–25 % less time.
  let hints: { startHints: StartStates; startJacobians: Jacobians } | undefined;
  const keepHints = (i: number, result: PointResult): void => {
    if (i === 0 && result.ok) hints = { startHints: result.startStates, startJacobians: result.jacobians };
  };

  try {
    await runPoints();
  } finally {
    if (timer) clearTimeout(timer);
    options.signal?.removeEventListener('abort', onSignal);
  }
  return {
    points: points.filter((p): p is StudyPoint => p !== undefined),
    interrupted: stoppedBy !== undefined,
    ...(stoppedBy ? { stoppedBy } : {}),
  };

  async function runPoints(): Promise<void> {
    // A small study runs here: starting worker processes (loading the code, the JIT's first runs)
    // costs more than its points. Asked for workers, or given a pool, it uses them.
    const inProcess = !options.pool && (options.workers ?? (total <= SMALL_STUDY_POINTS ? 0 : 1)) === 0;
    if (inProcess) {
      for (let i = 0; i < total && !stop.signal.aborted; i++) {
        const result = runPointTask({ scenarioJson: scenarioAt(i), ...deadline, ...(hints ?? {}) });
        keepHints(i, result);
        record(i, result);
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
        const parts = await Promise.all(availableVariants(validated.scenario).map((v) => {
          const startHint = hints?.startHints[v];
          const startJacobian = hints?.startJacobians[v];
          return pool.run({
            scenarioJson, variants: [v], ...deadline,
            ...(startHint ? { startHints: { [v]: startHint } } : {}), ...(startHint && startJacobian ? { startJacobians: { [v]: startJacobian } } : {}),
          }, stop.signal);
        }));
        const failure = parts.find((r): r is Extract<PointResult, { ok: false }> => !r.ok);
        if (failure) return failure;
        const done = parts as Array<Extract<PointResult, { ok: true }>>;
        return {
          ok: true,
          report: { ...done[0]!.report, variants: Object.assign({}, ...done.map((r) => r.report.variants)) as SimulationReport['variants'] },
          startStates: Object.assign({}, ...done.map((r) => r.startStates)) as StartStates,
          jacobians: Object.assign({}, ...done.map((r) => r.jacobians)) as Jacobians,
        };
      };
      const settle = async (i: number): Promise<void> => {
        try {
          const result = await runPoint(i);
          keepHints(i, result);
          record(i, result);
        } catch (error) {
          record(i, { ok: false, failure: `worker error: ${(error as Error).message}` });
        }
      };
      try {
        // The first point alone (its variants in parallel), then the rest from its orbit.
        if (total > 0) await settle(0);
        await Promise.all(pointValues.map(async (_, i) => { if (i > 0) await settle(i); }));
      } finally {
        if (!options.pool) await pool.destroy();
      }
    }
  }
}
