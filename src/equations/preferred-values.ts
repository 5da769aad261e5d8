// Preferred-number series for resistors and capacitors. Source: IEC 60063:2015, "Preferred number
// series for resistors and capacitors". The E12 and E24 tables are from the standard's tables (from
// memory); the E96 table is from memory of the standard and its
// test checks it against round(10^(i/96), 2), which the references state holds exactly for E96.
//
// The tables are stored, not computed: eight E24 values (2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 8.2)
// differ from the rounded 10^(i/24), and E12 is every other E24 value only because the standard says
// so. E96 is not a superset of E24 (only 1.0, 1.1, 1.3, 1.5, 2.0 and 7.5 are in both).

export type PreferredSeries = 'E12' | 'E24' | 'E96';
export type RoundingDirection = 'up' | 'down' | 'nearest';

const E12: readonly number[] = Object.freeze([1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2]);

const E24: readonly number[] = Object.freeze([
  1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0,
  3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1,
]);

const E96: readonly number[] = Object.freeze([
  1.00, 1.02, 1.05, 1.07, 1.10, 1.13, 1.15, 1.18, 1.21, 1.24, 1.27, 1.30,
  1.33, 1.37, 1.40, 1.43, 1.47, 1.50, 1.54, 1.58, 1.62, 1.65, 1.69, 1.74,
  1.78, 1.82, 1.87, 1.91, 1.96, 2.00, 2.05, 2.10, 2.15, 2.21, 2.26, 2.32,
  2.37, 2.43, 2.49, 2.55, 2.61, 2.67, 2.74, 2.80, 2.87, 2.94, 3.01, 3.09,
  3.16, 3.24, 3.32, 3.40, 3.48, 3.57, 3.65, 3.74, 3.83, 3.92, 4.02, 4.12,
  4.22, 4.32, 4.42, 4.53, 4.64, 4.75, 4.87, 4.99, 5.11, 5.23, 5.36, 5.49,
  5.62, 5.76, 5.90, 6.04, 6.19, 6.34, 6.49, 6.65, 6.81, 6.98, 7.15, 7.32,
  7.50, 7.68, 7.87, 8.06, 8.25, 8.45, 8.66, 8.87, 9.09, 9.31, 9.53, 9.76,
]);

/**
 * Each series as integer significands (12, 47, 976, …) and the number of decimals they carry, so a
 * preferred value can be built as the decimal string "47e-10" and parsed: the parse is correctly
 * rounded, so 4.7 nF comes out as the very double the literal 4.7e-9 denotes, in any decade.
 * Multiplying 4.7 by 1e-9 instead gives 4.700000000000001e-9.
 */
const SIGNIFICANDS: Readonly<Record<PreferredSeries, { digits: readonly number[]; decimals: number }>> = {
  E12: { digits: E12.map((m) => Math.round(m * 10)), decimals: 1 },
  E24: { digits: E24.map((m) => Math.round(m * 10)), decimals: 1 },
  E96: { digits: E96.map((m) => Math.round(m * 100)), decimals: 2 },
};

const TABLES: Readonly<Record<PreferredSeries, readonly number[]>> = { E12, E24, E96 };

/**
 * A value this close (relatively) to a preferred value is taken as that value. Designed values come
 * out of arithmetic (4.7 × 1e-9 is one ulp above 4.7 nF) and must not be pushed to the next step;
 * 1e-9 is far below the closest spacing of neighbouring values (about 2.4 % in E96).
 */
export const PREFERRED_VALUE_TOLERANCE = 1e-9;

/** Smallest positive normal double: below it a double cannot tell neighbouring preferred values apart. */
const SMALLEST_NORMAL = 2.2250738585072014e-308;

/** The series' significands in [1, 10), in ascending order, as in IEC 60063. */
export function seriesValues(series: PreferredSeries): readonly number[] {
  return tableOf(series);
}

/**
 * The preferred value of `series` next to `value` in `direction`, in the value's own decade (or the
 * next one: 999.9 up is 1000). 'nearest' is nearest by ratio, not by difference, because the series
 * are geometric: between 1.0 and 1.2 the crossover is √1.2 ≈ 1.095, so 1.098 rounds to 1.2. Values
 * within PREFERRED_VALUE_TOLERANCE of a preferred value return that value in every direction.
 * Throws a RangeError for a non-positive or non-finite value, and when the answer is not a normal
 * double (above about 1.8e308 or below about 2.2e-308).
 */
export function roundToSeries(value: number, series: PreferredSeries, direction: RoundingDirection): number {
  requirePositiveFinite(value, 'value');
  significandsOf(series);
  if (direction !== 'up' && direction !== 'down' && direction !== 'nearest') {
    throw new RangeError(`direction must be 'up', 'down' or 'nearest', got ${String(direction)}`);
  }
  if (direction === 'up') return representable(preferredAt(series, indexAtOrAbove(value, series)), value, series);
  if (direction === 'down') return representable(preferredAt(series, indexAtOrBelow(value, series)), value, series);
  const below = preferredAt(series, indexAtOrBelow(value, series));
  const above = preferredAt(series, indexAtOrAbove(value, series));
  if (below === above) return representable(below, value, series);
  // Ties (equal ratios) go up, as rounding half up does.
  return representable(value / below < above / value ? below : above, value, series);
}

/**
 * The preferred value `steps` places away from `value` in `series`, across decades (8.2k + 1 in E12
 * is 10k, 1.0k − 1 is 820). A value that is not preferred counts from where it lies: + 1 is the next
 * preferred value above it, − 1 the next below, 0 the nearest. Throws a RangeError for a
 * non-positive or non-finite value, a non-integer step count, or an answer outside the normal doubles.
 */
export function stepInSeries(value: number, series: PreferredSeries, steps: number): number {
  requirePositiveFinite(value, 'value');
  significandsOf(series);
  if (!Number.isSafeInteger(steps)) throw new RangeError(`steps must be an integer, got ${steps}`);
  if (steps === 0) return roundToSeries(value, series, 'nearest');
  const start = steps > 0 ? indexAtOrAbove(value, series) : indexAtOrBelow(value, series);
  const startsOnValue = isSameValue(preferredAt(series, start), value);
  // From a preferred value the first step leaves it; from between two values the first step only
  // reaches the neighbour in that direction.
  const index = startsOnValue ? start + steps : start + steps - Math.sign(steps);
  return representable(preferredAt(series, index), value, series);
}

function tableOf(series: PreferredSeries): readonly number[] {
  const table = Object.hasOwn(TABLES, series) ? TABLES[series] : undefined;
  if (table === undefined) throw new RangeError(`series must be 'E12', 'E24' or 'E96', got ${String(series)}`);
  return table;
}

function significandsOf(series: PreferredSeries): { digits: readonly number[]; decimals: number } {
  tableOf(series);
  return SIGNIFICANDS[series];
}

/**
 * The preferred value with global index `index`: index 0 is 1.0, index n·N is 10^n for a series of
 * N values per decade, negative indexes go below 1.
 */
function preferredAt(series: PreferredSeries, index: number): number {
  const { digits, decimals } = significandsOf(series);
  const perDecade = digits.length;
  const decade = Math.floor(index / perDecade);
  const significand = digits[index - decade * perDecade];
  if (significand === undefined) throw new Error(`internal: no significand at ${index} in ${series}`);
  return Number(`${significand}e${decade - decimals}`);
}

function isSameValue(preferred: number, value: number): boolean {
  return Math.abs(preferred - value) <= value * PREFERRED_VALUE_TOLERANCE;
}

/** The search window: log10 can be off near a decade boundary, so take a decade either side. */
function searchWindow(value: number, series: PreferredSeries): { low: number; high: number } {
  const perDecade = significandsOf(series).digits.length;
  const decade = Math.floor(Math.log10(value));
  return { low: (decade - 1) * perDecade, high: (decade + 2) * perDecade };
}

/** Smallest index whose preferred value is ≥ value (or equal within tolerance). */
function indexAtOrAbove(value: number, series: PreferredSeries): number {
  const slack = value * PREFERRED_VALUE_TOLERANCE;
  let { low, high } = searchWindow(value, series);
  while (low < high) {
    const middle = Math.floor((low + high) / 2);
    // Written as a difference so that value + slack cannot overflow next to Number.MAX_VALUE.
    if (value - preferredAt(series, middle) <= slack) high = middle;
    else low = middle + 1;
  }
  return low;
}

/** Largest index whose preferred value is ≤ value (or equal within tolerance). */
function indexAtOrBelow(value: number, series: PreferredSeries): number {
  const slack = value * PREFERRED_VALUE_TOLERANCE;
  let { low, high } = searchWindow(value, series);
  while (low < high) {
    const middle = Math.ceil((low + high) / 2);
    if (preferredAt(series, middle) - value <= slack) low = middle;
    else high = middle - 1;
  }
  return low;
}

function representable(result: number, value: number, series: PreferredSeries): number {
  if (!Number.isFinite(result) || result < SMALLEST_NORMAL) {
    throw new RangeError(`value ${value} has no ${series} neighbour that is a normal double (about 2.2e-308 to 1.8e308)`);
  }
  return result;
}

function requirePositiveFinite(input: number, name: string): void {
  if (typeof input !== 'number' || !Number.isFinite(input) || input <= 0) {
    throw new RangeError(`${name} must be a positive finite number, got ${String(input)}`);
  }
}
