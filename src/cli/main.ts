#!/usr/bin/env node
// flyclamp command line. Exit codes: 0 success, 1 simulation failure, 2 bad input.

import { Command, CommanderError, Option } from 'commander';
import { runSimulateCommand } from './simulate-command.js';
import { DEFAULT_PORT, runServeCommand } from './serve-command.js';
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

program.command('serve')
  .description('serve the plotting page and its JSON API (loopback only by default)')
  .argument('[file]', 'scenario to print a summary of and open on the page')
  .option('--port <n>', 'port to listen on (0: any free port)', String(DEFAULT_PORT))
  .option('--host <h>', 'address to bind', '127.0.0.1')
  .action(async (file: string | undefined, options: { port: string; host: string }) => {
    await runServeCommand(file, options);
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

const code = await main();
if (code !== 0) process.exit(code);
