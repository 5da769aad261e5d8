import { loadScenarioFile } from '../circuit/load-scenario.js';
import { availableVariants, type VariantName } from '../circuit/scenario.js';
import { formatIssues } from '../circuit/validate-scenario.js';
import { simulationReport, type SimulationReport } from '../analysis/simulation-report.js';
import { soundVariants } from '../analysis/result-checks.js';
import { settleOperatingPoint } from '../simulation/operating-point.js';
import { runVariant, SimulationFailure, type VariantRun } from '../simulation/run-variant.js';
import { BadInput, outputFor, SimulationFailed } from './cli-errors.js';
import { summaryTable } from './summary-table.js';
import { waveformCsv, waveformCsvSize } from './waveform-csv.js';
import { checkOutputPath, writeFileAtomic } from './write-atomic.js';
import { enforceWorkBudget, readMaxSeconds, withBudgetHint } from './work-limits.js';

export interface SimulateOptions { json?: boolean; csv?: string; variant?: VariantName; maxSeconds?: string; progress?: boolean }

/**
 * Settling progress on stderr (a terminal, or --progress): the variant, cycles so far and the last
 * change against the settle tolerance, at most four times a second, so a long run shows it is moving.
 */
function progressReporter(enabled: boolean): { onCycle: (variant: VariantName) => (cycles: number, change: number) => void; done: () => void } {
  let shown = false;
  return {
    // Each variant's first cycle is always shown, then at most four lines a second.
    onCycle: (variant) => { let last = 0; return (cycles, change) => {
      const now = Date.now();
      if (!enabled || now - last < 250) return;
      last = now;
      shown = true;
      process.stderr.write(`${process.stderr.isTTY ? '\r' : ''}${variant}: cycle ${cycles}${Number.isFinite(change) ? `, change ${change.toExponential(1)} of the scale` : ''}${process.stderr.isTTY ? '   ' : '\n'}`);
    }; },
    done: () => { if (shown && process.stderr.isTTY) process.stderr.write('\n'); },
  };
}

/** Above this a CSV gets a warning with its size before it is written (it is streamed, so memory stays flat). */
export const CSV_WARNING_BYTES = 50 * 1024 * 1024;

export async function runSimulateCommand(file: string, options: SimulateOptions): Promise<void> {
  const maxSeconds = readMaxSeconds(options.maxSeconds);
  const loaded = await loadScenarioFile(file);
  if (!loaded.ok) throw new BadInput(formatIssues(loaded.issues));
  let scenario = loaded.scenario;
  for (const w of loaded.warnings) process.stderr.write(`warning: ${w.path}: ${w.message}\n`);
  const supported = availableVariants(scenario);
  if (options.variant && !supported.includes(options.variant)) {
    throw new BadInput(`--variant: expected one of ${supported.join(', ')} for this scenario (the ${options.variant} variant needs a ${options.variant === 'clamp' ? 'clamp' : 'damper'} block), found ${options.variant}`);
  }
  if (options.csv) await outputFor('--csv', () => checkOutputPath(options.csv!, [file]));
  const variants = options.variant ? [options.variant] : supported;
  enforceWorkBudget(scenario, variants, maxSeconds);

  const deadlineMs = Date.now() + maxSeconds * 1000;
  const runs: VariantRun[] = [];
  const failures: string[] = [];
  try {
    scenario = settleOperatingPoint(scenario, { deadlineMs }).scenario;
  } catch (error) {
    if (!(error instanceof SimulationFailure)) throw error;
    throw new SimulationFailed(error.message);
  }
  const progress = progressReporter(options.progress === true || process.stderr.isTTY === true);
  for (const v of variants) {
    try {
      // Without --csv nothing shows the waveforms: one recorded cycle of a settled orbit gives every
      // metric (the others repeat it within the settle tolerance); other orbits keep them all.
      runs.push(runVariant(scenario, v, { deadlineMs, onCycle: progress.onCycle(v), ...(options.csv ? {} : { recordedCyclesWhenSettled: 1 }) }));
    } catch (error) {
      if (!(error instanceof SimulationFailure)) throw error;
      failures.push(`${v}: ${withBudgetHint(error.message, maxSeconds)}`);
    }
  }
  progress.done();
  const full = runs.length > 0 ? simulationReport(scenario, runs) : undefined;
  // A variant with a number that did not come out finite, or an energy balance that does not
  // close, is a failure with its reason, not a result.
  const { sound, problems } = soundVariants(full?.variants ?? {});
  failures.push(...problems);
  const kept = runs.filter((r) => sound[r.variant]);
  if (full && kept.length > 0) {
    const report: SimulationReport = { ...full, variants: sound as SimulationReport['variants'] };
    process.stdout.write(options.json ? `${JSON.stringify(report, null, 2)}\n` : `${summaryTable(report)}\n`);
    if (options.csv) {
      const size = waveformCsvSize(kept);
      if (size.bytes > CSV_WARNING_BYTES) {
        process.stderr.write(`warning: --csv: the file will be about ${Math.round(size.bytes / 1e6)} MB (${size.rows} rows × ${size.columns} columns); lower simulation.recordedCycles or samplesPerCycle for a smaller one\n`);
      }
      await outputFor('--csv', () => writeFileAtomic(options.csv!, waveformCsv(kept), [file]));
      if (!options.json) process.stdout.write(`Waveforms written to ${options.csv}\n`);
    }
  }
  if (failures.length > 0) throw new SimulationFailed(failures.join('\n'));
}
