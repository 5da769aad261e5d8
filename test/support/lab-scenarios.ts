// Scenarios built in tests, validated through the same edge as files.

import { validateScenario } from '../../src/circuit/validate-scenario.js';
import type { Scenario } from '../../src/circuit/scenario.js';

type Raw = Record<string, unknown>;

function merge(base: Raw, patch: Raw): Raw {
  const out: Raw = { ...base };
  for (const [k, v] of Object.entries(patch)) {
    if (v === undefined) delete out[k];
    else if (typeof v === 'object' && v !== null && !Array.isArray(v) && typeof out[k] === 'object') out[k] = merge(out[k] as Raw, v as Raw);
    else out[k] = v;
  }
  return out;
}

/**
 * A plain 100 V-class flyback for closed-form checks; `patch` overrides fields (undefined removes).
 * The 0.5 Ω winding resistance is there so that rings die out and the cycles settle: a lossless
 * DCM ring is neutrally stable from cycle to cycle.
 */
export function labScenario(patch: Raw = {}): Scenario {
  const base: Raw = {
    name: 'lab flyback',
    supply: { voltage: 100 },
    transformer: { magnetizingInductance: '200u', leakageInductance: '10u', turnsRatio: 5, primaryResistance: 0.5 },
    output: { voltage: 20, diodeDrop: 0 },
    switch: { frequency: '100k', peakCurrent: 1, drainCapacitance: '10p', onResistance: 0.1, voltageRating: 400 },
    clamp: { resistance: '15k', capacitance: '100n', diodeDrop: 0 },
  };
  const result = validateScenario(merge(base, patch));
  if (!result.ok) throw new Error(result.issues.map((i) => `${i.path}: ${i.message}`).join('\n'));
  return result.scenario;
}
