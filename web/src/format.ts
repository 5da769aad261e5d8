// Numbers for people: SI prefixes, volts, margins; and values as an engineer types them.

import { parseSiNumber } from '../../src/circuit/si-number.js';

const PREFIXES: ReadonlyArray<readonly [number, string]> = [[1e9, 'G'], [1e6, 'M'], [1e3, 'k'], [1, ''], [1e-3, 'm'], [1e-6, 'µ'], [1e-9, 'n'], [1e-12, 'p'], [1e-15, 'f']];
/** Unit symbols the SI reader knows. */
export const SI_UNITS: readonly string[] = ['V', 'A', 'H', 'F', 'Hz', 's', 'W', 'A/s', 'Ω'];

export function fmtNumber(value: number, digits = 4): string { return Number(value.toPrecision(digits)).toString(); }

/** "2.4 µH"; a dash for a value that is not finite. */
export function fmtSi(value: number | undefined | null, unit: string, digits = 4): string {
  if (value === undefined || value === null || !Number.isFinite(value)) return '—';
  if (value === 0) return `0 ${unit}`;
  const magnitude = Math.abs(value);
  const [scale, prefix] = PREFIXES.slice(0, -1).find(([s]) => magnitude >= s * 0.9995) ?? [1e-12, 'p'];
  return `${fmtNumber(value / scale, digits)} ${prefix}${unit}`.replace('-', '−');
}

export function fmtVolts(value: number): string { return `${fmtNumber(value, 4)} V`.replace('-', '−'); }
export function fmtMargin(value: number): string { return `${value >= 0 ? '+' : '−'}${fmtNumber(Math.abs(value), 4)} V`; }
export function cap(text: string): string { return `${text.charAt(0).toUpperCase()}${text.slice(1)}`; }

/** A value as an engineer types it into the form: "43k", "3.9n", "330p", "560". */
export function siForForm(value: number): string {
  if (value === 0 || !Number.isFinite(value)) return String(value);
  const [scale, prefix] = PREFIXES.find(([s]) => Math.abs(value) >= s * 0.9995) ?? [1e-15, 'f'];
  return `${Number((value / scale).toPrecision(12))}${prefix === 'µ' ? 'u' : prefix}`;
}

/** The scale and prefix that put the largest magnitude of `values` between 1 and 1000. */
export function scaleFor(values: readonly number[], unit: string): { scale: number; label: string } {
  if (!SI_UNITS.includes(unit)) return { scale: 1, label: unit && unit !== '—' ? unit : '' };
  const top = Math.max(...values.map(Math.abs).filter(Number.isFinite), 0);
  const [scale, prefix] = top === 0 ? [1, ''] as const : PREFIXES.find(([s]) => top >= s * 0.9995) ?? [1e-15, 'f'] as const;
  return { scale, label: `${prefix}${unit}` };
}

/**
 * The value of `text` as the server reads it (src/circuit/si-number.ts) in `unit` ('' for a plain
 * number), or undefined. For previews and labels; the server decides.
 */
export function readSi(text: unknown, unit: string): number | undefined {
  const parsed = parseSiNumber(text, SI_UNITS.includes(unit) ? unit : '');
  return parsed.ok ? parsed.value : undefined;
}

/** A file name without the characters file systems refuse. */
export function safeFileName(text: string): string {
  return text.replace(/[\\/:*?"<>|]+/g, ' ').replace(/\s+/g, ' ').trim();
}
