// The words of `sweep`: --vary PATH=FROM..TO[:STEPS] and --tolerance PATH=±X%[:uniform|:normal].
// Values are SI numbers (with prefixes) or percentages of the nominal value.

import { parseSiNumber } from '../circuit/si-number.js';
import { fieldAt, SI_UNITS, type SiUnit } from '../contract/field-metadata.js';

export interface VaryRange { path: string; from: number; to: number; steps: number }
export interface Tolerance { path: string; fraction: number; distribution: 'uniform' | 'normal' }

/** The study request's words, as flags on the command line and fields of an HTTP body. */
export type StudyFlag = 'vary' | 'corners' | 'samples' | 'tolerance' | 'seed';

/** A bad study word: `flag` names it, `detail` says what was expected and found; the message is the CLI's "--flag …". */
export class StudySpecError extends Error {
  constructor(readonly flag: StudyFlag, readonly detail: string) { super(`--${flag}${detail.startsWith('"') ? ' ' : ': '}${detail}`); }
}

const VARY_HEAD = /^([A-Za-z][\w.]*)=([\s\S]*)$/;
const STEPS = /^\d+$/;
const TOLERANCE = /^([A-Za-z][\w.]*)=(?:±|\+-|\+\/-)(\d+(?:\.\d+)?|\.\d+)%(?::(uniform|normal))?$/;
const PERCENT = /^([+-]?\d+(?:\.\d+)?|[+-]?\.\d+)%$/;

/** Default number of points along one --vary range without :STEPS. */
export const DEFAULT_STEPS = 5;

const VARY_SHAPE = 'expected PATH=FROM..TO[:STEPS], e.g. transformer.leakageInductance=-20%..+20%:9 or clamp.resistance=10k..22k:5';

/**
 * Parses one --vary. `nominal(path)` gives the scenario's value for percentages and tells
 * whether the path exists (undefined: no such numeric field). The ends are read in the field's
 * unit, so "1uV..2uA" on an inductance is refused rather than read as 1 µ..2 µ.
 */
export function parseVary(text: string, nominal: (path: string) => number | undefined): VaryRange {
  const head = VARY_HEAD.exec(text.trim());
  if (!head) throw new StudySpecError('vary', `"${text}": ${VARY_SHAPE}`);
  const path = head[1]!;
  // The step count is whatever follows the last colon, so a bad count is reported as a count.
  const colon = head[2]!.lastIndexOf(':');
  const range = colon >= 0 ? head[2]!.slice(0, colon) : head[2]!;
  const stepsText = colon >= 0 ? head[2]!.slice(colon + 1).trim() : undefined;
  const ends = range.split('..');
  if (ends.length !== 2 || ends.some((e) => e.trim() === '') || /\.\.\./.test(range)) {
    throw new StudySpecError('vary', `"${text}": ${VARY_SHAPE} (FROM and TO separated by exactly two dots), found "${range}"`);
  }
  const unit = numericFieldUnit(path, 'vary', text);
  const base = nominal(path);
  if (base === undefined) throw new StudySpecError('vary', `"${text}": expected a numeric scenario field, found no field ${path} in this scenario`);
  const from = parseEnd(ends[0]!, base, text, 'FROM', path, unit);
  const to = parseEnd(ends[1]!, base, text, 'TO', path, unit);
  // "-20%..+20" (a % forgotten) would sweep to 20 H: an end far from the nominal value is refused.
  for (const [which, value] of [['FROM', from], ['TO', to]] as const) {
    if (base !== 0 && !(Math.abs(value / base) >= 1e-3 && Math.abs(value / base) <= 1e3)) {
      throw new StudySpecError('vary', `"${text}": expected ${which} within a factor of 1000 of the nominal ${base} (a percentage needs its %), found ${value}`);
    }
  }
  if (stepsText !== undefined && !STEPS.test(stepsText)) {
    throw new StudySpecError('vary', `"${text}": expected STEPS after the colon as a whole number from 2 to 1000, found "${stepsText}"`);
  }
  const steps = stepsText === undefined ? (from === to ? 1 : DEFAULT_STEPS) : Number(stepsText);
  if (!(steps >= 1 && steps <= 1000) || (steps === 1 && from !== to)) {
    throw new StudySpecError('vary', `"${text}": expected STEPS from 2 to 1000 for a range (1 only when FROM equals TO), found ${stepsText}`);
  }
  return { path, from, to, steps };
}

/** The unit of a field a study may vary: a number or a curve of the field table (a curve is varied by its value at 0 V). */
function numericFieldUnit(path: string, flag: StudyFlag, text: string): SiUnit {
  const field = fieldAt(path);
  if (field && (field.kind === 'number' || field.kind === 'curve')) return field.unit;
  throw new StudySpecError(flag, `"${text}": expected a numeric scenario field, found ${field ? `${path}, a ${field.kind} field` : `no field ${path}`}`);
}

/** The unit a text spells when it is not the field's ("1uF" for an inductance: F), so the message says what was found. */
function foundUnitOf(text: string, unit: SiUnit): SiUnit | undefined {
  if (parseSiNumber(text, unit).ok) return undefined;
  return SI_UNITS.find((candidate) => candidate !== unit && candidate !== '' && parseSiNumber(text, candidate).ok);
}

function parseEnd(text: string, nominal: number, whole: string, which: string, path: string, unit: SiUnit): number {
  const pct = PERCENT.exec(text.trim());
  if (pct) return nominal * (1 + Number(pct[1]) / 100);
  const parsed = parseSiNumber(text.trim(), unit);
  if (parsed.ok) return parsed.value;
  const other = foundUnitOf(text.trim(), unit);
  const note = other === undefined ? '' : ` (a value in ${other}; ${path} is ${unit === '' ? 'a plain number, no unit' : `in ${unit}`})`;
  throw new StudySpecError('vary', `"${whole}": expected ${which} as ${parsed.expected}, or a percentage of the nominal value (e.g. -20%), found "${text.trim()}"${note}`);
}

export function parseTolerance(text: string, nominal: (path: string) => number | undefined): Tolerance {
  const m = TOLERANCE.exec(text.trim());
  if (!m) throw new StudySpecError('tolerance', `"${text}": expected PATH=±X% with an optional :uniform or :normal, e.g. transformer.leakageInductance=±20% or clamp.resistance=±5%:normal${toleranceValueNote(text)}`);
  const path = m[1]!;
  numericFieldUnit(path, 'tolerance', text);
  if (nominal(path) === undefined) throw new StudySpecError('tolerance', `"${text}": expected a numeric scenario field, found no field ${path} in this scenario`);
  const fraction = Number(m[2]) / 100;
  if (!(fraction > 0 && fraction < 1)) throw new StudySpecError('tolerance', `"${text}": expected X between 0 and 100 (exclusive), found ${m[2]}`);
  return { path, fraction, distribution: (m[3] as Tolerance['distribution'] | undefined) ?? 'uniform' };
}

/**
 * A tolerance is a share of the nominal value: a value with a unit ("±5uF") is named with the
 * field's unit, so a wrong unit is seen as well as the missing %.
 */
function toleranceValueNote(text: string): string {
  const head = /^([A-Za-z][\w.]*)=(?:±|\+-|\+\/-)([\s\S]+)$/.exec(text.trim());
  if (!head) return '';
  const field = fieldAt(head[1]!);
  if (!field || !(field.kind === 'number' || field.kind === 'curve')) return '';
  const value = head[2]!.trim();
  const inFieldUnit = parseSiNumber(value, field.unit).ok;
  const other = foundUnitOf(value, field.unit);
  if (other === undefined && !inFieldUnit) return '';
  const found = other === undefined ? `"${value}"` : `"${value}" (a value in ${other})`;
  return `; found ${found}: ${head[1]} is ${field.unit === '' ? 'a plain number, no unit' : `in ${field.unit}`}, and a tolerance is a percentage of it`;
}

/** Values along a range, evenly spaced, ends included. */
export function rangeValues(r: VaryRange): number[] {
  if (r.steps === 1) return [r.from];
  return Array.from({ length: r.steps }, (_, i) => r.from + ((r.to - r.from) * i) / (r.steps - 1));
}
