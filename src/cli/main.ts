#!/usr/bin/env node
// flyclamp command line. Exit codes: 0 success, 1 simulation failure, 2 bad input.

import { Command, CommanderError, Option } from 'commander';
import type { SweepOptions } from './sweep-command.js';
import type { FitCommandOptions } from './fit-command.js';
import { BadInput, SimulationFailed } from './cli-errors.js';
import { DEFAULT_MAX_SECONDS, DEFAULT_PORT } from './work-limits.js';

const program = new Command('flyclamp')
  .description('Settled switching-node simulator for flyback RCD clamps and RC dampers')
  .showHelpAfterError()
  .exitOverride()
  .configureOutput({ writeErr: (s) => process.stderr.write(s) });

program.command('simulate')
  .description('simulate a scenario file to the settled state and report drain stress per variant')
  .argument('<file>', 'scenario JSON file')
  .option('--json', 'print one JSON object instead of the table')
  .option('--csv <file>', 'write the settled waveforms as CSV')
  .addOption(new Option('--variant <name>', 'run one variant only').choices(['bare', 'clamp', 'damped']))
  .option('--max-seconds <s>', `work budget: refuse a run estimated over it, stop one that runs over it (default ${DEFAULT_MAX_SECONDS})`)
  .option('--progress', 'report settling progress even when stderr is not a terminal')
  .action(async (file: string, options: { json?: boolean; csv?: string; variant?: 'bare' | 'clamp' | 'damped'; maxSeconds?: string; progress?: boolean }) => {
    // Each command loads only what it uses: `simulate` need not load the server's stack.
    await (await import('./simulate-command.js')).runSimulateCommand(file, options);
  });

program.command('design')
  .description('design the RCD clamp and RC damper from published equations and verify them by simulation')
  .argument('<file>', 'scenario JSON file (with an optional "design" block)')
  .option('--json', 'print one JSON object instead of the table')
  .option('--report <file.html>', 'write a self-contained HTML report')
  .option('--max-seconds <s>', `work budget of the whole design (default ${DEFAULT_MAX_SECONDS})`)
  .action(async (file: string, options: { json?: boolean; report?: string; maxSeconds?: string }) => {
    await (await import('./design-command.js')).runDesignCommand(file, options);
  });

program.command('fit')
  .description('fit the leakage inductance, drain capacitance and winding resistance to a scope capture of the drain')
  .argument('<capture>', 'oscilloscope CSV export of the drain voltage')
  .argument('<scenario>', 'scenario JSON file')
  .option('--column <name|index>', 'the drain column when the capture has several (a name, or its position counting the time column as 1)')
  .option('--with-capacitor <capture2>', 'a second capture with a known capacitor added across drain and source')
  .option('--added-capacitance <C>', 'that capacitor, F (SI prefixes: 100p)')
  .option('--json', 'print one JSON object instead of the table')
  .option('--out <fitted.json>', 'write the fitted scenario (never over an input)')
  .option('--workers <n>', 'worker processes for the simulations (default: one per core, at most 3; 0: this process only)')
  .action(async (capture: string, scenario: string, options: FitCommandOptions) => {
    await (await import('./fit-command.js')).runFitCommand(capture, scenario, options);
  });

const collect = (value: string, previous: string[]): string[] => [...previous, value];
program.command('sweep')
  .description('run a scenario over ranges, corners or Monte Carlo samples of its fields, all variants settled')
  .argument('<file>', 'scenario JSON file')
  .option('--vary <spec>', 'PATH=FROM..TO[:STEPS], values with SI prefixes or in % of nominal (repeatable: a grid)', collect, [])
  .option('--corners', 'only every combination of the ends of the --vary ranges')
  .option('--samples <n>', 'Monte Carlo: number of samples drawn within the --tolerance ranges')
  .option('--tolerance <spec>', 'PATH=±X%[:uniform|:normal] (normal: σ = X/3), repeatable', collect, [])
  .option('--seed <n>', 'seed of the Monte Carlo draws', '1')
  .option('--json', 'print one JSON object instead of the table')
  .option('--csv <file>', 'write one row per point')
  .option('--workers <n>', 'worker processes (default: one per core; 0: this process only)')
  .option('--progress', 'report progress even when stderr is not a terminal (one line per point)')
  .option('--max-seconds <s>', `work budget of each point's variant (default ${DEFAULT_MAX_SECONDS})`)
  .action(async (file: string, options: SweepOptions) => {
    await (await import('./sweep-command.js')).runSweepCommand(file, options);
  });

program.command('serve')
  .description('serve the plotting page and its JSON API (loopback only by default)')
  .argument('[file]', 'scenario to print a summary of and open on the page')
  .option('--port <n>', 'port to listen on (0: any free port)', String(DEFAULT_PORT))
  .option('--host <h>', 'address to bind', '127.0.0.1')
  .action(async (file: string | undefined, options: { port: string; host: string }) => {
    await (await import('./serve-command.js')).runServeCommand(file, options);
  });

async function main(): Promise<number> {
  try {
    await program.parseAsync(process.argv);
    return 0;
  } catch (error) {
    if (error instanceof CommanderError) {
      return error.exitCode === 0 ? 0 : 2;
    }
    if (error instanceof BadInput) {
      process.stderr.write(`flyclamp: bad input\n${error.message}\n`);
      return 2;
    }
    if (error instanceof SimulationFailed) {
      process.stderr.write(`flyclamp: simulation failed: ${error.message}\n`);
      return 1;
    }
    process.stderr.write(`flyclamp: internal error: ${(error as Error).message}\n`);
    return 1;
  }
}

// A reader that stops early (`| head`) closes the pipe: stop writing, without a stack trace.
for (const stream of [process.stdout, process.stderr]) {
  stream.on('error', (error: NodeJS.ErrnoException) => {
    if (error.code !== 'EPIPE') throw error;
    process.exitCode ||= 1;
  });
}

// Set, not process.exit(): exiting at once would cut stdout and stderr at 64 kB when they are
// pipes (the rest is still queued); the process ends by itself once they have drained.
const code = await main();
if (code !== 0) process.exitCode = code; // else keep what a command set (130 for an interrupted sweep)
