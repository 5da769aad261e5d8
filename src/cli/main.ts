#!/usr/bin/env node
// flyclamp command line. Exit codes: 0 success, 1 simulation failure, 2 bad input.

import { Command, CommanderError, Option } from 'commander';
import { runSimulateCommand } from './simulate-command.js';
import { BadInput, SimulationFailed } from './cli-errors.js';

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
  .action(async (file: string, options: { json?: boolean; csv?: string; variant?: 'bare' | 'clamp' | 'damped' }) => {
    await runSimulateCommand(file, options);
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

process.exitCode = await main();
