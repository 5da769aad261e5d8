// Values as the server reads them (src/circuit/si-number.ts, README "Scenario files"): a number,
// optionally an SI prefix, optionally the field's unit. A copy of the server's rules, kept in its
// own module so a browser test can hold it against the original.

const PREFIX_EXPONENT = { f: -15, p: -12, n: -9, u: -6, 'µ': -6, 'μ': -6, m: -3, k: 3, M: 6, G: 9 };
/** Spellings accepted per unit symbol, as the server's table. */
export const UNIT_SPELLINGS = { V: ['V'], A: ['A'], H: ['H'], F: ['F'], Hz: ['Hz'], s: ['s'], W: ['W'], 'A/s': ['A/s'], 'Ω': ['Ω', 'ohm', 'Ohm', 'R'] };

/**
 * The value of `text` when it is a number with an optional prefix and one of `units` (none: a
 * plain ratio), else undefined. Used to preview and to label; the server decides.
 * @param {unknown} text
 * @param {string[]} units
 */
export function parseSi(text, units) {
  const m = /^\s*([+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?)\s*(.*?)\s*$/.exec(String(text));
  if (!m) return undefined;
  const spellings = units.flatMap((u) => UNIT_SPELLINGS[u] ?? []);
  const isUnit = (suffix) => suffix === '' || spellings.includes(suffix);
  let exponent;
  if (isUnit(m[2])) exponent = 0;
  else {
    for (const [prefix, e] of Object.entries(PREFIX_EXPONENT)) {
      if (m[2].startsWith(prefix) && isUnit(m[2].slice(prefix.length))) { exponent = e; break; }
    }
  }
  if (exponent === undefined) return undefined;
  const mantissa = Number(m[1]);
  // Small prefixes divide, so "25u" is the double nearest 25e-6, as on the server.
  const value = exponent < 0 ? mantissa / 10 ** -exponent : mantissa * 10 ** exponent;
  return Number.isFinite(value) ? value : undefined;
}
