// The reference model's own scenario reader (test/oracle/reference/netlist.ts) against the defaults
// and field list of the README's "The model, its assumptions and limits", and against plain arithmetic of SI prefixes.

import { describe, expect, it } from 'vitest';
import { readScenario, reflectedVolts } from './reference/netlist.js';
import { availableVariants } from './reference/reference-run.js';

const minimal = {
  name: 'minimal',
  supply: { voltage: '48V' },
  transformer: { magnetizingInductance: '100u', leakageInductance: '2uH', turnsRatio: 4 },
  output: { voltage: 5 },
  switch: { frequency: '100kHz', peakCurrent: '500m', drainCapacitance: '220p', onResistance: '0.5', voltageRating: 200 },
};

describe('reference netlist reader (spec: field list and defaults)', () => {
  it('applies the spec defaults: Rp 0, Cw 0, Vf_out 0, maxDuty 0.9, Vbody 0.7, no avalanche, td 0, tf 0', () => {
    const n = readScenario(minimal);
    expect(n.supplyVolts).toBe(48);
    expect(n.leakageHenries).toBe(2e-6);
    expect(n.frequencyHertz).toBe(100e3);
    expect(n.primaryOhms).toBe(0);
    expect(n.windingFarads).toBe(0);
    expect(n.outputDiodeVolts).toBe(0);
    expect(n.control).toEqual({ kind: 'peak-current', peakAmps: 0.5, maxDuty: 0.9 });
    expect(n.bodyDiodeVolts).toBe(0.7);
    expect(n.avalancheVolts).toBeUndefined();
    expect(n.turnOffDelaySeconds).toBe(0);
    expect(n.currentFallSeconds).toBe(0);
    expect(n.coss).toEqual([{ volts: 0, farads: 220e-12 }]);
    expect(reflectedVolts(n)).toBe(4 * 5);
    expect(availableVariants(minimal)).toEqual(['bare']);
  });

  it('clamp defaults: Vf 1.0, Ls 0, Cj 0, ideal diode, r = 0.1, forward-recovery rate 1e8 A/s', () => {
    const n = readScenario({
      ...minimal,
      clamp: { resistance: '10k', capacitance: '4.7n', diodeForwardRecoveryVoltage: 5, diodeForwardRecoveryTime: '30n' },
    });
    expect(n.clamp).toEqual({
      ohms: 10e3, farads: 4.7e-9, diodeDropVolts: 1.0, loopHenries: 0, loopOhms: 0, junctionFarads: 0, recoverySeconds: undefined,
      transitTimeRatio: 0.1, forwardRecovery: { peakVolts: 5, recoverySeconds: 30e-9, rampAmpsPerSecond: 1e8 },
    });
  });

  it('reads a Coss curve of SI strings and rejects one that does not start at 0 V, naming the field', () => {
    const curve = readScenario({ ...minimal, switch: { ...minimal.switch, drainCapacitance: [[0, '1nF'], ['25V', '150p']] } });
    expect(curve.coss).toEqual([{ volts: 0, farads: 1e-9 }, { volts: 25, farads: 150e-12 }]);
    expect(() => readScenario({ ...minimal, switch: { ...minimal.switch, drainCapacitance: [[1, '1n']] } }))
      .toThrow(/switch\.drainCapacitance\[0\]\[0\]/);
  });

  it('rejects a missing field, both or neither of peakCurrent and dutyCycle, and half a forward-recovery pair', () => {
    expect(() => readScenario({ ...minimal, supply: {} })).toThrow(/supply\.voltage/);
    expect(() => readScenario({ ...minimal, switch: { ...minimal.switch, dutyCycle: 0.3 } })).toThrow(/exactly one/);
    expect(() => readScenario({ ...minimal, clamp: { resistance: 1, capacitance: 1, diodeForwardRecoveryVoltage: 3 } })).toThrow(/go together/);
  });
});
