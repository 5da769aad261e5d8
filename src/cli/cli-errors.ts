/** Input that the user must change (exit code 2). */
export class BadInput extends Error {}
/** The input was valid but a simulation could not finish (exit code 1). */
export class SimulationFailed extends Error {}
