// The words of `sweep`: --vary PATH=FROM..TO[:STEPS] and --tolerance PATH=±X%[:uniform|:normal].
// Values are SI numbers (with prefixes) or percentages of the nominal value.

import { parseSiNumber } from '../circuit/si-number.js';

export interface VaryRange { path: string; from: number; to: number; steps: number }
export interface Tolerance { path: string; fraction: number; distribution: 'uniform' | 'normal' }

export class StudySpecError extends Error {}

const VARY = /^([A-Za-z][\w.]*)=(.+?)\.\.(.+?)(?::(\d+))?$/;
const TOLERANCE = /^([A-Za-z][\w.]*)=(?:±|\+-|\+\/-)(\d+(?:\.\d+)?|\.\d+)%(?::(uniform|normal))?$/;
const PERCENT = /^([+-]?\d+(?:\.\d+)?|[+-]?\.\d+)%$/;

/** Default number of points along one --vary range without :STEPS. */
export const DEFAULT_STEPS = 5;

/**
 * Parses one --vary. `nominal(path)` gives the scenario's value for percentages and tells
 * whether the path exists (undefined: no such numeric field).
 */
export function parseVary(text: string, nominal: (path: string) => number | undefined): VaryRange {
  const m = VARY.exec(text.trim());
  if (!m) throw new StudySpecError(`--vary "${text}": expected PATH=FROM..TO[:STEPS], e.g. transformer.leakageInductance=-20%..+20%:9 or clamp.resistance=10k..22k:5`);
  const path = m[1]!;
  const base = nominal(path);
  if (base === undefined) throw new StudySpecError(`--vary "${text}": expected a numeric scenario field, found no field ${path} in this scenario`);
  const from = parseEnd(m[2]!, base, text, 'FROM');
  const to = parseEnd(m[3]!, base, text, 'TO');
  // "-20%..+20" (a % forgotten) would sweep to 20 H: an end far from the nominal value is refused.
  for (const [which, value] of [['FROM', from], ['TO', to]] as const) {
    if (base !== 0 && !(Math.abs(value / base) >= 1e-3 && Math.abs(value / base) <= 1e3)) {
      throw new StudySpecError(`--vary "${text}": expected ${which} within a factor of 1000 of the nominal ${base} (a percentage needs its %), found ${value}`);
    }
  }
  const steps = m[4] === undefined ? (from === to ? 1 : DEFAULT_STEPS) : Number(m[4]);
  if (!(steps >= 1 && steps <= 1000) || (steps === 1 && from !== to)) {
    throw new StudySpecError(`--vary "${text}": expected STEPS from 2 to 1000 for a range (1 only when FROM equals TO), found ${m[4]}`);
  }
  return { path, from, to, steps };
}

function parseEnd(text: string, nominal: number, whole: string, which: string): number {
  const pct = PERCENT.exec(text.trim());
  if (pct) return nominal * (1 + Number(pct[1]) / 100);
  const parsed = parseSiNumber(text.trim(), '');
  if (parsed.ok) return parsed.value;
  // Accept a trailing unit letter too ("10uH"): the scenario's own validation checks it per field.
  const withUnit = /^(.*?)(?:V|A|H|F|Hz|Ω|ohm|s|W)$/.exec(text.trim());
  const again = withUnit ? parseSiNumber(withUnit[1]!, '') : parsed;
  if (again.ok) return again.value;
  throw new StudySpecError(`--vary "${whole}": expected ${which} as a number with an optional SI prefix (e.g. 4.7u) or a percentage of the nominal value (e.g. -20%), found "${text}"`);
}

export function parseTolerance(text: string, nominal: (path: string) => number | undefined): Tolerance {
  const m = TOLERANCE.exec(text.trim());
  if (!m) throw new StudySpecError(`--tolerance "${text}": expected PATH=±X% with an optional :uniform or :normal, e.g. transformer.leakageInductance=±20% or clamp.resistance=±5%:normal`);
  const path = m[1]!;
  if (nominal(path) === undefined) throw new StudySpecError(`--tolerance "${text}": expected a numeric scenario field, found no field ${path} in this scenario`);
  const fraction = Number(m[2]) / 100;
  if (!(fraction > 0 && fraction < 1)) throw new StudySpecError(`--tolerance "${text}": expected X between 0 and 100 (exclusive), found ${m[2]}`);
  return { path, fraction, distribution: (m[3] as Tolerance['distribution'] | undefined) ?? 'uniform' };
}

/** Values along a range, evenly spaced, ends included. */
export function rangeValues(r: VaryRange): number[] {
  if (r.steps === 1) return [r.from];
  return Array.from({ length: r.steps }, (_, i) => r.from + ((r.to - r.from) * i) / (r.steps - 1));
}
