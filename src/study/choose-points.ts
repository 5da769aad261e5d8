// From the words of a study request (CLI flags or an HTTP body) to its points.

import { parseTolerance, parseVary, StudySpecError } from './study-spec.js';
import { cornerPoints, gridPoints, monteCarloPoints, type PointValues } from './study-points.js';

export interface StudyRequest {
  vary: readonly string[];
  corners?: boolean;
  /** Monte Carlo sample count, as given. */
  samples?: string | number;
  tolerance: readonly string[];
  seed: string | number;
}

export type StudyKind = 'grid' | 'corners' | 'monte-carlo';

/** Throws StudySpecError naming the flag (`--vary`, `--samples`, …) and what was expected. */
export function choosePoints(request: StudyRequest, nominal: (path: string) => number | undefined, maxPoints = 100_000): { kind: StudyKind; points: PointValues[] } {
  if (request.samples !== undefined) {
    const samples = Number(request.samples);
    if (!(Number.isInteger(samples) && samples >= 1 && samples <= maxPoints)) {
      throw new StudySpecError('samples', `expected a whole number from 1 to ${maxPoints}, found ${JSON.stringify(request.samples)}`);
    }
    if (request.vary.length > 0) throw new StudySpecError('samples', 'expected --tolerance ranges for Monte Carlo, found --vary as well (use one or the other)');
    if (request.tolerance.length === 0) throw new StudySpecError('samples', 'expected at least one --tolerance PATH=±X%, found none');
    const seed = Number(request.seed);
    if (!Number.isInteger(seed)) throw new StudySpecError('seed', `expected a whole number, found ${JSON.stringify(request.seed)}`);
    const tolerances = request.tolerance.map((t) => parseTolerance(t, nominal));
    return { kind: 'monte-carlo', points: monteCarloPoints(tolerances, (p) => nominal(p)!, samples, seed) };
  }
  if (request.tolerance.length > 0) throw new StudySpecError('tolerance', 'expected --samples N with it (Monte Carlo), found none');
  if (request.vary.length === 0) throw new StudySpecError('vary', 'expected at least one PATH=FROM..TO[:STEPS] (or --samples N with --tolerance), found none');
  const ranges = request.vary.map((v) => parseVary(v, nominal));
  // Counted before the grid is made: three ranges of 1000 steps would be 10⁹ points in memory.
  const count = ranges.reduce((n, r) => n * (request.corners ? Math.min(r.steps, 2) : r.steps), 1);
  if (count > maxPoints) throw new StudySpecError('vary', `expected at most ${maxPoints} points, found ${count}`);
  const points = request.corners ? cornerPoints(ranges) : gridPoints(ranges);
  return { kind: request.corners ? 'corners' : 'grid', points };
}
