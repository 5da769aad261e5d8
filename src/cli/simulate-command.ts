import { loadScenarioFile } from '../circuit/load-scenario.js';
import { availableVariants, type VariantName } from '../circuit/scenario.js';
import { formatIssues } from '../circuit/validate-scenario.js';
import { simulationReport } from '../analysis/simulation-report.js';
import { settleOperatingPoint } from '../simulation/operating-point.js';
import { runVariant, SimulationFailure, type VariantRun } from '../simulation/run-variant.js';
import { BadInput, outputFor, SimulationFailed } from './cli-errors.js';
import { summaryTable } from './summary-table.js';
import { waveformCsv } from './waveform-csv.js';
import { checkOutputPath, writeFileAtomic } from './write-atomic.js';

export interface SimulateOptions { json?: boolean; csv?: string; variant?: VariantName }

export async function runSimulateCommand(file: string, options: SimulateOptions): Promise<void> {
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
  const runs: VariantRun[] = [];
  const failures: string[] = [];
  try {
    scenario = settleOperatingPoint(scenario).scenario;
  } catch (error) {
    if (!(error instanceof SimulationFailure)) throw error;
    throw new SimulationFailed(error.message);
  }
  for (const v of variants) {
    try {
      runs.push(runVariant(scenario, v));
    } catch (error) {
      if (!(error instanceof SimulationFailure)) throw error;
      failures.push(`${v}: ${error.message}`);
    }
  }
  if (runs.length > 0) {
    const report = simulationReport(scenario, runs);
    process.stdout.write(options.json ? `${JSON.stringify(report, null, 2)}\n` : `${summaryTable(report)}\n`);
    if (options.csv) {
      await outputFor('--csv', () => writeFileAtomic(options.csv!, waveformCsv(runs), [file]));
      if (!options.json) process.stdout.write(`Waveforms written to ${options.csv}\n`);
    }
  }
  if (failures.length > 0) throw new SimulationFailed(failures.join('\n'));
}
