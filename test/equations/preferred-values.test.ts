import { describe, it, expect } from 'vitest';
import {
  PREFERRED_VALUE_TOLERANCE,
  roundToSeries,
  seriesValues,
  stepInSeries,
  type PreferredSeries,
} from '../../src/equations/preferred-values.js';

// Source of the tables: IEC 60063:2015, "Preferred number series for resistors and capacitors".
// E12 and E24 tables from that standard; E96 from memory of the standard, and checked here
// against the property it has: round(10^(i/96), 2).

const IEC_E12 = [1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2];
const IEC_E24_ADDED_TO_E12 = [1.1, 1.3, 1.6, 2.0, 2.4, 3.0, 3.6, 4.3, 5.1, 6.2, 7.5, 9.1];
const ALL_SERIES: readonly PreferredSeries[] = ['E12', 'E24', 'E96'];

/** Significands as integers in hundredths, so set comparisons are exact. */
const hundredths = (values: readonly number[]): number[] => values.map((v) => Math.round(v * 100));

describe('seriesValues', () => {
  it('seriesValues(E12) is the IEC 60063 E12 table', () => {
    expect(seriesValues('E12')).toEqual(IEC_E12);
  });

  it('seriesValues(E24) is E12 plus the twelve values IEC 60063 adds, in ascending order (IEC 60063)', () => {
    const expected = [...IEC_E12, ...IEC_E24_ADDED_TO_E12].sort((a, b) => a - b);
    expect(seriesValues('E24')).toEqual(expected);
  });

  it('seriesValues(series) has 12, 24 and 96 strictly ascending values in [1, 10)', () => {
    for (const [series, count] of [['E12', 12], ['E24', 24], ['E96', 96]] as const) {
      const values = seriesValues(series);
      expect(values).toHaveLength(count);
      expect(values[0]).toBe(1);
      expect(values.every((v, i) => v < 10 && (i === 0 || v > (values[i - 1] ?? Infinity)))).toBe(true);
    }
  });

  it('seriesValues(E24) differs from round(10^(i/24), 1) exactly at 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 8.2 (IEC 60063: the E24 table is stored, not computed)', () => {
    const irregular = seriesValues('E24').filter((v, i) => Math.round(10 ** (i / 24) * 10) !== Math.round(v * 10));
    expect(irregular).toEqual([2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 8.2]);
  });

  it('seriesValues(E96) is round(10^(i/96), 2) for every i (IEC 60063, from memory)', () => {
    const computed = Array.from({ length: 96 }, (_, i) => Math.round(10 ** (i / 96) * 100));
    expect(hundredths(seriesValues('E96'))).toEqual(computed);
  });

  it('seriesValues(E12) is every other E24 value', () => {
    expect(seriesValues('E24').filter((_, i) => i % 2 === 0)).toEqual(seriesValues('E12'));
  });

  it('seriesValues(E96) is not a superset of E24: only 1.0, 1.1, 1.3, 1.5, 2.0, 7.5 are in both (IEC 60063)', () => {
    const e96 = new Set(hundredths(seriesValues('E96')));
    const shared = hundredths(seriesValues('E24')).filter((v) => e96.has(v));
    expect(shared).toEqual([100, 110, 130, 150, 200, 750]);
    // 1.2, 4.7 and 8.2 are the usual surprises: E96 has 1.21, 4.75 and 8.25 instead.
    expect(e96.has(120) || e96.has(470) || e96.has(820)).toBe(false);
  });

  it('seriesValues(unknown series) throws a RangeError naming series', () => {
    expect(() => seriesValues('E6' as PreferredSeries)).toThrow(RangeError);
    expect(() => seriesValues('E6' as PreferredSeries)).toThrow(/series/);
  });
});

/**
 * Preferred values built independently of the module (significand × 10^k, within floating error)
 * from decade `from` up to and including 10^(to + 1).
 */
function referenceLadder(series: PreferredSeries, from: number, to: number): number[] {
  const ladder: number[] = [];
  for (let k = from; k <= to; k++) for (const m of seriesValues(series)) ladder.push(m * 10 ** k);
  ladder.push(10 ** (to + 1));
  return ladder;
}

const relativelyEqual = (a: number, b: number, relative = 1e-12): boolean => Math.abs(a - b) <= Math.abs(b) * relative;

/** Deterministic pseudo-random numbers in [0, 1) (mulberry32), so failures reproduce. */
function seeded(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

describe('roundToSeries', () => {
  it('roundToSeries(4.7e-9, E12, up) is exactly 4.7e-9, and so is the product 4.7 × 1e-9 that is one ulp above it', () => {
    expect(roundToSeries(4.7e-9, 'E12', 'up')).toBe(4.7e-9);
    const product = 4.7 * 1e-9;
    expect(product).not.toBe(4.7e-9); // the floating-point case the guard exists for
    expect(roundToSeries(product, 'E12', 'up')).toBe(4.7e-9);
    expect(roundToSeries(product, 'E12', 'down')).toBe(4.7e-9);
  });

  it('roundToSeries at a decade boundary: 1e3 stays 1e3 up and down, 999.9 up is 1e3, 1000.1 down is 1e3', () => {
    expect(roundToSeries(1e3, 'E12', 'up')).toBe(1e3);
    expect(roundToSeries(1e3, 'E12', 'down')).toBe(1e3);
    expect(roundToSeries(999.9, 'E12', 'up')).toBe(1e3);
    expect(roundToSeries(999.9, 'E12', 'down')).toBe(820);
    expect(roundToSeries(1000.1, 'E12', 'down')).toBe(1e3);
    expect(roundToSeries(1000.1, 'E12', 'up')).toBe(1200);
    expect(roundToSeries(9.77, 'E96', 'up')).toBe(10);
    expect(roundToSeries(9.2e-6, 'E24', 'up')).toBe(1e-5);
    expect(roundToSeries(9.2e-6, 'E24', 'down')).toBe(9.1e-6);
  });

  it('roundToSeries(preferred value written as a decimal literal) returns that same double in every direction, decades 1e-15 to 1e12', () => {
    const failures: string[] = [];
    for (const series of ALL_SERIES) {
      const decimals = series === 'E96' ? 2 : 1;
      for (let k = -15; k <= 12; k++) {
        for (const m of seriesValues(series)) {
          const literal = Number(`${m.toFixed(decimals)}e${k}`);
          for (const direction of ['up', 'down', 'nearest'] as const) {
            const rounded = roundToSeries(literal, series, direction);
            if (rounded !== literal) failures.push(`roundToSeries(${literal}, ${series}, ${direction}) gave ${rounded}`);
          }
        }
      }
    }
    expect(failures).toEqual([]);
  });

  it('roundToSeries(value, series, nearest) is nearest by ratio: 1.098 goes to 1.2 in E12 although 1.0 is closer by difference', () => {
    expect(roundToSeries(1.098, 'E12', 'nearest')).toBe(1.2);
    expect(roundToSeries(1.09, 'E12', 'nearest')).toBe(1);
    expect(roundToSeries(5.2e3, 'E12', 'nearest')).toBe(5.6e3);
    expect(roundToSeries(6.1e-12, 'E12', 'nearest')).toBe(5.6e-12);
  });

  // Every decade from 1 mΩ to 10 MΩ and from 1 pF to 1000 µF: 1e-12 to 1e7 in SI units.
  it.each(ALL_SERIES)('roundToSeries(value, %s, up/down/nearest) from 1e-12 to 1e7: in the series, on the right side, with no preferred value in between', (series) => {
    const ladder = referenceLadder(series, -13, 8);
    const indexOf = (result: number): number => ladder.findIndex((v) => relativelyEqual(v, result));
    const random = seeded(60063);
    const inputs: number[] = [];
    for (let k = -12; k <= 6; k++) {
      for (const m of seriesValues(series)) {
        const preferred = m * 10 ** k;
        inputs.push(preferred, preferred * (1 + 1e-6), preferred * (1 - 1e-6));
      }
      for (let j = 0; j < 40; j++) inputs.push(10 ** (k + random()));
    }
    inputs.push(1e7);

    const failures: string[] = [];
    for (const value of inputs) {
      const up = roundToSeries(value, series, 'up');
      const down = roundToSeries(value, series, 'down');
      const nearest = roundToSeries(value, series, 'nearest');
      const iUp = indexOf(up);
      const iDown = indexOf(down);
      const context = `${series} value ${value}: down ${down}, up ${up}`;
      if (iUp < 0 || iDown < 0) failures.push(`${context}: a result is not a preferred value`);
      if (up < value * (1 - PREFERRED_VALUE_TOLERANCE) || down > value * (1 + PREFERRED_VALUE_TOLERANCE)) failures.push(`${context}: wrong side`);
      // No preferred value strictly between: the one below `up` is below value, the one above `down` is above it.
      const belowUp = ladder[iUp - 1] ?? 0;
      const aboveDown = ladder[iDown + 1] ?? Infinity;
      if (!(belowUp < value * (1 - 1e-12)) || !(aboveDown > value * (1 + 1e-12))) failures.push(`${context}: skipped a preferred value`);
      if (iUp !== iDown && iUp !== iDown + 1) failures.push(`${context}: not neighbours`);
      const nearestIsCloser = nearest === up
        ? up / value <= value / down * (1 + 1e-12)
        : nearest === down && value / down <= up / value * (1 + 1e-12);
      if (!nearestIsCloser) failures.push(`${context}: nearest ${nearest} is not the closer by ratio`);
    }
    expect(failures).toEqual([]);
  });

  it('roundToSeries works far outside component ranges: 1.5e-300 and 3e300 round within their own decade', () => {
    expect(roundToSeries(1.5e-300, 'E12', 'up')).toBe(1.5e-300);
    expect(roundToSeries(1.6e-300, 'E12', 'up')).toBe(1.8e-300);
    expect(roundToSeries(3e300, 'E24', 'down')).toBe(3e300);
    expect(roundToSeries(3.1e300, 'E24', 'down')).toBe(3e300);
    expect(roundToSeries(Number.MAX_VALUE, 'E24', 'down')).toBe(1.6e308);
  });

  it('roundToSeries throws a RangeError when the answer is beyond the doubles: 1.7e308 up in E12', () => {
    expect(() => roundToSeries(1.7e308, 'E12', 'up')).toThrow(RangeError);
    expect(() => roundToSeries(1e-310, 'E12', 'down')).toThrow(RangeError);
  });

  it.each([0, -1, Number.NaN, Number.POSITIVE_INFINITY, Number.NEGATIVE_INFINITY])('roundToSeries(%s, E12, up) throws a RangeError naming value', (bad) => {
    expect(() => roundToSeries(bad, 'E12', 'up')).toThrow(RangeError);
    expect(() => roundToSeries(bad, 'E12', 'up')).toThrow(/^value must be a positive finite number/);
  });

  it('roundToSeries with an unknown series or direction throws a RangeError naming it', () => {
    expect(() => roundToSeries(1, 'E48' as PreferredSeries, 'up')).toThrow(/series/);
    expect(() => roundToSeries(1, 'E12', 'sideways' as 'up')).toThrow(/direction/);
  });
});

describe('stepInSeries', () => {
  it('stepInSeries(8.2e3, E12, +1) is 10e3 and stepInSeries(1.0e3, E12, −1) is 820: across decade boundaries', () => {
    expect(stepInSeries(8.2e3, 'E12', 1)).toBe(10e3);
    expect(stepInSeries(1.0e3, 'E12', -1)).toBe(820);
    expect(stepInSeries(8.2e3, 'E12', 2)).toBe(12e3);
    expect(stepInSeries(9.76e-9, 'E96', 1)).toBe(1e-8);
    expect(stepInSeries(1e-8, 'E96', -1)).toBe(9.76e-9);
    expect(stepInSeries(9.1, 'E24', 1)).toBe(10);
  });

  it('stepInSeries(value, series, ±N) where N is the series length moves exactly one decade', () => {
    expect(stepInSeries(4.7e3, 'E12', 12)).toBe(47e3);
    expect(stepInSeries(4.7e3, 'E12', -12)).toBe(470);
    expect(stepInSeries(3.3e-12, 'E24', 48)).toBe(3.3e-10);
    expect(stepInSeries(1.21, 'E96', -96 * 3)).toBe(1.21e-3);
  });

  it('stepInSeries(not a preferred value, E12, ±1) lands on its neighbour, ±2 one further', () => {
    expect(stepInSeries(14.3e3, 'E12', 1)).toBe(15e3);
    expect(stepInSeries(14.3e3, 'E12', -1)).toBe(12e3);
    expect(stepInSeries(14.3e3, 'E12', 2)).toBe(18e3);
    expect(stepInSeries(14.3e3, 'E12', -2)).toBe(10e3);
    expect(stepInSeries(14.3e3, 'E12', 0)).toBe(15e3);
  });

  it('stepInSeries(4.7 × 1e-9, E12, +1) treats the one-ulp product as 4.7 nF and gives 5.6 nF', () => {
    expect(stepInSeries(4.7 * 1e-9, 'E12', 1)).toBe(5.6e-9);
    expect(stepInSeries(4.7 * 1e-9, 'E12', -1)).toBe(3.9e-9);
  });

  it('stepInSeries there and back returns the start, and +1 agrees with the next value in the table, for every value of every series', () => {
    const failures: string[] = [];
    for (const series of ALL_SERIES) {
      const values = seriesValues(series);
      const ladder = referenceLadder(series, -4, 4);
      for (let i = 0; i < ladder.length - 1; i++) {
        const start = roundToSeries(ladder[i] ?? NaN, series, 'nearest');
        const next = stepInSeries(start, series, 1);
        if (!relativelyEqual(next, ladder[i + 1] ?? NaN)) failures.push(`${series} ${start} + 1 gave ${next}`);
        for (const n of [1, 5, values.length + 3]) {
          const back = stepInSeries(stepInSeries(start, series, n), series, -n);
          if (back !== start) failures.push(`${series} ${start} +${n} −${n} gave ${back}`);
        }
      }
    }
    expect(failures).toEqual([]);
  });

  it.each([1.5, Number.NaN, Number.POSITIVE_INFINITY])('stepInSeries(1e3, E12, %s) throws a RangeError naming steps', (bad) => {
    expect(() => stepInSeries(1e3, 'E12', bad)).toThrow(/^steps must be an integer/);
  });

  it('stepInSeries(non-positive value) throws a RangeError naming value', () => {
    expect(() => stepInSeries(0, 'E12', 1)).toThrow(RangeError);
    expect(() => stepInSeries(-820, 'E12', 1)).toThrow(/^value must be/);
  });
});
