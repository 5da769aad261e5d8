import { describe, expect, it } from 'vitest';
import { settleOperatingPoint } from '../../src/simulation/operating-point.js';
import { peakCurrentForPower } from '../../src/circuit/load-operating-point.js';
import { scenarioToJson } from '../../src/circuit/scenario-json.js';
import { validateScenario } from '../../src/circuit/validate-scenario.js';
import { labScenario } from '../support/lab-scenarios.js';

// The lab flyback: Lm 200 µH, 100 kHz, Vin 100 V, VR 100 V; in DCM up to ΔI = Vin·D·T/Lm = 2.5 A.
const withLoad = (power: number, efficiency = 0.85) => labScenario({ switch: { peakCurrent: undefined }, output: { power, efficiency } });

describe('the peak current from the load', () => {
  it('in DCM agrees with the flyback energy relation P = ½·Lm·Ipk²·fsw·η within 2 % (any power-electronics text; the rest is the magnetizing current still rising while Coss charges)', () => {
    for (const [power, efficiency] of [[8.5, 0.85], [4, 0.7], [12, 0.9]] as const) {
      const s = withLoad(power, efficiency);
      const { point } = settleOperatingPoint(s);
      const formula = Math.sqrt((2 * power) / (200e-6 * 100e3 * efficiency));
      expect(point).not.toBeNull();
      expect(Math.abs(point!.peakCurrent / formula - 1), `${power} W`).toBeLessThan(0.02);
      expect(Math.abs(point!.deliveredPower / point!.targetPower - 1)).toBeLessThan(1e-3);
    }
  }, 120_000);

  it('peakCurrentForPower switches to the CCM relation above the boundary: ½·Lm·(Ipk² − (Ipk − ΔI)²)·fsw = P (any power-electronics text)', () => {
    const inputs = { magnetizingInductance: 200e-6, frequency: 100e3, supplyVoltage: 100, reflectedVoltage: 100 };
    const ripple = 2.5;
    const boundaryPower = 0.5 * 200e-6 * ripple ** 2 * 100e3;
    expect(peakCurrentForPower({ ...inputs, power: 0.5 * boundaryPower }).conduction).toBe('DCM');
    const ccm = peakCurrentForPower({ ...inputs, power: 2 * boundaryPower });
    expect(ccm.conduction).toBe('CCM');
    expect(0.5 * 200e-6 * (ccm.peakCurrent ** 2 - (ccm.peakCurrent - ripple) ** 2) * 100e3).toBeCloseTo(2 * boundaryPower, 9);
  });

  it('validation takes exactly one of switch.peakCurrent, switch.dutyCycle and output.power, naming the extra one', () => {
    const json = scenarioToJson(labScenario()) as Record<string, Record<string, unknown>>;
    const both = validateScenario({ ...json, output: { ...json.output, power: 5 } });
    expect(both.ok).toBe(false);
    if (!both.ok) expect(both.issues.map((i) => i.path)).toContain('output.power');
    // A scenario with a load writes itself back without a peak current, and reloads the same.
    const s = withLoad(6);
    const again = validateScenario(JSON.parse(JSON.stringify(scenarioToJson(s))));
    expect(again.ok && again.scenario).toEqual(s);
  });
});
