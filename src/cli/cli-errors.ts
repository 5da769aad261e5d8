import { OutputPathError } from './write-atomic.js';

/** Input that the user must change (exit code 2). */
export class BadInput extends Error {}
/** The input was valid but a simulation could not finish (exit code 1). */
export class SimulationFailed extends Error {}

/** Runs an output-file step, reporting a refused or unwritable path as bad input for `flag`. */
export async function outputFor<T>(flag: string, step: () => Promise<T>): Promise<T> {
  try {
    return await step();
  } catch (error) {
    if (error instanceof OutputPathError) throw new BadInput(`${flag} ${error.message}`);
    throw error;
  }
}
