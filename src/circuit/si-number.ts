// Values in scenario files, flags and form fields: a plain number in SI units, or a string with
// an SI prefix and optionally the field's unit ("2.2u", "2.2uH", "150k", "100kHz").

/** Powers of ten by prefix; applied by division for the small ones so "25u" is the double nearest 25e-6. */
const PREFIX_EXPONENT: Readonly<Record<string, number>> = {
  f: -15, p: -12, n: -9, u: -6, 'µ': -6, 'μ': -6, m: -3,
  k: 3, M: 6, G: 9,
};
const scaleByPowerOfTen = (x: number, exponent: number): number => (exponent < 0 ? x / 10 ** -exponent : x * 10 ** exponent);

/** Spellings accepted for each unit symbol (the first is the canonical one). */
const UNIT_SPELLINGS: Readonly<Record<string, readonly string[]>> = {
  V: ['V'], A: ['A'], H: ['H'], F: ['F'], Hz: ['Hz'], s: ['s'], W: ['W'], 'A/s': ['A/s'],
  'Ω': ['Ω', 'ohm', 'Ohm', 'R'],
};

// Anchored at both ends with nothing optional before the suffix, so a failed match cannot try the
// string's positions against each other: a pattern with `\s*` on both sides of a lazy group took
// time growing with the square of the length (a 255 kB run of spaces took 100 s).
const NUMBER_PART = /^([+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?)([\s\S]*)$/;

/** Longest text accepted for a number: "-1.23456789012345e-12 MΩ" needs 25; the rest is slack. */
export const MAX_NUMBER_TEXT_LENGTH = 64;

export type ParsedNumber = { ok: true; value: number } | { ok: false; expected: string };

/** The mantissa text and the suffix after it, whitespace around either removed; in linear time. */
export function splitNumberText(text: string): { mantissa: string; suffix: string } | undefined {
  const match = NUMBER_PART.exec(text.trim());
  if (!match) return undefined;
  return { mantissa: match[1]!, suffix: match[2]!.trimStart() };
}

/**
 * Parses a number or prefixed string. `unit` is the field's unit symbol ('' for a ratio): a trailing
 * unit must be that one, so "2.2uF" given for an inductance is an error rather than 2.2 µH.
 */
export function parseSiNumber(input: unknown, unit: string): ParsedNumber {
  const expected = unit === ''
    ? 'a number'
    : `a number in ${unit} or a string with an SI prefix such as "4.7m" or "4.7m${unit}"`;
  if (typeof input === 'number') {
    return Number.isFinite(input) ? { ok: true, value: input } : { ok: false, expected };
  }
  if (typeof input !== 'string') return { ok: false, expected };
  if (input.length > MAX_NUMBER_TEXT_LENGTH) return { ok: false, expected: `${expected}, at most ${MAX_NUMBER_TEXT_LENGTH} characters long` };
  const parts = splitNumberText(input);
  if (!parts) return { ok: false, expected };
  const mantissa = Number(parts.mantissa);
  const suffix = parts.suffix;
  const exponent = suffixExponent(suffix, unit);
  if (exponent === undefined || !Number.isFinite(mantissa)) return { ok: false, expected };
  const value = scaleByPowerOfTen(mantissa, exponent);
  return Number.isFinite(value) ? { ok: true, value } : { ok: false, expected };
}

function suffixExponent(suffix: string, unit: string): number | undefined {
  const spellings = UNIT_SPELLINGS[unit] ?? [];
  const isUnit = (s: string): boolean => s === '' || spellings.includes(s);
  if (isUnit(suffix)) return 0;
  for (const [prefix, exponent] of Object.entries(PREFIX_EXPONENT)) {
    if (suffix.startsWith(prefix) && isUnit(suffix.slice(prefix.length))) return exponent;
  }
  return undefined;
}

/** Formats a value with an SI prefix and unit for people, e.g. 2.2e-6, 'H' → "2.2 µH". */
export function formatSi(value: number, unit: string, significantDigits = 4): string {
  if (!Number.isFinite(value)) return `${value} ${unit}`.trim();
  if (value === 0) return `0 ${unit}`.trim();
  const prefixes: Array<[number, string]> = [
    [1e9, 'G'], [1e6, 'M'], [1e3, 'k'], [1, ''], [1e-3, 'm'], [1e-6, 'µ'], [1e-9, 'n'], [1e-12, 'p'], [1e-15, 'f'],
  ];
  const magnitude = Math.abs(value);
  const [scale, prefix] = prefixes.find(([s]) => magnitude >= s * 0.9995) ?? [1e-15, 'f'];
  const scaled = Number((value / scale).toPrecision(significantDigits));
  return `${scaled} ${prefix}${unit}`.trim();
}
