// The HTTP adapter: a JSON API over the simulator and the static page. Simulations run in a
// worker pool so the request thread stays responsive; concurrency, body size and run time are capped.

import express, { type NextFunction, type Request, type Response } from 'express';
import { readdir, readFile } from 'node:fs/promises';
import { availableParallelism } from 'node:os';
import { join, resolve } from 'node:path';
import { createRequire } from 'node:module';
import { createPool } from '../workers/create-pool.js';
import { validateScenario, type ValidationIssue, type ValidationResult } from '../circuit/validate-scenario.js';
import { availableVariants, VARIANT_NAMES, type Scenario, type VariantName } from '../circuit/scenario.js';
import type { SimulateTask, SimulateTaskResult } from './simulate-task.js';
import type { DesignTaskResult } from './design-task.js';
import type { ServerTask, ServerTaskResult } from './server-worker.js';
import { createStudyPool, runStudy, type StudyPool } from '../study/run-study.js';
import { choosePoints } from '../study/choose-points.js';
import { StudySpecError } from '../study/study-spec.js';
import { peakDistribution, worstPerVariant } from '../study/study-summary.js';
import { getNumberAt, scenarioToJson } from '../circuit/scenario-json.js';
import { drainDerating } from '../analysis/simulation-report.js';

export interface ServerOptions {
  scenariosDir: string;
  webDir: string;
  /** Served as text at /README.md, for the page's link to the safety section. */
  readmeFile?: string;
  /** Wall-clock cap per simulation request, ms. */
  runTimeCapMs?: number;
  maxConcurrentRuns?: number;
  maxQueuedRuns?: number;
  bodyLimitBytes?: number;
}

export interface FlyclampServer {
  app: express.Express;
  close(): Promise<void>;
}

const SCENARIO_ID = /^[a-z0-9][a-z0-9-]{0,63}$/;
const MAX_COLUMNS = 4000;
const MAX_SWEEP_POINTS = 200;

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
  // Admission is counted here rather than left to the pool's queue, so "busy" is exact.
  const maxAdmitted = maxConcurrentRuns + (options.maxQueuedRuns ?? 8);
  let admittedCount = 0;
  // Sweeps run on worker processes, made on the first sweep (they scale better than threads).
  let studyPool: StudyPool | undefined;
  const pool = createPool<ServerTask, ServerTaskResult>(import.meta.url, 'server-worker', { maxThreads: maxConcurrentRuns });

  /** Admits one request, runs its tasks on the pool under one time cap, and maps the failures. */
  async function admitted<T>(capMs: number, work: (signal: AbortSignal) => Promise<T>): Promise<T> {
    if (admittedCount >= maxAdmitted) throw new HttpError(503, 'the server is busy with other simulations; try again shortly');
    admittedCount++;
    const abort = new AbortController();
    // Runs check their own deadline between cycles; the abort is the backstop for a stuck worker.
    const timer = setTimeout(() => abort.abort(), capMs + 2_000);
    try {
      return await work(abort.signal);
    } catch (error) {
      if (abort.signal.aborted) throw new HttpError(504, `the work took longer than its time cap of ${capMs / 1000} s`);
      throw error;
    } finally {
      clearTimeout(timer);
      admittedCount--;
    }
  }
  const failed = (failure: string, what = 'simulation'): HttpError => new HttpError(/time cap/.test(failure) ? 504 : 422, `${what} failed: ${failure}`);

  const app = express();
  app.disable('x-powered-by');
  app.use(express.json({ limit: options.bodyLimitBytes ?? 256 * 1024 }));

  app.get('/api/scenarios', async (_req, res) => {
    res.json({ scenarios: await listScenarios(options.scenariosDir) });
  });

  app.get('/api/scenarios/:id', async (req, res) => {
    const id = String(req.params.id);
    const known = await listScenarios(options.scenariosDir);
    if (!SCENARIO_ID.test(id) || !known.some((s) => s.id === id)) throw new HttpError(404, `no bundled scenario named "${id}"`);
    res.type('application/json').send(await readFile(join(options.scenariosDir, `${id}.json`), 'utf8'));
  });

  app.post('/api/simulate', async (req, res) => {
    const task = readSimulateBody(req.body, runTimeCapMs);
    const result = await admitted(runTimeCapMs, (signal) => pool.run({ kind: 'simulate', ...task }, { signal })) as SimulateTaskResult;
    if (!result.ok) throw failed(result.failure);
    res.json({ ...result, warnings: task.warnings });
  });

  app.post('/api/design', async (req, res) => {
    const { scenario, warnings } = readScenarioBody(req.body, ['scenario', 'columns']);
    const capMs = 6 * runTimeCapMs; // a design verifies several corners of the full model and its adjustments
    const result = await admitted(capMs, (signal) => pool.run({ kind: 'design', scenario, columns: 1500, deadlineMs: Date.now() + capMs }, { signal })) as DesignTaskResult;
    if (!result.ok) throw failed(result.failure, 'design');
    res.json({ ...result, warnings });
  });

  app.post('/api/sweep', async (req, res) => {
    const body = req.body as Record<string, unknown>;
    const { scenario } = readScenarioBody(body, ['scenario', 'vary', 'corners', 'samples', 'tolerance', 'seed']);
    const base = scenarioToJson(scenario);
    let chosen: ReturnType<typeof choosePoints>;
    try {
      const strings = (v: unknown, name: string): string[] => {
        if (v === undefined) return [];
        if (Array.isArray(v) && v.every((x) => typeof x === 'string')) return v as string[];
        throw new StudySpecError(`--${name}: expected a list of texts, found ${JSON.stringify(v)}`);
      };
      chosen = choosePoints({
        vary: strings(body.vary, 'vary'), corners: body.corners === true, tolerance: strings(body.tolerance, 'tolerance'),
        seed: (body.seed as number | string | undefined) ?? 1,
        ...(body.samples !== undefined ? { samples: body.samples as number } : {}),
      }, (path) => getNumberAt(base, path), MAX_SWEEP_POINTS);
    } catch (error) {
      if (!(error instanceof StudySpecError)) throw error;
      const flag = /^--(\w+)/.exec(error.message)?.[1] ?? 'vary';
      throw new HttpError(400, 'invalid request', [{ path: `body.${flag}`, message: error.message.replace(/^--\w+:?\s*/, '') }]);
    }
    const capMs = 6 * runTimeCapMs;
    studyPool ??= createStudyPool(maxConcurrentRuns);
    const pool = studyPool;
    const study = await admitted(capMs, (signal) => runStudy(base, chosen.points, { pool, signal, deadlineMs: Date.now() + capMs }));
    if (study.interrupted) throw new HttpError(504, `the sweep took longer than its time cap of ${capMs / 1000} s`);
    const points = study.points;
    const derated = scenario.switch.voltageRating * drainDerating(scenario);
    res.json({
      kind: chosen.kind, voltageRating: scenario.switch.voltageRating, deratedLimit: derated, points,
      worst: worstPerVariant(points),
      ...(chosen.kind === 'monte-carlo' ? { monteCarlo: peakDistribution(points, derated) } : {}),
    });
  });

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
      res.status(error.status).json({ error: error.message, ...(error.issues ? { issues: error.issues } : {}) });
      return;
    }
    const e = error as { status?: number; type?: string; message?: string };
    if (e.type === 'entity.too.large') { res.status(413).json({ error: 'request body too large' }); return; }
    if (e.type === 'entity.parse.failed') { res.status(400).json({ error: 'request body is not valid JSON', issues: [{ path: 'body', message: 'expected JSON, found a syntax error' }] }); return; }
    if (typeof e.status === 'number' && e.status >= 400 && e.status < 500) { res.status(e.status).json({ error: e.message ?? 'bad request' }); return; }
    process.stderr.write(`flyclamp serve: internal error: ${e.message ?? String(error)}\n`);
    res.status(500).json({ error: 'internal error in the simulator; the server log has the details' });
  });

  return { app, close: async () => { await pool.destroy(); await studyPool?.destroy(); } };
}

/** The issues of a body whose `scenario` is a scenario object; `allowed` are its known fields. */
function inspectScenarioBody(body: unknown, allowed: readonly string[]): { validated: ValidationResult; issues: ValidationIssue[] } {
  if (typeof body !== 'object' || body === null || Array.isArray(body)) {
    throw new HttpError(400, 'invalid request', [{ path: 'body', message: `expected a JSON object with a "scenario" field, found ${Array.isArray(body) ? 'a list' : typeof body}` }]);
  }
  const issues: ValidationIssue[] = Object.keys(body).filter((k) => !allowed.includes(k))
    .map((k) => ({ path: `body.${k}`, message: `unknown field (expected ${allowed.join(', ')})` }));
  const validated = validateScenario((body as Record<string, unknown>).scenario);
  if (!validated.ok) issues.push(...validated.issues);
  return { validated, issues };
}

function readScenarioBody(body: unknown, allowed: readonly string[]): { scenario: Scenario; warnings: ValidationIssue[] } {
  const { validated, issues } = inspectScenarioBody(body, allowed);
  if (issues.length > 0 || !validated.ok) throw new HttpError(400, 'invalid request', issues);
  return { scenario: validated.scenario, warnings: validated.warnings };
}

function readSimulateBody(body: unknown, runTimeCapMs: number): SimulateTask & { warnings: ValidationIssue[] } {
  const { validated, issues } = inspectScenarioBody(body, ['scenario', 'variants', 'window', 'columns']);
  const { variants, window, columns } = body as Record<string, unknown>;
  let chosen: VariantName[] | undefined;
  if (variants !== undefined) {
    if (!Array.isArray(variants) || variants.length === 0 || !variants.every((v) => (VARIANT_NAMES as readonly unknown[]).includes(v))) {
      issues.push({ path: 'body.variants', message: `expected a non-empty list of ${VARIANT_NAMES.join(', ')}, found ${JSON.stringify(variants)}` });
    } else chosen = variants as VariantName[];
  }
  let win: SimulateTask['window'];
  if (window !== undefined) {
    const w = window as { startSeconds?: unknown; endSeconds?: unknown };
    if (typeof w !== 'object' || w === null || typeof w.startSeconds !== 'number' || typeof w.endSeconds !== 'number' || !(w.endSeconds > w.startSeconds)) {
      issues.push({ path: 'body.window', message: `expected { startSeconds, endSeconds } with end after start, found ${JSON.stringify(window)}` });
    } else win = { startSeconds: w.startSeconds, endSeconds: w.endSeconds };
  }
  if (columns !== undefined && !(Number.isInteger(columns) && (columns as number) >= 10 && (columns as number) <= MAX_COLUMNS)) {
    issues.push({ path: 'body.columns', message: `expected a whole number from 10 to ${MAX_COLUMNS}, found ${JSON.stringify(columns)}` });
  }
  if (issues.length > 0 || !validated.ok) throw new HttpError(400, 'invalid request', issues);
  const scenario = validated.scenario;
  const supported = availableVariants(scenario);
  const wanted = chosen ?? supported;
  const missing = wanted.filter((v) => !supported.includes(v));
  if (missing.length > 0) {
    throw new HttpError(400, 'invalid request', [{ path: 'body.variants', message: `expected variants this scenario supports (${supported.join(', ')}), found ${missing.join(', ')}` }]);
  }
  return {
    scenario, variants: wanted, columns: (columns as number | undefined) ?? 1500, warnings: validated.warnings,
    deadlineMs: Date.now() + runTimeCapMs,
    ...(win ? { window: win } : {}),
  };
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
