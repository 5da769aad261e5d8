// The HTTP adapter: a JSON API over the simulator and the static page. Simulations run in a
// worker pool so the request thread stays responsive; concurrency, body size and run time are capped.

import express, { type NextFunction, type Request, type Response } from 'express';
import { readdir, readFile } from 'node:fs/promises';
import { availableParallelism } from 'node:os';
import { join, resolve } from 'node:path';
import { createRequire } from 'node:module';
import { createPool } from '../workers/create-pool.js';
import type * as z from 'zod';
import { scenarioWarnings, validateScenario, type ValidationIssue } from '../circuit/validate-scenario.js';
import {
  captureRequestSchema, designRequestSchema, fitRequestSchema, parseRequest, simulateRequestSchema, sweepRequestSchema,
  type CaptureRequest, type CaptureResponse, type DesignResponse, type ErrorResponse, type FitRequest, type FitResponse,
  type HealthResponse, type ScenarioListResponse, type SimulateResponse, type SweepResponse,
} from '../contract/api.js';
import { issueAt, issueAtField, type PathKey } from '../contract/issues.js';
import { availableVariants, type Scenario, type VariantName } from '../circuit/scenario.js';
import type { SimulateTask } from './simulate-task.js';
import { simulateVariantsInParallel } from './simulate-parallel.js';
import { JacobianMemory } from './jacobian-memory.js';
import type { DesignTaskResult } from './design-task.js';
import type { CaptureTaskResult } from './fit-task.js';
import { MAX_FIT_SIMULATIONS } from '../capture/fit-model.js';
import type { ServerTask, ServerTaskResult } from './server-worker.js';
import { createStudyPool, runStudy, scenarioAtPoint, type StudyPool } from '../study/run-study.js';
import { choosePoints } from '../study/choose-points.js';
import { StudySpecError, type StudyFlag } from '../study/study-spec.js';
import { peakDistribution, worstPerVariant } from '../study/study-summary.js';
import { getNumberAt, scenarioToJson, type ScenarioJson } from '../circuit/scenario-json.js';
import { drainDerating } from '../analysis/simulation-report.js';
import { checkInputLimits } from '../circuit/input-limits.js';
import { duplicateKeyIssues } from '../circuit/duplicate-keys.js';
import { checkWorkBudget, designVariantRuns, estimateWork, MAX_RECORDED_SAMPLES, type BudgetRefusal } from '../analysis/work-budget.js';
import { nonFinitePaths, soundVariants } from '../analysis/result-checks.js';
import { Busy, RunSlots } from './admission.js';
import type { WorkControl } from './stop-flag.js';
import { hostCheck, securityHeaders } from './web-guards.js';

export interface ServerOptions {
  scenariosDir: string;
  webDir: string;
  /** Served as text at /README.md, for the page's link to the safety section. */
  readmeFile?: string;
  /** Wall-clock cap per simulation request, ms. */
  runTimeCapMs?: number;
  maxConcurrentRuns?: number;
  maxQueuedRuns?: number;
  /** A request that waits longer than this for a run slot is answered 503, ms. */
  maxQueueWaitMs?: number;
  bodyLimitBytes?: number;
  /** Body limit of the capture routes (/api/capture, /api/fit), which carry a scope's CSV text. */
  captureBodyLimitBytes?: number;
  /** Heap ceiling of each simulation worker thread, MB (default WORKER_HEAP_CEILING_MB). */
  workerHeapMb?: number;
  /** Host names (besides IP addresses and localhost) the page may be reached by: the --host given by name. */
  extraHostNames?: string[];
  /**
   * Start every worker thread at once, keep them, and run a small simulation in each, so that the
   * first request finds them warm (`flyclamp serve` does; tests that make many servers do not).
   */
  warmWorkers?: boolean;
}

export interface FlyclampServer {
  app: express.Express;
  close(): Promise<void>;
}

const SCENARIO_ID = /^[a-z0-9][a-z0-9-]{0,63}$/;
const MAX_SWEEP_POINTS = 200;
/** A sweep's recorded samples in all (points × variants × recorded samples per variant): 200 points × 3 variants at 20,000 each. */
export const MAX_STUDY_RECORDED_SAMPLES = 12_000_000;
/** Heap ceiling of a simulation worker thread, MB: the worst allowed request needs about 100 MB of waveforms. */
export const WORKER_HEAP_CEILING_MB = 512;
/** Body limit of the capture routes, bytes: about 300,000 rows of time and two channels at 28 bytes a row. */
export const CAPTURE_BODY_LIMIT_BYTES = 8 * 1024 * 1024;
/** Samples of a capture sent to the server (the CLI reads up to 25 million from a file). */
export const MAX_HTTP_CAPTURE_SAMPLES = 1_000_000;
/** Header lines allowed before the data, besides one line per sample. */
const MAX_CAPTURE_HEADER_LINES = 10_000;
const CAPTURE_COLUMNS = 3000;
const CAPTURE_ROUTES = ['/api/capture', '/api/fit'];
/** Grace past a run's cap before the request gives up on its worker (thread start-up, reduction, transfer), ms. */
const CAP_GRACE_MS = 10_000;

type RawBodied = Request & { rawBody?: Buffer };

class HttpError extends Error {
  constructor(readonly status: number, message: string, readonly issues?: ValidationIssue[]) { super(message); }
}

export function createServer(given: ServerOptions): FlyclampServer {
  // sendFile wants absolute paths; callers may pass paths relative to the working folder.
  const options: ServerOptions = {
    ...given,
    scenariosDir: resolve(given.scenariosDir),
    webDir: resolve(given.webDir),
    ...(given.readmeFile ? { readmeFile: resolve(given.readmeFile) } : {}),
  };
  const runTimeCapMs = options.runTimeCapMs ?? 20_000;
  const maxConcurrentRuns = options.maxConcurrentRuns ?? Math.max(1, availableParallelism());
  const jacobianMemory = new JacobianMemory();
  const slots = new RunSlots(maxConcurrentRuns, options.maxQueuedRuns ?? 8, options.maxQueueWaitMs ?? 10_000);
  const workerHeapMb = options.workerHeapMb ?? WORKER_HEAP_CEILING_MB;
  const pool = createPool<ServerTask, ServerTaskResult>(import.meta.url, 'server-worker', {
    maxThreads: maxConcurrentRuns, maxHeapMb: workerHeapMb, ...(options.warmWorkers ? { minThreads: maxConcurrentRuns } : {}),
  });
  let workerThreadsStarted = 0;
  pool.on('workerCreate', () => { workerThreadsStarted++; });
  // One warm-up per thread, all at once, so that each thread takes one; a failure only costs the warmth.
  if (options.warmWorkers) for (let k = 0; k < maxConcurrentRuns; k++) pool.run({ kind: 'warm-up' }).catch(() => undefined);
  // Sweeps run on worker processes, made on the first sweep (they scale better than threads) and
  // made again when the old ones stopped working.
  let studyPool: StudyPool | undefined;
  const currentStudyPool = (): StudyPool => {
    if (studyPool?.broken) { void studyPool.destroy(); studyPool = undefined; }
    return (studyPool ??= createStudyPool(maxConcurrentRuns));
  };

  /**
   * Admits one request to a run slot, then runs its work under the time cap counted from then; a
   * request that closes (the page navigated away, or sent a newer edit) cancels its work. Work that
   * reads `stopFlag` (its runs stop between cycles once it is set) keeps its worker thread: a
   * cancelled thread is ended, and a new one took about 1.2 s before its next answer. Other work
   * is aborted, which ends the thread; the abort also backs up the time cap.
   */
  async function admitted<T>(res: Response, capMs: number, work: (control: WorkControl) => Promise<T>, options: { readsStopFlag?: boolean } = {}): Promise<T> {
    const closed = new AbortController();
    const onClose = (): void => { if (!res.writableFinished) closed.abort(); };
    res.on('close', onClose);
    let release: () => void;
    try {
      release = await slots.acquire(closed.signal);
    } catch (error) {
      res.off('close', onClose);
      if (error instanceof Busy) throw new HttpError(503, `the server is busy with other simulations (${error.message}); try again shortly`);
      throw error;
    }
    const abort = new AbortController();
    const stopFlag = new Int32Array(new SharedArrayBuffer(4));
    const stop = (): void => abort.abort();
    const onClosed = options.readsStopFlag ? (): void => { Atomics.store(stopFlag, 0, 1); } : stop;
    closed.signal.addEventListener('abort', onClosed, { once: true });
    // Runs check their own deadline between cycles; this is the backstop for a stuck worker.
    const timer = setTimeout(stop, capMs + CAP_GRACE_MS);
    try {
      const result = await work({ signal: abort.signal, stopFlag });
      // Nobody is left to read the answer (a stopped run answers a failure that is not the design's).
      if (closed.signal.aborted) throw new HttpError(499, 'the request was closed before its answer');
      return result;
    } catch (error) {
      if (error instanceof HttpError) throw error;
      if (abort.signal.aborted) throw new HttpError(504, `the work took longer than its time cap of ${capMs / 1000} s`);
      throw workerFault(error);
    } finally {
      clearTimeout(timer);
      closed.signal.removeEventListener('abort', onClosed);
      res.off('close', onClose);
      release();
    }
  }
  /**
   * A worker that died (out of memory, killed) fails its request with a clear status; piscina
   * starts a fresh thread in its place, and the other requests' runs go on.
   */
  const workerFault = (error: unknown): HttpError => {
    const code = (error as { code?: string }).code;
    if (code === 'ERR_WORKER_OUT_OF_MEMORY') return new HttpError(503, `the run needed more memory than a worker's ceiling of ${workerHeapMb} MB; record fewer cycles or samples`);
    process.stderr.write(`flyclamp serve: a worker failed: ${(error as Error).message}\n`);
    return new HttpError(500, 'a simulation worker failed unexpectedly (the server log has the details); try again');
  };
  const failed = (failure: string, what = 'simulation'): HttpError => new HttpError(/time cap/.test(failure) ? 504 : 422, `${what} failed: ${failure}`);

  const app = express();
  app.disable('x-powered-by');
  app.use(securityHeaders);
  app.use(hostCheck({ extraHostNames: options.extraHostNames ?? [] }));
  // A cheap route answered on the request thread: runs never block it (they are in workers).
  app.get('/api/health', (_req, res) => {
    const answer: HealthResponse = { ok: true, runs: { running: slots.running, queued: slots.queued, slots: slots.slots }, workerThreadsStarted };
    res.json(answer);
  });
  // The text is kept for the repeated-key scan (JSON.parse keeps the last of two equal keys silently).
  // The capture routes carry a CSV and get their own, larger limit; the parser below then skips them.
  app.use(CAPTURE_ROUTES, express.json({ limit: options.captureBodyLimitBytes ?? CAPTURE_BODY_LIMIT_BYTES, verify: (req, _res, buf) => { (req as RawBodied).rawBody = buf; } }));
  app.use(express.json({ limit: options.bodyLimitBytes ?? 256 * 1024, verify: (req, _res, buf) => { (req as RawBodied).rawBody = buf; } }));
  // Before any handler reads the body: nesting and size limits, so no later step recurses or copies unbounded.
  app.use((req, _res, next) => {
    if (req.method !== 'POST' || req.body === undefined) { next(); return; }
    // The scenario's parts are named as in a scenario file, the rest of the body as body.…
    const body = req.body as unknown;
    const isObject = typeof body === 'object' && body !== null && !Array.isArray(body);
    const { scenario, ...rest } = isObject ? body as Record<string, unknown> : { scenario: undefined };
    // A capture's CSV text is bounded by its route's body limit and its reader, not by the text limit.
    if (CAPTURE_ROUTES.includes(req.path)) delete (rest as Record<string, unknown>).capture;
    const issues = [...checkInputLimits(isObject ? rest : body, ['body']), ...(scenario === undefined ? [] : checkInputLimits(scenario, []))];
    const raw = (req as RawBodied).rawBody;
    if (issues.length === 0 && raw) {
      // A repeat inside the scenario is named as in a scenario file, like its other issues.
      const inScenario = (keys: readonly PathKey[]): boolean => keys[0] === 'body' && keys[1] === 'scenario' && keys.length > 2;
      issues.push(...duplicateKeyIssues(raw.toString('utf8'), ['body']).map((i) => (inScenario(i.pathKeys) ? issueAt(i.pathKeys.slice(2), i.message) : i)));
    }
    next(issues.length > 0 ? new HttpError(400, 'invalid request', issues) : undefined);
  });

  app.get('/api/scenarios', async (_req, res) => {
    const answer: ScenarioListResponse = { scenarios: await listScenarios(options.scenariosDir) };
    res.json(answer);
  });

  app.get('/api/scenarios/:id', async (req, res) => {
    const id = String(req.params.id);
    const known = await listScenarios(options.scenariosDir);
    if (!SCENARIO_ID.test(id) || !known.some((s) => s.id === id)) throw new HttpError(404, `no bundled scenario named "${id}"`);
    const file: unknown = JSON.parse(await readFile(join(options.scenariosDir, `${id}.json`), 'utf8'));
    // The "$schema" line is for editors; the page gets the scenario's own fields.
    if (typeof file === 'object' && file !== null && !Array.isArray(file)) Reflect.deleteProperty(file, '$schema');
    res.json(file);
  });

  app.post('/api/simulate', async (req, res) => {
    const { warnings, ...task } = readSimulateBody(req.body, runTimeCapMs);
    const startJacobians = Object.fromEntries(task.variants.flatMap((v) => {
      const state = task.startHints?.[v];
      const jacobian = state ? jacobianMemory.recall(v, state) : undefined;
      return jacobian ? [[v, jacobian]] : [];
    }));
    const result = await admitted(res, runTimeCapMs, ({ signal, stopFlag }) =>
      simulateVariantsInParallel((t) => pool.run(t, { signal }), { ...task, startJacobians, stopFlag }), { readsStopFlag: true });
    if (!result.ok) throw failed(result.failure);
    const { problems } = soundVariants(result.report.variants);
    if (problems.length > 0) throw failed(problems.join('; '));
    const { jacobians, ...shown } = result;
    for (const [v, state] of Object.entries(shown.startStates) as Array<[VariantName, number[]]>) {
      const jacobian = jacobians[v];
      if (jacobian) jacobianMemory.remember(v, state, jacobian);
    }
    const answer: SimulateResponse = { ...shown, warnings };
    res.json(answer);
  });

  app.post('/api/design', async (req, res) => {
    const { scenario, warnings } = readScenarioBody(designRequestSchema, req.body);
    const capMs = 6 * runTimeCapMs; // a design verifies several corners of the full model and its adjustments
    refuseOverBudget(checkWorkBudget(scenario, designVariantRuns(scenario), capMs / 1000, capHint));
    const result = await admitted(res, capMs, ({ signal }) => pool.run({ kind: 'design', scenario, columns: 1500, capMs }, { signal })) as DesignTaskResult;
    if (!result.ok) throw failed(result.failure, 'design');
    const notFinite = nonFinitePaths(result.design);
    if (notFinite.length > 0) throw failed(`the design has no finite value for ${notFinite.join(', ')}`, 'design');
    const answer: DesignResponse = { ...result, warnings };
    res.json(answer);
  });

  app.post('/api/sweep', async (req, res) => {
    const body = readRequest(sweepRequestSchema, req.body);
    const scenario = body.scenario;
    const base = scenarioToJson(scenario);
    let chosen: ReturnType<typeof choosePoints>;
    try {
      chosen = choosePoints({
        vary: body.vary ?? [], corners: body.corners === true, tolerance: body.tolerance ?? [],
        seed: body.seed ?? 1,
        ...(body.samples !== undefined ? { samples: body.samples } : {}),
      }, (path) => getNumberAt(base, path), MAX_SWEEP_POINTS);
    } catch (error) {
      if (!(error instanceof StudySpecError)) throw error;
      throw new HttpError(400, 'invalid request', [issueAt(['body', error.flag], error.detail)]);
    }
    const capMs = 6 * runTimeCapMs;
    checkStudyBudget(base, chosen.points, body.samples !== undefined ? 'samples' : 'vary', capMs, runTimeCapMs, maxConcurrentRuns);
    // The study's points stop at its cap and the finished ones are answered: a sweep that runs out
    // of time still returns its work.
    const study = await admitted(res, capMs, ({ signal }) => runStudy(base, chosen.points, { pool: currentStudyPool(), signal, deadlineMs: Date.now() + capMs, taskCapMs: runTimeCapMs }));
    const points = study.points;
    const derated = scenario.switch.voltageRating * drainDerating(scenario);
    const answer: SweepResponse = {
      kind: chosen.kind, voltageRating: scenario.switch.voltageRating, deratedLimit: derated, points,
      worst: worstPerVariant(points),
      ...(chosen.kind === 'monte-carlo' ? { monteCarlo: peakDistribution(points, derated) } : {}),
      pointsRequested: chosen.points.length,
      ...(study.interrupted ? { interrupted: `the sweep reached its time cap of ${capMs / 1000} s: ${points.length} of ${chosen.points.length} points finished` } : {}),
    };
    res.json(answer);
  });

  // A scope capture: read and measured (/api/capture), or the model fitted to it (/api/fit).
  const captureRoute = (fit: boolean) => async (req: Request, res: Response): Promise<void> => {
    const fitRequest = fit ? readRequest(fitRequestSchema, req.body) : undefined;
    const request: CaptureRequest | FitRequest = fitRequest ?? readRequest(captureRequestSchema, req.body);
    const scenario = fitRequest?.scenario;
    const warnings = scenario ? scenarioWarnings(scenario) : [];
    const task = captureTask(request);
    const capMs = 6 * runTimeCapMs; // up to MAX_FIT_SIMULATIONS settled runs, one after another
    if (scenario) {
      // The fit simulates the bare variant, or the clamp one when the board has its clamp. Each
      // simulation must fit in a run's budget and in its share of the fit's cap; over it, the value
      // that makes it expensive is named.
      const variants = availableVariants(scenario).filter((v) => v !== 'damped');
      const perSimulation = Math.min(runTimeCapMs, capMs / MAX_FIT_SIMULATIONS) / 1000;
      const fitHint = (): string => `the fit runs up to ${MAX_FIT_SIMULATIONS} of them within ${capMs / 1000} s; use flyclamp fit on the command line, which has no cap`;
      refuseOverBudget(variants.flatMap((v) => checkWorkBudget(scenario, [v], perSimulation, fitHint)));
    }
    const result = await admitted(res, capMs, ({ signal }) => pool.run({ kind: 'capture', ...task, ...(scenario ? { scenario } : {}), capMs }, { signal })) as CaptureTaskResult;
    if (!result.ok) {
      if (result.kind === 'field') throw new HttpError(400, 'invalid request', [issueAt(['body', result.field === 'body.capture' ? 'capture' : 'column'], result.failure)]);
      if (result.kind === 'ring') throw new HttpError(422, `no ring can be measured in the capture: ${result.failure}`);
      throw failed(result.failure, 'fit');
    }
    const { fit: fitted, ok: _ok, ...view } = result;
    if (!fit) { const answer: CaptureResponse = { ok: true, ...view }; res.json(answer); return; }
    if (!fitted) throw failed('the fit gave no result', 'fit');
    const { simulatedDrain, variant, offset, ...json } = fitted;
    const notFinite = nonFinitePaths(json);
    if (notFinite.length > 0) throw failed(`the fit has no finite value for ${notFinite.join(', ')}`, 'fit');
    const answer: FitResponse = { ...json, variant, offset, capture: view.capture, simulatedDrain, columnName: view.columnName, midpointVolts: view.midpointVolts, warnings };
    res.json(answer);
  };
  app.post('/api/capture', captureRoute(false));
  app.post('/api/fit', captureRoute(true));

  app.use('/api', (_req, _res, next) => next(new HttpError(404, 'no such API route')));
  const plotly = createRequire(import.meta.url).resolve('plotly.js-dist-min');
  app.get('/vendor/plotly.min.js', (_req, res) => res.sendFile(plotly));
  if (options.readmeFile) {
    const readme = options.readmeFile;
    app.get('/README.md', (_req, res) => res.type('text/plain; charset=utf-8').sendFile(readme));
  }
  app.use(express.static(options.webDir, { dotfiles: 'deny', index: 'index.html' }));

  app.use((error: unknown, _req: Request, res: Response, _next: NextFunction) => {
    if (error instanceof HttpError) {
      const answer: ErrorResponse = { error: error.message, ...(error.issues ? { issues: error.issues } : {}) };
      res.status(error.status).json(answer);
      return;
    }
    const e = error as { status?: number; type?: string; message?: string };
    if (e.type === 'entity.too.large') { res.status(413).json({ error: 'request body too large' }); return; }
    if (e.type === 'entity.parse.failed') { res.status(400).json({ error: 'request body is not valid JSON', issues: [issueAt(['body'], 'expected JSON, found a syntax error')] }); return; }
    if (typeof e.status === 'number' && e.status >= 400 && e.status < 500) { res.status(e.status).json({ error: e.message ?? 'bad request' }); return; }
    process.stderr.write(`flyclamp serve: internal error: ${e.message ?? String(error)}\n`);
    res.status(500).json({ error: 'internal error in the simulator; the server log has the details' });
  });

  return { app, close: async () => { await pool.destroy(); await studyPool?.destroy(); } };
}

const capHint = (): string => 'run it from the command line, whose budget --max-seconds can be raised (the server caps each run)';

/** Over the recorded-sample budget: 413 (too large a request); over the time estimate: 422. */
function refuseOverBudget(refusals: BudgetRefusal[]): void {
  const samples = refusals.filter((r) => r.kind === 'recorded-samples').map(({ path, message }) => issueAtField(path, message));
  if (samples.length > 0) throw new HttpError(413, 'the request is larger than the server runs', samples);
  if (refusals.length > 0) throw new HttpError(422, 'the request would take longer than the server allows', refusals.map(({ path, message }) => issueAtField(path, message)));
}

/** Each point within a run's budget, and the study as a whole within its recorded samples and its cap. */
function checkStudyBudget(base: Record<string, unknown>, points: ReadonlyArray<Record<string, number>>, field: StudyFlag, studyCapMs: number, runCapMs: number, workers: number): void {
  let samples = 0, seconds = 0;
  for (const [index, values] of points.entries()) {
    const at = validateScenario(scenarioAtPoint(base as ScenarioJson, values));
    if (!at.ok) continue; // fails on its own, with its reason, as a point
    const variants = availableVariants(at.scenario);
    // Each variant is its own task with its own cap.
    const refusals = variants.flatMap((v) => checkWorkBudget(at.scenario, [v], runCapMs / 1000, capHint));
    if (refusals.length > 0) {
      refuseOverBudget(refusals.map((r) => ({ ...r, message: `at point ${index + 1}: ${r.message}` })));
    }
    const estimate = estimateWork(at.scenario, variants);
    samples += variants.length * estimate.recordedSamples;
    seconds += estimate.estimatedSeconds;
  }
  if (samples > MAX_STUDY_RECORDED_SAMPLES) {
    throw new HttpError(413, 'the request is larger than the server runs', [issueAt(['body', field], `expected a study of at most ${MAX_STUDY_RECORDED_SAMPLES} recorded samples in all (points × variants × recorded cycles × samples per cycle), found ${samples}: fewer points, or fewer recorded cycles (at most ${MAX_RECORDED_SAMPLES} per variant)`)]);
  }
  if (seconds / workers > studyCapMs / 1000) {
    throw new HttpError(422, 'the request would take longer than the server allows', [issueAt(['body', field], `expected a study that runs within its cap of ${studyCapMs / 1000} s, found an estimated ${Math.round(seconds / workers)} s on ${workers} worker(s): fewer points`)]);
  }
}

/** A request body checked against its route's schema; a bad one is a 400 with every issue. */
function readRequest<T>(schema: z.ZodType<T>, body: unknown): T {
  const parsed = parseRequest(schema, body);
  if (!parsed.ok) throw new HttpError(400, 'invalid request', parsed.issues);
  return parsed.request;
}

function readScenarioBody(schema: typeof designRequestSchema, body: unknown): { scenario: Scenario; warnings: ValidationIssue[] } {
  const { scenario } = readRequest(schema, body);
  return { scenario, warnings: scenarioWarnings(scenario) };
}

function readSimulateBody(body: unknown, runTimeCapMs: number): SimulateTask & { warnings: ValidationIssue[] } {
  const request = readRequest(simulateRequestSchema, body);
  const scenario = request.scenario;
  const supported = availableVariants(scenario);
  const wanted = request.variants ?? supported;
  const missing = wanted.filter((v) => !supported.includes(v));
  if (missing.length > 0) {
    throw new HttpError(400, 'invalid request', [issueAt(['body', 'variants'], `expected variants this scenario supports (${supported.join(', ')}), found ${missing.join(', ')}`)]);
  }
  refuseOverBudget(checkWorkBudget(scenario, wanted, runTimeCapMs / 1000, capHint));
  return {
    scenario, variants: wanted, columns: request.columns ?? 1500, warnings: scenarioWarnings(scenario),
    capMs: runTimeCapMs,
    ...(request.window ? { window: request.window } : {}),
    ...(request.startStates ? { startHints: request.startStates } : {}),
  };
}

/** The capture task of a capture or fit request, its lines counted before any is read. */
function captureTask(request: CaptureRequest | FitRequest): { captureText: string; column?: string; maxSamples: number; columns: number } {
  const capture = request.capture;
  // One sample per line: counted before the text goes to a worker.
  let lines = 1;
  for (let at = capture.indexOf('\n'); at >= 0; at = capture.indexOf('\n', at + 1)) lines++;
  if (lines > MAX_HTTP_CAPTURE_SAMPLES + MAX_CAPTURE_HEADER_LINES) {
    throw new HttpError(413, 'the request is larger than the server runs', [issueAt(['body', 'capture'], `expected at most ${MAX_HTTP_CAPTURE_SAMPLES} samples (lines), found ${lines} lines: decimate on the scope, or use flyclamp fit on the command line`)]);
  }
  const column = request.column;
  const columnText = column === undefined || column === null || column === '' ? undefined : String(column);
  return { captureText: capture, ...(columnText !== undefined ? { column: columnText } : {}), maxSamples: MAX_HTTP_CAPTURE_SAMPLES, columns: CAPTURE_COLUMNS };
}

async function listScenarios(dir: string): Promise<Array<{ id: string; name: string }>> {
  const files = (await readdir(dir)).filter((f) => f.endsWith('.json')).sort();
  const out: Array<{ id: string; name: string }> = [];
  for (const f of files) {
    const id = f.slice(0, -5);
    if (!SCENARIO_ID.test(id)) continue;
    try {
      const raw = JSON.parse(await readFile(join(dir, f), 'utf8')) as { name?: unknown };
      out.push({ id, name: typeof raw.name === 'string' ? raw.name : id });
    } catch {
      // A broken file in the folder is skipped from the list, not a server error.
    }
  }
  return out;
}
