import { loadScenarioFile } from '../circuit/load-scenario.js';
import { formatIssues } from '../circuit/validate-scenario.js';
import { fieldUnit } from '../contract/field-metadata.js';
import { formatSi } from '../circuit/si-number.js';
import { getNumberAt, scenarioToJson } from '../circuit/scenario-json.js';
import type { VariantName } from '../circuit/scenario.js';
import { StudySpecError } from '../study/study-spec.js';
import type { PointValues } from '../study/study-points.js';
import { choosePoints } from '../study/choose-points.js';
import { runStudy, type StudyPoint, type StudyRun } from '../study/run-study.js';
import { peakDistribution, worstPerVariant } from '../study/study-summary.js';
import { BadInput, outputFor, SimulationFailed } from './cli-errors.js';
import { checkOutputPath, writeFileAtomic } from './write-atomic.js';
import { enforceWorkBudget, readMaxSeconds } from './work-limits.js';
import { drainDerating } from '../analysis/simulation-report.js';
import { validateScenario } from '../circuit/validate-scenario.js';
import { scenarioAtPoint } from '../study/run-study.js';
import { availableVariants } from '../circuit/scenario.js';

export interface SweepOptions {
  vary: string[];
  corners?: boolean;
  samples?: string;
  tolerance: string[];
  seed: string;
  json?: boolean;
  csv?: string;
  workers?: string;
  progress?: boolean;
  maxSeconds?: string;
}

const unitOf = (path: string): string => fieldUnit(path) ?? '';

export async function runSweepCommand(file: string, options: SweepOptions): Promise<void> {
  const maxSeconds = readMaxSeconds(options.maxSeconds);
  const loaded = await loadScenarioFile(file);
  if (!loaded.ok) throw new BadInput(formatIssues(loaded.issues));
  const base = scenarioToJson(loaded.scenario);
  const nominal = (path: string): number | undefined => getNumberAt(base, path);
  let points: PointValues[];
  try {
    points = choosePoints(options, nominal).points;
  } catch (error) {
    if (error instanceof StudySpecError) throw new BadInput(error.message);
    throw error;
  }
  if (options.csv) await outputFor('--csv', () => checkOutputPath(options.csv!, [file]));
  const workers = options.workers === undefined ? undefined : Number(options.workers);
  if (workers !== undefined && !(Number.isInteger(workers) && workers >= 0 && workers <= 64)) {
    throw new BadInput(`--workers: expected a whole number from 0 (this process only) to 64, found ${JSON.stringify(options.workers)}`);
  }
  // Every point within the budget before any runs (a point that is invalid fails on its own, with its reason).
  points.forEach((values, index) => {
    const at = validateScenario(scenarioAtPoint(base, values));
    if (!at.ok) return;
    const where = ` (at point ${index + 1}: ${Object.entries(values).map(([p, v]) => `${p} = ${formatSi(v, unitOf(p))}`).join(', ')}; the budget is per variant)`;
    for (const variant of availableVariants(at.scenario)) enforceWorkBudget(at.scenario, [variant], maxSeconds, where);
  });

  const abort = new AbortController();
  const onInterrupt = (): void => {
    if (abort.signal.aborted) process.exit(130);
    process.stderr.write('\nstopping: keeping the finished points (Ctrl-C again to quit at once)\n');
    abort.abort();
  };
  process.on('SIGINT', onInterrupt);
  const progress = progressLine(points.length, options.progress === true);
  let study: StudyRun;
  try {
    study = await runStudy(base, points, { signal: abort.signal, taskCapMs: maxSeconds * 1000, onProgress: progress.update, ...(workers === undefined ? {} : { workers }) });
  } finally {
    process.off('SIGINT', onInterrupt);
    progress.finish();
  }

  // The limits of the base scenario: a point may vary the rating itself.
  const voltageRating = loaded.scenario.switch.voltageRating;
  const deratedLimit = voltageRating * drainDerating(loaded.scenario);
  const worst = worstPerVariant(study.points);
  const monteCarlo = options.samples ? peakDistribution(study.points, deratedLimit) : undefined;
  const result = {
    scenario: loaded.scenario.name,
    kind: options.samples ? 'monte-carlo' : options.corners ? 'corners' : 'grid',
    ...(options.samples ? { seed: Number(options.seed) } : {}),
    voltageRating,
    deratedLimit,
    interrupted: study.interrupted,
    pointsRequested: points.length,
    points: study.points,
    worst,
    ...(monteCarlo ? { monteCarlo } : {}),
  };
  process.stdout.write(options.json ? `${JSON.stringify(result, null, 2)}\n` : `${sweepTable(result.scenario, study, { voltageRating, deratedLimit }, worst, monteCarlo)}\n`);
  if (options.csv) {
    await outputFor('--csv', () => writeFileAtomic(options.csv!, sweepCsv(study.points), [file]));
    if (!options.json) process.stdout.write(`Points written to ${options.csv}\n`);
  }
  if (study.interrupted) process.exitCode = 130;
  else if (study.points.length > 0 && study.points.every((p) => p.failure !== undefined)) {
    throw new SimulationFailed(`every one of the ${study.points.length} points failed; each one's reason is in the output above`);
  }
}

/**
 * A progress line on a terminal: points done, rate, time left. Silent when stderr is not a TTY,
 * unless asked for (`--progress`), then one line per finished point.
 */
function progressLine(total: number, forced: boolean): { update: (done: number, total: number, failed: number) => void; finish: () => void } {
  const started = Date.now();
  const tty = process.stderr.isTTY === true;
  let shown = false;
  return {
    update: (done, _total, failed) => {
      if (!tty && !forced) return;
      const seconds = (Date.now() - started) / 1000;
      const rate = done / Math.max(seconds, 1e-3);
      const left = (total - done) / Math.max(rate, 1e-9);
      const width = 24;
      const filled = Math.round((width * done) / total);
      process.stderr.write(`${tty ? '\r' : ''}[${'#'.repeat(filled)}${'.'.repeat(width - filled)}] ${done}/${total} points${failed ? `, ${failed} failed` : ''}, ${rate.toFixed(1)}/s, ${left.toFixed(0)} s left  ${tty ? '' : '\n'}`);
      shown = true;
    },
    finish: () => { if (shown && tty) process.stderr.write('\n'); },
  };
}

const VARIANT_ORDER: VariantName[] = ['bare', 'clamp', 'damped'];
const signed = (v: number): string => `${v >= 0 ? '+' : ''}${formatSi(v, 'V', 3)}`;

function sweepTable(name: string, study: StudyRun, limits: { voltageRating: number; deratedLimit: number }, worst: ReturnType<typeof worstPerVariant>, monteCarlo: ReturnType<typeof peakDistribution> | undefined): string {
  const paths = [...new Set(study.points.flatMap((p) => Object.keys(p.values)))];
  const variants = VARIANT_ORDER.filter((v) => study.points.some((p) => p.variants?.[v]));
  const header = ['#', ...paths, ...variants.map((v) => `${v} peak (to rating, to limit)`), 'clamp mean', 'ripple', 'clamp R power'];
  const rows = study.points.map((p) => {
    const clamp = p.variants?.clamp;
    return [
      String(p.index + 1),
      ...paths.map((path) => formatSi(p.values[path]!, unitOf(path))),
      ...(p.failure ? [`failed: ${p.failure}`] : variants.map((v) => {
        const m = p.variants?.[v];
        return m ? `${formatSi(m.peakDrainVoltage, 'V')} (${signed(m.marginToRating)}, ${signed(m.marginToDeratedLimit)})${m.settled ? '' : ` ${m.orbit}`}` : '—';
      })),
      ...(p.failure ? [] : [clamp?.clampVoltageMean, clamp?.clampVoltageRipple].map((v) => (v === undefined ? '—' : formatSi(v, 'V'))).concat(clamp?.clampResistorPower === undefined ? '—' : formatSi(clamp.clampResistorPower, 'W'))),
    ];
  });
  const widths = header.map((h, i) => Math.max(h.length, ...rows.map((r) => (r[i] ?? '').length)));
  const render = (r: string[]): string => r.map((c, i) => c.padEnd(widths[i] ?? 0)).join('  ').trimEnd();
  const lines = [`Sweep of ${name}: ${study.points.length} points; rating ${formatSi(limits.voltageRating, 'V')}, derated limit ${formatSi(limits.deratedLimit, 'V')} (of the base scenario)`, '', render(header), ...rows.map(render), ''];
  for (const v of variants) {
    const w = worst[v];
    if (!w) continue;
    const at = Object.entries(w.values).map(([path, value]) => `${path} = ${formatSi(value, unitOf(path))}`).join(', ');
    lines.push(`worst ${v}: ${formatSi(w.peakDrainVoltage, 'V')} at point ${w.index + 1}${at ? ` (${at})` : ''}; margin to the derated limit ${signed(w.marginToDeratedLimit)}`);
  }
  if (monteCarlo) {
    lines.push('');
    for (const v of variants) {
      const d = monteCarlo[v];
      if (!d) continue;
      const q = d.percentiles;
      lines.push(`${v}: ${(100 * d.fractionOverDeratedLimit).toFixed(1)} % of ${d.samples} samples over the derated limit; peak p5 ${formatSi(q.p5, 'V')}, p50 ${formatSi(q.p50, 'V')}, p95 ${formatSi(q.p95, 'V')}, p99 ${formatSi(q.p99, 'V')}, max ${formatSi(q.max, 'V')}`);
    }
  }
  const failed = study.points.filter((p) => p.failure).length;
  if (failed) lines.push('', `${failed} point(s) failed; their reasons are in the table.`);
  if (study.interrupted) lines.push('', `Interrupted: ${study.points.length} finished points shown.`);
  lines.push('', 'Design aid only, not compliance evidence. See the README, "Safety".');
  return lines.join('\n');
}

function sweepCsv(points: readonly StudyPoint[]): string {
  const paths = [...new Set(points.flatMap((p) => Object.keys(p.values)))];
  const metrics = ['peakDrainVoltage', 'marginToRating', 'marginToDeratedLimit', 'clampVoltageMean', 'clampVoltageRipple', 'clampResistorPower', 'damperResistorPower', 'settled'] as const;
  const units: Record<(typeof metrics)[number], string> = {
    peakDrainVoltage: 'V', marginToRating: 'V', marginToDeratedLimit: 'V', clampVoltageMean: 'V', clampVoltageRipple: 'V', clampResistorPower: 'W', damperResistorPower: 'W', settled: '',
  };
  const header = ['point', ...paths.map((p) => `${p} (${unitOf(p) || '1'})`),
    ...VARIANT_ORDER.flatMap((v) => metrics.map((m) => `${v} ${m}${units[m] ? ` (${units[m]})` : ''}`)), 'failure'];
  const lines = [header.join(',')];
  for (const p of points) {
    const cells = [String(p.index + 1), ...paths.map((path) => String(p.values[path]))];
    for (const v of VARIANT_ORDER) {
      const m = p.variants?.[v] as Record<string, unknown> | undefined;
      for (const k of metrics) cells.push(m?.[k] === undefined ? '' : String(m[k]));
    }
    cells.push(p.failure ? `"${p.failure.replace(/"/g, '""')}"` : '');
    lines.push(cells.join(','));
  }
  return `${lines.join('\n')}\n`;
}
