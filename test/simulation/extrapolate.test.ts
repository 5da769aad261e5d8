import { describe, expect, it } from 'vitest';
import { SettlingExtrapolator } from '../../src/simulation/extrapolate.js';
import { runVariant } from '../../src/simulation/run-variant.js';
import { variantMetrics } from '../../src/analysis/variant-metrics.js';
import { labScenario } from '../support/lab-scenarios.js';

describe('SettlingExtrapolator.next(x)', () => {
  it('jumps a geometric sequence x_k = x* + ρ^k·e to its limit (Aitken Δ²)', () => {
    const fixed = [1, 2], e = [0.5, -0.25], rho = 0.9;
    const ex = new SettlingExtrapolator([1, 1]);
    let out: number[] = [];
    for (let k = 0; k < 8 && ex.jumps === 0; k++) out = ex.next(fixed.map((f, i) => f + rho ** k * e[i]!));
    expect(ex.jumps).toBe(1);
    expect(Math.abs(out[0]! - 1)).toBeLessThan(1e-12);
    expect(Math.abs(out[1]! - 2)).toBeLessThan(1e-12);
  });

  it('does not jump on an alternating sequence (ρ < 0: a period-2 tendency, not slow settling)', () => {
    const ex = new SettlingExtrapolator([1]);
    for (let k = 0; k < 20; k++) ex.next([1 + (-0.9) ** k]);
    expect(ex.jumps).toBe(0);
  });
});

describe('runVariant with and without extrapolation', () => {
  it('settles the slow clamp of the lab circuit in fewer cycles to the same clamp voltage (within 5 × settle tolerance)', () => {
    const scenario = labScenario();
    const plain = runVariant(scenario, 'clamp', { extrapolate: false });
    const fast = runVariant(scenario, 'clamp');
    expect(plain.orbit).toBe('settled');
    expect(fast.orbit).toBe('settled');
    expect(fast.cycles).toBeLessThan(0.6 * plain.cycles);
    // Both stop within the settle tolerance (1e-5 of Vin + VR = 2 mV here) of the fixed point,
    // from either side: measured 2.4e-5 of the clamp voltage apart.
    const a = variantMetrics(plain, 400).clampVoltageMean!, b = variantMetrics(fast, 400).clampVoltageMean!;
    const settle = scenario.simulation.settleTolerance * (scenario.supply.voltage + 100);
    expect(Math.abs(a - b)).toBeLessThan(5 * settle);
  }, 60_000);
});
