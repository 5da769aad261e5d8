import { describe, it, expect } from 'vitest';
import { formatSi, MAX_NUMBER_TEXT_LENGTH, parseSiNumber, splitNumberText } from '../../src/circuit/si-number.js';

/** The parsed value, failing the test with the parser's own words if it was rejected. */
function valueOf(input: unknown, unit: string): number {
  const parsed = parseSiNumber(input, unit);
  if (!parsed.ok) throw new Error(`parseSiNumber(${JSON.stringify(input)}, ${JSON.stringify(unit)}) rejected it: expected ${parsed.expected}`);
  return parsed.value;
}

/** Relative closeness, for values from 1e-15 to 1e9 where toBeCloseTo's absolute digits do not fit. */
function expectRelativelyClose(actual: number, expected: number, relative = 1e-12): void {
  expect(Math.abs(actual - expected)).toBeLessThanOrEqual(Math.abs(expected) * relative);
}

describe('parseSiNumber', () => {
  it('parseSiNumber(number) returns finite plain numbers unchanged, including 0 and negatives', () => {
    expect(parseSiNumber(60, 'V')).toEqual({ ok: true, value: 60 });
    expect(parseSiNumber(0, 'Ω')).toEqual({ ok: true, value: 0 });
    expect(parseSiNumber(-3.5, 'A')).toEqual({ ok: true, value: -3.5 });
    expect(parseSiNumber(2.2e-6, 'H')).toEqual({ ok: true, value: 2.2e-6 });
  });

  it('parseSiNumber(string without prefix) reads plain, signed and exponent notation', () => {
    expect(valueOf('0.15', 'Ω')).toBe(0.15);
    expect(valueOf('  12  ', 'V')).toBe(12);
    expect(valueOf('-0.1', 'Ω')).toBe(-0.1);
    expect(valueOf('.5', '')).toBe(0.5);
    expect(valueOf('1e3', 'Hz')).toBe(1000);
    expect(valueOf('2.5E-3', 's')).toBe(2.5e-3);
  });

  it.each([
    ['2.2u', 'H', 2.2e-6],
    ['2.2uH', 'H', 2.2e-6],
    ['2.2 uH', 'H', 2.2e-6],
    ['150k', 'Ω', 150e3],
    ['470p', 'F', 470e-12],
    ['470pF', 'F', 470e-12],
    ['4.7n', 'F', 4.7e-9],
    ['1.2m', 'H', 1.2e-3],
    ['100kHz', 'Hz', 100e3],
    ['100k', 'Hz', 100e3],
    ['4.7kΩ', 'Ω', 4.7e3],
    ['4.7kohm', 'Ω', 4.7e3],
    ['350m', 'A', 0.35],
    ['350mA', 'A', 0.35],
    ['1G', 'Hz', 1e9],
    ['10f', 'F', 10e-15],
    ['12V', 'V', 12],
    ['50m', '', 0.05],
  ])('parseSiNumber(%j, %j) is %d', (input, unit, expected) => {
    expectRelativelyClose(valueOf(input, unit), expected);
  });

  it('parseSiNumber distinguishes "1M" (mega) from "1m" (milli)', () => {
    expect(valueOf('1M', 'Ω')).toBe(1e6);
    expect(valueOf('1m', 'Ω')).toBe(1e-3);
    expect(valueOf('1MHz', 'Hz')).toBe(1e6);
    expect(valueOf('1mH', 'H')).toBe(1e-3);
  });

  it('parseSiNumber accepts micro as "u", micro sign "µ" (U+00B5) and Greek mu "μ" (U+03BC) alike', () => {
    const viaU = valueOf('2.2u', 'H');
    expectRelativelyClose(viaU, 2.2e-6);
    expect(valueOf('2.2\u00b5', 'H')).toBe(viaU);
    expect(valueOf('2.2\u00b5H', 'H')).toBe(viaU);
    expect(valueOf('2.2\u03bcH', 'H')).toBe(viaU);
  });

  it('parseSiNumber rejects a unit that is not the field\'s own ("2.2uF" for H, "100kV" for Hz)', () => {
    const wrong = parseSiNumber('2.2uF', 'H');
    expect(wrong.ok).toBe(false);
    if (!wrong.ok) expect(wrong.expected).toContain('H');
    expect(parseSiNumber('100kV', 'Hz').ok).toBe(false);
    expect(parseSiNumber('2.2H', 'F').ok).toBe(false);
    // A ratio has no unit at all.
    expect(parseSiNumber('0.5V', '').ok).toBe(false);
  });

  it('parseSiNumber rejects an unknown prefix or a doubled one ("2.2x", "1mm", "1kk")', () => {
    expect(parseSiNumber('2.2x', 'H').ok).toBe(false);
    expect(parseSiNumber('1mm', 'H').ok).toBe(false);
    expect(parseSiNumber('1kk', 'Ω').ok).toBe(false);
  });

  it.each([
    ['abc'], ['fast'], ['1.2.3'], ['0x10'], ['u2.2'], ['1e'], ['--1'], ['1 2'],
  ])('parseSiNumber(%j) rejects garbage text', (input) => {
    const parsed = parseSiNumber(input, 'H');
    expect(parsed).toEqual({ ok: false, expected: expect.stringContaining('a number') });
  });

  it('parseSiNumber rejects NaN and ±Infinity, as numbers and as text, and overflowing exponents', () => {
    for (const input of [Number.NaN, Number.POSITIVE_INFINITY, Number.NEGATIVE_INFINITY, 'NaN', 'Infinity', '-Infinity', '1e400', '1e400k']) {
      expect(parseSiNumber(input, 'V').ok, `input ${String(input)}`).toBe(false);
    }
  });

  it('parseSiNumber rejects the empty string, blanks, a bare prefix and a bare unit', () => {
    for (const input of ['', '   ', 'k', 'uH', 'H']) {
      expect(parseSiNumber(input, 'H').ok, `input ${JSON.stringify(input)}`).toBe(false);
    }
  });

  it('parseSiNumber rejects non-number, non-string values (null, undefined, boolean, list, object)', () => {
    for (const input of [null, undefined, true, [1], { value: 1 }]) {
      expect(parseSiNumber(input, 'V').ok, `input ${JSON.stringify(input)}`).toBe(false);
    }
  });

  it('parseSiNumber describes what it expected, with the unit for a unit field and without for a ratio', () => {
    expect(parseSiNumber('x', 'H')).toEqual({ ok: false, expected: 'a number in H or a string with an SI prefix such as "4.7m" or "4.7mH"' });
    expect(parseSiNumber('x', '')).toEqual({ ok: false, expected: 'a number' });
  });
});

describe('formatSi', () => {
  it('formatSi picks the prefix and writes the unit after a space', () => {
    expect(formatSi(2.2e-6, 'H')).toBe('2.2 µH');
    expect(formatSi(150e3, 'Ω')).toBe('150 kΩ');
    expect(formatSi(470e-12, 'F')).toBe('470 pF');
    expect(formatSi(1e6, 'Hz')).toBe('1 MHz');
    expect(formatSi(-31.21, 'V')).toBe('-31.21 V');
    expect(formatSi(0, 'W')).toBe('0 W');
  });

  it('formatSi rounds to the requested significant digits and moves up a prefix when rounding reaches 1000', () => {
    expect(formatSi(181.21458, 'V')).toBe('181.2 V');
    expect(formatSi(181.21458, 'V', 6)).toBe('181.215 V');
    expect(formatSi(999.97, 'V')).toBe('1 kV');
  });

  it('formatSi writes non-finite values without a prefix', () => {
    expect(formatSi(Number.POSITIVE_INFINITY, 'V')).toBe('Infinity V');
    expect(formatSi(Number.NaN, 'A')).toBe('NaN A');
  });

  it.each([
    [2.2e-6, 'H'], [150e3, 'Ω'], [470e-12, 'F'], [4.7e-9, 'F'], [1.2e-3, 'H'],
    [100e3, 'Hz'], [1e6, 'Ω'], [12, 'V'], [-31.21, 'V'], [0.35, 'A'], [0, 'V'], [0.25, ''],
  ])('parseSiNumber(formatSi(%d, %j)) gives the value back', (value, unit) => {
    const text = formatSi(value, unit);
    expectRelativelyClose(valueOf(text, unit), value);
  });
});

describe('number text of any length', () => {
  // The shapes that made the old pattern quadratic (a run of spaces inside the suffix: 1.2 s at
  // 32 kB, growing fourfold per doubling), and others near them. 255 kB is just under the HTTP body limit.
  const long = 255 * 1024;
  const hostile = ['1u' + ' '.repeat(long) + 'H', '1 u ' + ' '.repeat(long) + 'x\n', ' '.repeat(long), '1'.repeat(long) + '\n!', '1' + ' '.repeat(long) + 'u' + ' '.repeat(long) + 'H!'];

  it('splitNumberText answers a 255 kB text within a second (linear time; the old pattern took 100 s)', () => {
    for (const text of hostile) {
      const started = performance.now();
      splitNumberText(text);
      // Generous slack for a loaded machine: linear time is about a millisecond here.
      expect(performance.now() - started, JSON.stringify(text.slice(0, 8))).toBeLessThan(1000);
    }
  });

  it('splitNumberText still separates mantissa and suffix, whitespace between them allowed', () => {
    expect(splitNumberText('  2.2 uH ')).toEqual({ mantissa: '2.2', suffix: 'uH' });
    expect(splitNumberText('1e3')).toEqual({ mantissa: '1e3', suffix: '' });
    expect(splitNumberText('1.\n5')).toEqual({ mantissa: '1.', suffix: '5' });
    expect(splitNumberText('u1')).toBeUndefined();
  });

  it(`parseSiNumber refuses a text over ${MAX_NUMBER_TEXT_LENGTH} characters and says so`, () => {
    const parsed = parseSiNumber(`1${' '.repeat(MAX_NUMBER_TEXT_LENGTH)}`, 'H');
    expect(parsed.ok).toBe(false);
    if (!parsed.ok) expect(parsed.expected).toMatch(new RegExp(`at most ${MAX_NUMBER_TEXT_LENGTH} characters`));
    expect(valueOf(`${'0'.repeat(MAX_NUMBER_TEXT_LENGTH - 3)}1uH`, 'H')).toBeCloseTo(1e-6, 18);
  });
});
