import { describe, expect, it } from 'vitest';
import { readdirSync } from 'node:fs';
import { runVariant } from '../../src/simulation/run-variant.js';
import { variantMetrics } from '../../src/analysis/variant-metrics.js';
import { loadScenarioFile } from '../../src/circuit/load-scenario.js';
import { availableVariants, reflectedVoltage, type Scenario } from '../../src/circuit/scenario.js';
import { labScenario } from '../support/lab-scenarios.js';
import { withIdealParts } from '../../src/model/ideal-parts.js';
import { circuitForVariant, leakageRingPeriodSeconds } from '../../src/model/circuit-params.js';

const demoFiles = readdirSync('scenarios').filter((f) => f.endsWith('.json') && !f.endsWith('.schema.json')).map((f) => `scenarios/${f}`);
async function demo(file: string): Promise<Scenario> {
  const loaded = await loadScenarioFile(file);
  if (!loaded.ok) throw new Error(`${file} is not valid`);
  return loaded.scenario;
}

describe('bare drain overshoot against the energy balance', () => {
  // Leakage energy ½·Llk·Ipk² moves into Coss above Vin + VR:
  // Vpk ≈ Vin + VR + Ipk·√(Llk/Coss) (energy balance; any circuits text), in the small-damping limit.
  it.each([
    ['10u', '10p'], ['10u', '100p'], ['3u', '50p'],
  ])('runVariant(lab, bare) with Llk = %s, Coss = %s peaks within 2 percent of the formula', (leakage, coss) => {
    const scenario = labScenario({ transformer: { leakageInductance: leakage, primaryResistance: 0.5 }, switch: { drainCapacitance: coss }, clamp: undefined });
    const m = variantMetrics(runVariant(scenario, 'bare'), 400);
    const l = scenario.transformer.leakageInductance, c = scenario.switch.drainCapacitance as number;
    const formula = scenario.supply.voltage + reflectedVoltage(scenario) + 1 * Math.sqrt(l / c);
    // What the formula leaves out: the output diode starts at VR·(1 + Llk/Lm), and the primary
    // current still rises a little while Coss charges up to the supply.
    expect(Math.abs(m.peakDrainVoltage - formula) / formula).toBeLessThan(0.02);
  }, 30_000);

  it('runVariant(lab, bare) rings at 1/(2π·√(Llk·Coss)) damped by ζ = (Rp/2)·√(Coss/Llk) (series RLC, any circuits text)', () => {
    // Rp is chosen so that the ring current decays faster than the magnetizing current falls
    // (Rp/(2·Llk)·Ipk > VR/Lm): otherwise the output diode drops out at the ring's crests and the
    // ring is no longer the series RLC alone. Ipk·√(Llk/Coss) < Vin + VR keeps the body diode out.
    const rp = 20;
    const scenario = labScenario({ transformer: { primaryResistance: rp }, switch: { drainCapacitance: '400p' }, clamp: undefined });
    const m = variantMetrics(runVariant(scenario, 'bare'), 400);
    const l = scenario.transformer.leakageInductance, c = scenario.switch.drainCapacitance as number;
    const zeta = (rp / 2) * Math.sqrt(c / l);
    const f0 = 1 / (2 * Math.PI * Math.sqrt(l * c));
    const fd = f0 * Math.sqrt(1 - zeta * zeta);
    expect(m.ringFrequency).not.toBeNull();
    // fd and f0 differ by 2e-3 here: the check tells them apart.
    expect(Math.abs(m.ringFrequency! - fd) / fd).toBeLessThan(1e-4);
  }, 30_000);
});

describe.each(demoFiles)('settled demo scenario %s', (file) => {
  it('balances energy over a settled period: supply = load + every loss + stored change, within 3e-5 of the input; ideal parts cost at most 150 evaluations per leakage ring period, real parts at most 6× that', async () => {
    const scenario = await demo(file);
    const ideal = withIdealParts(scenario);
    for (const variant of availableVariants(scenario)) {
      const m = variantMetrics(runVariant(scenario, variant), scenario.switch.voltageRating);
      const mIdeal = variantMetrics(runVariant(ideal, variant), scenario.switch.voltageRating);
      expect(m.settled).toBe(true);
      // 1e-5 with constant parts; a Coss curve's points are kinks the solver pays for in accuracy at the default rtol.
      expect(Math.abs(mIdeal.energyBalance.relativeMismatch), `${variant}, ideal parts`).toBeLessThan(1e-5);
      expect(Math.abs(m.energyBalance.relativeMismatch), `${variant}`).toBeLessThan(3e-5);
      // Work budgets at the default tolerance (deterministic counts, not time).
      // The work follows the number of leakage rings per period (about 100–160 evaluations per ring, measured).
      const ringsPerPeriod = 1 / (scenario.switch.frequency * leakageRingPeriodSeconds(circuitForVariant(ideal, variant)));
      expect(mIdeal.stats.evaluationsPerPeriod / ringsPerPeriod, `${variant} evaluations per ring, ideal parts`).toBeLessThan(150);
      // Curve points are kinks and a clamp loop rings fast while the diode conducts (measured 1.3–5.2×).
      expect(m.stats.evaluationsPerPeriod / mIdeal.stats.evaluationsPerPeriod, `${variant} cost of real parts`).toBeLessThan(6);
    }
  }, 120_000);

  it('the clamp lowers the peak and, with ideal parts, its ripple matches ΔVc ≈ Vc/(R·C·fsw) within 25 percent (AN-4147, from memory)', async () => {
    // The estimate assumes an ideal diode: a recovering one takes charge back each cycle.
    const scenario = withIdealParts(await demo(file));
    const bare = variantMetrics(runVariant(scenario, 'bare'), 1);
    const clamp = variantMetrics(runVariant(scenario, 'clamp'), 1);
    expect(clamp.peakDrainVoltage).toBeLessThan(bare.peakDrainVoltage);
    const { resistance, capacitance } = scenario.clamp!;
    const estimate = clamp.clampVoltageMean! / (resistance * capacitance * scenario.switch.frequency);
    // The hand estimate assumes the capacitor is recharged instantly once per period.
    expect(Math.abs(clamp.clampVoltageRipple! - estimate) / estimate).toBeLessThan(0.25);
  }, 60_000);
});
