// Values far outside anything a flyback in this tool's range uses: almost always a unit or prefix
// typed wrong ("0.4MH" for 0.4 mH). They are warnings, printed with the result, not errors: an
// unusual circuit is still the user's to simulate. The ranges are common practice for small
// flybacks (bias and auxiliary supplies up to a few hundred watts), deliberately wide.

import type { Scenario } from './scenario.js';
import { issueAtField, type ValidationIssue } from '../contract/issues.js';

const fmt = (x: number): string => Number(x.toPrecision(3)).toString();

interface Range { path: string; value: (s: Scenario) => number | undefined; low: number; high: number; unit: string; usual: string }

const RANGES: Range[] = [
  { path: 'supply.voltage', value: (s) => s.supply.voltage, low: 1, high: 1500, unit: 'V', usual: '3 V to 1 kV' },
  { path: 'transformer.magnetizingInductance', value: (s) => s.transformer.magnetizingInductance, low: 1e-6, high: 0.1, unit: 'H', usual: 'a few µH to tens of mH' },
  { path: 'transformer.turnsRatio', value: (s) => s.transformer.turnsRatio, low: 0.01, high: 100, unit: '', usual: '0.05 to 50' },
  { path: 'output.voltage', value: (s) => s.output.voltage, low: 0.5, high: 2000, unit: 'V', usual: '1 V to 1 kV' },
  { path: 'switch.frequency', value: (s) => s.switch.frequency, low: 1e3, high: 5e6, unit: 'Hz', usual: '10 kHz to 2 MHz' },
  { path: 'switch.drainCapacitance', value: (s) => maxCapacitance(s.switch.drainCapacitance), low: 0.1e-12, high: 100e-9, unit: 'F', usual: 'a few pF to a few nF' },
  { path: 'switch.onResistance', value: (s) => s.switch.onResistance, low: 0, high: 100, unit: 'Ω', usual: 'milliohms to a few ohms' },
  { path: 'clamp.capacitance', value: (s) => s.clamp?.capacitance, low: 10e-12, high: 100e-6, unit: 'F', usual: 'hundreds of pF to a few µF' },
  { path: 'clamp.loopInductance', value: (s) => s.clamp?.loopInductance, low: 0, high: 1e-6, unit: 'H', usual: 'a few nH to tens of nH' },
  { path: 'damper.capacitance', value: (s) => s.damper?.capacitance, low: 1e-12, high: 10e-6, unit: 'F', usual: 'tens of pF to tens of nF' },
];

function maxCapacitance(c: Scenario['switch']['drainCapacitance']): number {
  return typeof c === 'number' ? c : Math.max(...c.map(([, value]) => value));
}

export function plausibilityWarnings(s: Scenario): ValidationIssue[] {
  const out: ValidationIssue[] = [];
  for (const r of RANGES) {
    const v = r.value(s);
    if (v === undefined || (v >= r.low && v <= r.high)) continue;
    out.push(issueAtField(r.path, `${fmt(v)} ${r.unit} is far outside what a flyback uses (${r.usual}): check the unit and the SI prefix (m is milli, M is mega)`.replace('  ', ' ')));
  }
  const lm = s.transformer.magnetizingInductance, llk = s.transformer.leakageInductance;
  if (llk > 0.2 * lm && llk < lm) {
    out.push(issueAtField('transformer.leakageInductance', `${fmt(llk)} H is ${fmt((100 * llk) / lm)} % of the magnetizing inductance; a flyback's leakage is usually 0.5–10 % of it: check the value and its prefix`));
  }
  return out;
}
