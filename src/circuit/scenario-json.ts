// A validated Scenario back in the file format (plain SI numbers), for saving, for pasting
// blocks into scenario files, and as the base that sweeps vary field by field.

import type { Scenario, Share } from './scenario.js';

export type ScenarioJson = Record<string, unknown> & { name: string };

export function scenarioToJson(s: Scenario): ScenarioJson {
  const control = s.switch.control;
  const out: ScenarioJson = {
    name: s.name,
    supply: { voltage: s.supply.voltage },
    transformer: { ...s.transformer },
    output: { ...s.output },
    switch: {
      frequency: s.switch.frequency,
      // With the load given, the peak current is derived from it, not part of the file.
      ...(control.kind === 'peak-current'
        ? { ...(s.output.power === undefined ? { peakCurrent: control.peakCurrent } : {}), maxDutyCycle: control.maxDutyCycle }
        : { dutyCycle: control.dutyCycle }),
      ...(s.switch.peakCurrentLimit !== undefined ? { peakCurrentLimit: s.switch.peakCurrentLimit } : {}),
      drainCapacitance: s.switch.drainCapacitance,
      onResistance: s.switch.onResistance,
      bodyDiodeDrop: s.switch.bodyDiodeDrop,
      voltageRating: s.switch.voltageRating,
      ...(s.switch.avalancheVoltage !== undefined ? { avalancheVoltage: s.switch.avalancheVoltage } : {}),
      turnOffDelay: s.switch.turnOffDelay,
      currentFallTime: s.switch.currentFallTime,
    },
    simulation: { ...s.simulation },
  };
  if (s.clamp) out.clamp = { ...s.clamp };
  if (s.damper) out.damper = { ...s.damper };
  if (s.design) {
    // Shares go back to the file's spelling: a number in the unit, or a percentage.
    const share = (x: Share): number | string => (x.kind === 'absolute' ? x.value : `${Number((x.value * 100).toPrecision(12))}%`);
    out.design = { ...structuredClone(s.design), voltageAllowance: share(s.design.voltageAllowance), lossBudget: share(s.design.lossBudget) };
  }
  return out;
}

/** Datasheet points [[V, C], …] as they stand in a scenario after validation. */
const isCurve = (node: unknown): node is Array<[number, number]> =>
  Array.isArray(node) && node.length > 0 && node.every((p) => Array.isArray(p) && p.length === 2 && typeof p[1] === 'number');

/**
 * Reads a numeric field by its dotted path ("transformer.leakageInductance"), or undefined. A
 * capacitance curve reads as its value at 0 V, so that a sweep or tolerance in % scales it.
 */
export function getNumberAt(json: Record<string, unknown>, path: string): number | undefined {
  let node: unknown = json;
  for (const key of path.split('.')) {
    if (typeof node !== 'object' || node === null || !Object.hasOwn(node, key)) return undefined;
    node = (node as Record<string, unknown>)[key];
  }
  if (isCurve(node)) return node[0]![1];
  return typeof node === 'number' ? node : undefined;
}

/** A copy of `json` with the field at `path` set; the blocks on the way must exist. */
export function withNumberAt<T extends Record<string, unknown>>(json: T, path: string, value: number): T {
  const keys = path.split('.');
  const copy = structuredClone(json);
  let node: Record<string, unknown> = copy;
  for (const key of keys.slice(0, -1)) {
    const next = node[key];
    if (typeof next !== 'object' || next === null) throw new RangeError(`${path}: the block "${key}" is not in this scenario`);
    node = next as Record<string, unknown>;
  }
  const leaf = keys[keys.length - 1]!;
  const old = node[leaf];
  // A curve takes the new value at 0 V and every other point scales with it.
  node[leaf] = isCurve(old) ? old.map(([v, c]) => [v, (c * value) / old[0]![1]]) : value;
  return copy;
}
