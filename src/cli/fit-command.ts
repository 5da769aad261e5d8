// flyclamp fit CAPTURE.csv SCENARIO.json: the ring in a scope capture, and the scenario's leakage
// inductance, drain capacitance and winding resistance fitted so the simulated drain matches it.

import { basename } from 'node:path';
import { loadScenarioFile } from '../circuit/load-scenario.js';
import { formatIssues } from '../circuit/validate-scenario.js';
import { formatSi, parseSiNumber } from '../circuit/si-number.js';
import { scenarioToJson } from '../circuit/scenario-json.js';
import { CaptureError, readCapture, type Capture } from '../capture/read-capture.js';
import { analyseRing, RingNotFound, type RingAnalysis } from '../capture/ring-analysis.js';
import { fitModel, ModelFitFailed, runLocally, runOnPool, type ModelFit } from '../capture/fit-model.js';
import { createTracePool } from '../capture/trace-pool.js';
import { fitJson, type FitJson } from '../capture/fit-json.js';
import { availableParallelism } from 'node:os';
import { extractFromAddedCapacitor } from '../equations/ring-extraction.js';
import { BadInput, outputFor, SimulationFailed } from './cli-errors.js';
import { checkOutputPath, writeFileAtomic } from './write-atomic.js';

export interface FitCommandOptions {
  column?: string;
  withCapacitor?: string;
  addedCapacitance?: string;
  json?: boolean;
  out?: string;
  workers?: string;
}

/** Most worker processes for a fit: a Jacobian is three simulations side by side. */
const MAX_FIT_WORKERS = 3;

export async function runFitCommand(captureFile: string, scenarioFile: string, options: FitCommandOptions): Promise<void> {
  // Flags first: nothing is read or simulated on a bad command line.
  if ((options.withCapacitor === undefined) !== (options.addedCapacitance === undefined)) {
    throw new BadInput(options.withCapacitor === undefined
      ? `--added-capacitance: expected together with --with-capacitor CAPTURE2.csv, found it alone`
      : `--with-capacitor: expected together with --added-capacitance C (the capacitor added across drain and source, e.g. 100p), found it alone`);
  }
  let addedCapacitance: number | undefined;
  if (options.addedCapacitance !== undefined) {
    const parsed = parseSiNumber(options.addedCapacitance, 'F');
    if (!parsed.ok || !(parsed.value > 0)) throw new BadInput(`--added-capacitance: expected a positive capacitance such as 100p or 100pF, found ${options.addedCapacitance}`);
    addedCapacitance = parsed.value;
  }
  let workers = Math.min(MAX_FIT_WORKERS, availableParallelism());
  if (options.workers !== undefined) {
    if (!/^\s*\d+\s*$/.test(options.workers) || Number(options.workers) > 64) throw new BadInput(`--workers: expected a whole number from 0 to 64, found ${options.workers}`);
    workers = Math.min(MAX_FIT_WORKERS, Number(options.workers));
  }
  const inputs = [captureFile, scenarioFile, ...(options.withCapacitor ? [options.withCapacitor] : [])];
  if (options.out) await outputFor('--out', () => checkOutputPath(options.out!, inputs));

  const loaded = await loadScenarioFile(scenarioFile);
  if (!loaded.ok) throw new BadInput(formatIssues(loaded.issues));
  for (const w of loaded.warnings) process.stderr.write(`warning: ${w.path}: ${w.message}\n`);

  const capture = await captureFrom(captureFile, options.column);
  const ring = ringOf(captureFile, capture);
  let fit: ModelFit;
  const pool = workers > 0 ? createTracePool(workers) : null;
  try {
    fit = await fitModel(loaded.scenario, capture, ring, { runner: pool ? runOnPool(pool) : runLocally });
  } catch (error) {
    if (error instanceof ModelFitFailed) throw new SimulationFailed(error.message);
    throw error;
  } finally {
    await pool?.destroy();
  }

  let added: FitJson['addedCapacitor'];
  let ringWithCapacitor: RingAnalysis | undefined;
  if (options.withCapacitor !== undefined && addedCapacitance !== undefined) {
    ringWithCapacitor = ringOf(options.withCapacitor, await captureFrom(options.withCapacitor, options.column));
    // Undamped frequencies: f0 = √(ω² + α²)/2π is what 1/(2π√(LC)) means for a damped series ring.
    const extraction = extractFromAddedCapacitor({
      ringFrequency: ring.undampedFrequencyHz,
      ringFrequencyWithAddedCapacitor: ringWithCapacitor.undampedFrequencyHz,
      addedCapacitance,
    });
    if (!extraction.ok) {
      throw new BadInput(`--with-capacitor: expected a ring slower than the first capture's (${formatSi(ring.undampedFrequencyHz, 'Hz')}), found ${formatSi(ringWithCapacitor.undampedFrequencyHz, 'Hz')}: ${extraction.message}`);
    }
    added = { leakageInductance: extraction.inductance, drainCapacitance: extraction.parasiticCapacitance };
  }

  const json = fitJson(fit, ring, capture.volts.length, added);
  if (options.json) process.stdout.write(`${JSON.stringify(json, null, 2)}\n`);
  else process.stdout.write(`${fitTable(captureFile, capture, ring, fit, ringWithCapacitor, added)}\n`);
  if (options.out) {
    const doc = scenarioToJson(fit.scenario);
    doc.name = `${loaded.scenario.name} (fitted to ${basename(captureFile)})`;
    await outputFor('--out', () => writeFileAtomic(options.out!, `${JSON.stringify(doc, null, 2)}\n`, inputs));
    if (!options.json) process.stdout.write(`Fitted scenario written to ${options.out}\n`);
  }
}

async function captureFrom(file: string, column: string | undefined): Promise<Capture> {
  try {
    return await readCapture(file, column !== undefined ? { column } : {});
  } catch (error) {
    if (error instanceof CaptureError) throw new BadInput(`${error.flag ? `${error.flag} (in ${file})` : file}: ${error.message}`);
    throw error;
  }
}

function ringOf(file: string, capture: Capture): RingAnalysis {
  try {
    return analyseRing(capture.timeSeconds, capture.volts);
  } catch (error) {
    if (error instanceof RingNotFound) throw new BadInput(`${file}: ${error.message}`);
    throw error;
  }
}

function fitTable(file: string, capture: Capture, ring: RingAnalysis, fit: ModelFit, ringWithCapacitor: RingAnalysis | undefined, added: FitJson['addedCapacitor']): string {
  const pm = (v: number, s: number, unit: string): string => `${formatSi(v, unit)} ± ${formatSi(s, unit, 2)}`;
  const c = fit.drainCapacitance;
  const lines = [
    `Capture: ${file}, column "${capture.columnName}", ${capture.volts.length} samples (time from the ${capture.timeSource})`,
    `Levels: low ${formatSi(ring.levels.lowVolts, 'V')}, high ${formatSi(ring.levels.highVolts, 'V')}; ${ring.edges.length} turn-off edge(s), ${ring.rings.length} ring(s) analysed; noise ${formatSi(ring.noiseVolts, 'V')} rms`,
    `Ring: ${pm(ring.frequencyHz, ring.frequencySigmaHz, 'Hz')}, decay α ${ring.decayPerSecond.toPrecision(4)} ± ${ring.decaySigmaPerSecond.toPrecision(2)} 1/s (τ = 1/α = ${formatSi(1 / ring.decayPerSecond, 's')}); undamped ${formatSi(ring.undampedFrequencyHz, 'Hz')}`,
    '',
    `Fitted (${fit.variant} variant, ${fit.edgesUsed} edge(s), ${fit.samplesUsed} samples, ${fit.simulations} settled simulations):`,
    `  transformer.leakageInductance   ${pm(fit.leakageInductance.value, fit.leakageInductance.sigma, 'H')}`,
    c.kind === 'constant'
      ? `  switch.drainCapacitance         ${pm(c.value, c.sigma, 'F')}`
      : `  switch.drainCapacitanceScale    ${c.value.toPrecision(4)} ± ${c.sigma.toPrecision(2)} (every point of the curve times this)`,
    `  transformer.primaryResistance   ${pm(fit.primaryResistance.value, fit.primaryResistance.sigma, 'Ω')}`,
    `  residual ${formatSi(fit.residualRmsVolts, 'V')} rms; capture offset ${formatSi(fit.offsetVolts, 'V')}`,
  ];
  if (ringWithCapacitor && added) {
    lines.push('', `Added-capacitor method (Todd, SEM-900; Severns): f1 ${formatSi(ring.undampedFrequencyHz, 'Hz')}, f2 ${formatSi(ringWithCapacitor.undampedFrequencyHz, 'Hz')}`,
      `  leakage inductance ${formatSi(added.leakageInductance, 'H')}, node capacitance ${formatSi(added.drainCapacitance, 'F')} (Coss plus winding and layout)`);
  }
  for (const s of ring.skipped.slice(0, 5)) lines.push(`Note: ${s}`);
  lines.push('', 'Probe bandwidth and a long ground lead bias the ring: see the README, "flyclamp fit", Limits.');
  return lines.join('\n');
}
