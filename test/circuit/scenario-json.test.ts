import { describe, expect, it } from 'vitest';
import { getNumberAt, scenarioToJson, withNumberAt } from '../../src/circuit/scenario-json.js';
import { validateScenario } from '../../src/circuit/validate-scenario.js';
import { labScenario } from '../support/lab-scenarios.js';

describe('scenario JSON paths on a capacitance curve', () => {
  const json = scenarioToJson(labScenario({ switch: { drainCapacitance: [[0, '1n'], [50, '200p'], [300, '50p']] } }));

  it('getNumberAt(switch.drainCapacitance) reads the curve as its value at 0 V', () => {
    expect(getNumberAt(json, 'switch.drainCapacitance')).toBeCloseTo(1e-9, 20);
  });

  it('withNumberAt(switch.drainCapacitance, 1.1 × C(0)) scales every point by 1.1 and keeps the voltages', () => {
    const scaled = withNumberAt(json, 'switch.drainCapacitance', 1.1e-9);
    const curve = (scaled.switch as { drainCapacitance: Array<[number, number]> }).drainCapacitance;
    expect(curve.map(([v]) => v)).toEqual([0, 50, 300]);
    [1e-9, 200e-12, 50e-12].forEach((c, i) => expect(curve[i]![1] / (1.1 * c)).toBeCloseTo(1, 12));
    // The original is untouched and the result still validates.
    expect(getNumberAt(json, 'switch.drainCapacitance')).toBeCloseTo(1e-9, 20);
    expect(validateScenario(scaled).ok).toBe(true);
  });

  it('scenarioToJson keeps every real-part field, so a saved scenario reloads the same', () => {
    const s = labScenario({ switch: { avalancheVoltage: 300, turnOffDelay: '50n', currentFallTime: '10n' }, clamp: { loopInductance: '5n', diodeRecoveryTime: '40n' }, transformer: { windingCapacitance: '7p' } });
    const again = validateScenario(JSON.parse(JSON.stringify(scenarioToJson(s))));
    expect(again.ok && again.scenario).toEqual(s);
  });
});

describe('scenario JSON of the design block', () => {
  it('writes the allowance and the loss budget back as the file spells them, and they reload the same', () => {
    const s = labScenario({ design: { voltageAllowance: '2.5%', lossBudget: 3 } });
    const json = scenarioToJson(s);
    expect((json.design as Record<string, unknown>).voltageAllowance).toBe('2.5%');
    expect((json.design as Record<string, unknown>).lossBudget).toBe(3);
    const again = validateScenario(JSON.parse(JSON.stringify(json)));
    expect(again.ok && again.scenario.design).toEqual(s.design);
  });
});
