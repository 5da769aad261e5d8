// The CLI's work budget: every command estimates its cost before simulating and runs under a
// deadline, so no scenario runs unbounded; `--max-seconds` lifts the budget.

import type { Scenario, VariantName } from '../circuit/scenario.js';
import { checkWorkBudget, type BudgetRefusal } from '../analysis/work-budget.js';
import { BadInput, SimulationFailed } from './cli-errors.js';

/** Default wall-time budget of one command, s: the demo scenarios take about a second. */
export const DEFAULT_MAX_SECONDS = 120;
const LARGEST_MAX_SECONDS = 7 * 24 * 3600;

export function readMaxSeconds(text: string | undefined): number {
  if (text === undefined) return DEFAULT_MAX_SECONDS;
  const value = Number(text);
  if (!(Number.isFinite(value) && value > 0 && value <= LARGEST_MAX_SECONDS) || text.trim() === '') {
    throw new BadInput(`--max-seconds: expected a number of seconds above 0 and at most ${LARGEST_MAX_SECONDS} (a week), found ${JSON.stringify(text)}`);
  }
  return value;
}

/**
 * Refuses a run over the budget before it starts: too many recorded samples is bad input (exit 2,
 * the field to change); too much estimated time is a run that cannot finish (exit 1). `where`
 * follows each message (which sweep point it is).
 */
export function enforceWorkBudget(scenario: Scenario, variants: readonly VariantName[], maxSeconds: number, where = ''): void {
  const refusals = checkWorkBudget(scenario, variants, maxSeconds, (needed) => `pass --max-seconds ${needed} to run it anyway`);
  const lines = (kind: BudgetRefusal['kind']): string => refusals.filter((r) => r.kind === kind).map((r) => `${r.path}: ${r.message}${where}`).join('\n');
  if (lines('recorded-samples')) throw new BadInput(lines('recorded-samples'));
  if (lines('time')) throw new SimulationFailed(`over the work budget\n${lines('time')}`);
}

/** A failure message with the budget named when the deadline stopped the run. */
export function withBudgetHint(failure: string, maxSeconds: number): string {
  return /time cap/.test(failure) ? `${failure}; the budget is --max-seconds ${maxSeconds}: pass a larger value to let it run longer` : failure;
}

/** The page's port unless --port says otherwise (kept here, away from the server's modules, so the CLI loads them only for serve). */
export const DEFAULT_PORT = 5187;
