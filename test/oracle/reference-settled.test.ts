// The independent reference model (test/oracle/reference/) on settled runs: energy balance on every
// demo scenario and on a case per real part, exact consequences of the spec's equations, and the
// discretisation error by halving the step (Richardson: for a 4th-order method the error of the
// coarse run is 16/15 of the difference between the two runs).

import { readdirSync, readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { beforeAll, describe, expect, it } from 'vitest';
import { equivalentCapacitances } from './reference/capacitance.js';
import { readScenario } from './reference/netlist.js';
import { availableVariants, referenceRun, type ReferenceMetrics, type ReferenceResult, type Variant } from './reference/reference-run.js';

const SCENARIO_DIR = fileURLToPath(new URL('../../scenarios/', import.meta.url));
const demos = readdirSync(SCENARIO_DIR).filter((f) => f.endsWith('.json') && !f.endsWith('.schema.json')).sort();
/**
 * A demo with its real parts taken out (constant Coss, the curve's last value; ideal clamp diode, no
 * loop, no avalanche, delay or fall): what this file's exact consequences of the ideal equations and
 * its step-halving runs need, at a cost a test can pay. The real parts have cases of their own below.
 */
const readDemo = (file: string): unknown => {
  const json = JSON.parse(readFileSync(`${SCENARIO_DIR}${file}`, 'utf8')) as Record<string, Record<string, unknown>>;
  const sw = json.switch!;
  if (Array.isArray(sw.drainCapacitance)) sw.drainCapacitance = (sw.drainCapacitance.at(-1) as unknown[])[1];
  for (const key of ['avalancheVoltage', 'turnOffDelay', 'currentFallTime']) delete sw[key];
  delete json.transformer!.windingCapacitance;
  if (json.clamp) for (const key of Object.keys(json.clamp)) if (!['resistance', 'capacitance', 'diodeDrop'].includes(key)) delete json.clamp[key];
  return json;
};

// Energy balance closes to the Runge–Kutta error of the power integrals; 1e-6 is the brief's bound
// (the runs give 1e-8 or better, so it is not slack that could hide a missing term: a missing loss
// of 1e-6 of the supply would be 100× above what the integration leaves).
const ENERGY_BOUND = 1e-6;
const SETTLE_BOUND = 1e-9;

describe('reference model: demo scenarios with ideal parts settle and their energy balance closes (conservation of energy)', () => {
  const runs = new Map<string, ReferenceResult>();
  beforeAll(() => {
    for (const file of demos) {
      const json = readDemo(file);
      for (const variant of availableVariants(json)) runs.set(`${file} ${variant}`, referenceRun(json, variant));
    }
  }, 120_000);

  it('there are demo scenarios with all three variants', () => {
    expect(demos.length).toBeGreaterThanOrEqual(3);
    expect([...runs.keys()].filter((k) => k.endsWith('damped')).length).toBeGreaterThanOrEqual(3);
  });

  it('every variant settles: one more period changes the state by < 1e-9 of Ipk and Vin + VR', () => {
    for (const [key, r] of runs) {
      expect(r.settled, key).toBe(true);
      expect(r.periodicChange, key).toBeLessThan(SETTLE_BOUND);
    }
  });

  it(`energy balance over a settled period closes to < ${ENERGY_BOUND} of the supply energy`, () => {
    for (const [key, r] of runs) {
      expect(r.energyBalance.supplyJoules, key).toBeGreaterThan(0);
      expect(r.energyBalance.relativeMismatch, key).toBeLessThan(ENERGY_BOUND);
    }
  });

  it('with Ls = 0 the drain peak is the clamp level plus Vf (spec: vd = Vin + vc + Vf while the clamp conducts), to 1e-9 of Vin + VR', () => {
    for (const [key, r] of runs) {
      if (r.metrics.peakAboveClamp === null) continue;
      const vf = readScenario(readDemo(key.split(' ')[0]!)).clamp!.diodeDropVolts;
      expect(Math.abs(r.metrics.peakAboveClamp - vf) / (r.supplyVoltage + r.reflectedVoltage), key).toBeLessThan(1e-9);
    }
  });

  it('an ideal clamp diode dissipates Vf·(mean vc)/Rc: its charge per period equals what Rc drains from Cc (charge balance; common practice), to 1e-8', () => {
    for (const file of demos) {
      const clamp = readScenario(readDemo(file)).clamp;
      for (const variant of ['clamp', 'damped'] as const) {
        const r = runs.get(`${file} ${variant}`);
        if (r === undefined || clamp === undefined) continue;
        const expected = (clamp.diodeDropVolts * r.metrics.clampVoltageMean!) / clamp.ohms;
        expect(Math.abs(r.metrics.clampDiodePower! - expected) / expected, `${file} ${variant}`).toBeLessThan(1e-8);
      }
    }
  });

  // Richardson-style check at half the step: metrics that the demo tests and the engine compare.
  const MAIN: ReadonlyArray<keyof ReferenceMetrics> = [
    'peakDrainVoltage', 'clampVoltageMean', 'clampVoltageRipple', 'clampResistorPower', 'damperResistorPower',
    'clampDiodePeakCurrent', 'switchTurnOnLossPower', 'clampDiodePower',
  ];
  it('halving the step changes each main metric by < 1e-6 relative (the coarse run\'s error is 16/15 of that for RK4)', () => {
    let compared = 0;
    for (const file of demos) {
      const json = readDemo(file);
      for (const variant of availableVariants(json)) {
        const coarse = runs.get(`${file} ${variant}`)!;
        const fine = referenceRun(json, variant, { stepsPerRing: 400, stepsPerTimeConstant: 48, minStepsPerPeriod: 2000 });
        expect(fine.work.stepSeconds).toBeLessThan(0.51 * coarse.work.stepSeconds);
        for (const key of MAIN) {
          const a = coarse.metrics[key], b = fine.metrics[key];
          if (a === null || b === null) continue;
          expect((16 / 15) * Math.abs(a - b) / Math.abs(b), `${file} ${variant} ${key}`).toBeLessThan(1e-6);
          compared++;
        }
      }
    }
    expect(compared).toBeGreaterThan(40);
  }, 120_000);
});

// Element cases on a small variant of the 48 V demo: Cc = 2.2 nF so that the clamp (Rc·Cc = 1.5
// periods) settles in a few cycles; each case adds one real part.
type Json = Record<string, Record<string, unknown> | string>;
function elementScenario(edit: (s: { transformer: Record<string, unknown>; switch: Record<string, unknown>; clamp: Record<string, unknown> }) => void): Json {
  const s = {
    transformer: { magnetizingInductance: '60u', leakageInductance: '1.2u', turnsRatio: 2.5, primaryResistance: '0.15' } as Record<string, unknown>,
    switch: { frequency: '200k', peakCurrent: 1.1, drainCapacitance: '180p', onResistance: '0.12', voltageRating: 150 } as Record<string, unknown>,
    clamp: { resistance: '3.3k', capacitance: '2.2n', diodeDrop: 1.0 } as Record<string, unknown>,
  };
  edit(s);
  return {
    name: 'element case', supply: { voltage: 60 }, output: { voltage: 12, diodeDrop: 0.5 },
    transformer: s.transformer, switch: s.switch, clamp: s.clamp, damper: { resistance: '82', capacitance: '680p' },
  };
}

const CURVE = [[0, '1n'], [10, '400p'], [50, '150p'], [100, '120p']];
interface ElementCase {
  name: string;
  variant: Variant;
  scenario: Json;
  /** Steps per ring: the Ls–Cj ring is 40× faster than the leakage ring, so those cases take 100. */
  stepsPerRing?: number;
  /** A consequence of the element that must show, so that the case exercises it. */
  acts: (r: ReferenceResult) => void;
}
const ELEMENT_CASES: ElementCase[] = [
  {
    name: 'Coss curve', variant: 'clamp', scenario: elementScenario((s) => { s.switch['drainCapacitance'] = CURVE; }),
    acts: (r) => {
      // Co(er) and Co(tr) are weighted means of the curve over 0…Vin + VR: between its extremes (mean-value theorem).
      expect(r.drainCapacitanceEnergyEquivalent).toBeGreaterThan(120e-12);
      expect(r.drainCapacitanceEnergyEquivalent).toBeLessThan(1e-9);
      expect(r.drainCapacitanceChargeEquivalent).toBeGreaterThan(r.drainCapacitanceEnergyEquivalent);
    },
  },
  {
    name: 'Coss curve with damper', variant: 'damped', scenario: elementScenario((s) => { s.switch['drainCapacitance'] = CURVE; }),
    acts: (r) => { expect(r.metrics.damperResistorPower).toBeGreaterThan(0); },
  },
  {
    name: 'winding capacitance', variant: 'clamp', scenario: elementScenario((s) => { s.transformer['windingCapacitance'] = '30p'; }),
    // Turn-on dumps Enode = ½(Coss + Cw)·v² with v = the drain voltage just before turn-on (≥ 0 here).
    acts: (r) => { expect(r.metrics.switchTurnOnLossPower).toBeGreaterThan(0); },
  },
  {
    name: 'junction capacitance lumped (Ls = 0)', variant: 'clamp', scenario: elementScenario((s) => { s.clamp['diodeCapacitance'] = '20p'; }),
    // Lumped with the drain, Cj leaves the clamp exact: the peak is still Vf above the clamp level.
    acts: (r) => { expect(Math.abs(r.metrics.peakAboveClamp! - 1)).toBeLessThan(1e-9 * 91.25); },
  },
  {
    name: 'clamp loop inductance', variant: 'clamp', scenario: elementScenario((s) => { s.clamp['loopInductance'] = '30n'; }),
    // Ls delays the clamp: the drain overshoots the clamp level by more than Vf.
    acts: (r) => { expect(r.metrics.peakAboveClamp!).toBeGreaterThan(2); },
  },
  {
    name: 'loop inductance and junction capacitance', variant: 'clamp', stepsPerRing: 100,
    scenario: elementScenario((s) => { s.clamp['loopInductance'] = '100n'; s.clamp['diodeCapacitance'] = '100p'; }),
    acts: (r) => { expect(r.metrics.peakAboveClamp!).toBeGreaterThan(2); },
  },
  {
    name: 'reverse recovery, Ls = 0', variant: 'clamp', scenario: elementScenario((s) => { s.clamp['diodeRecoveryTime'] = '35n'; }),
    acts: (r) => { expect(r.metrics.clampDiodeReverseCharge!).toBeGreaterThan(1e-9); },
  },
  {
    name: 'reverse recovery with Ls', variant: 'clamp', scenario: elementScenario((s) => { s.clamp['diodeRecoveryTime'] = '35n'; s.clamp['loopInductance'] = '30n'; }),
    acts: (r) => { expect(r.metrics.clampDiodeReverseCharge!).toBeGreaterThan(1e-9); },
  },
  {
    name: 'reverse recovery with Ls and Cj', variant: 'clamp', stepsPerRing: 100,
    scenario: elementScenario((s) => { s.clamp['diodeRecoveryTime'] = '35n'; s.clamp['loopInductance'] = '50n'; s.clamp['diodeCapacitance'] = '100p'; }),
    acts: (r) => { expect(r.metrics.clampDiodeReverseCharge!).toBeGreaterThan(1e-9); },
  },
  {
    name: 'forward recovery', variant: 'clamp',
    scenario: elementScenario((s) => { s.clamp['loopInductance'] = '30n'; s.clamp['diodeForwardRecoveryVoltage'] = 4; s.clamp['diodeForwardRecoveryTime'] = '50n'; }),
    // The excess vfr adds loss above Vf·(charge through the diode) = Vf·mean(vc)/Rc (charge balance of Cc).
    acts: (r) => { expect(r.metrics.clampDiodePower! - (1.0 * r.metrics.clampVoltageMean!) / 3300).toBeGreaterThan(1e-4); },
  },
  {
    name: 'avalanche, bare', variant: 'bare', scenario: elementScenario((s) => { s.switch['avalancheVoltage'] = 150; }),
    acts: (r) => {
      expect(Math.abs(r.metrics.peakDrainVoltage - 150)).toBeLessThan(1e-9 * 150);
      expect(r.metrics.avalancheEnergyPerCycle).toBeGreaterThan(0);
      expect(Math.abs(r.metrics.avalanchePower - r.metrics.avalancheEnergyPerCycle * 200e3)).toBeLessThan(1e-12);
    },
  },
  {
    name: 'avalanche below the clamp level', variant: 'clamp', scenario: elementScenario((s) => { s.switch['avalancheVoltage'] = 95; }),
    acts: (r) => {
      expect(Math.abs(r.metrics.peakDrainVoltage - 95)).toBeLessThan(1e-9 * 95);
      expect(r.metrics.avalancheEnergyPerCycle).toBeGreaterThan(0);
    },
  },
  {
    name: 'turn-off delay', variant: 'clamp', scenario: elementScenario((s) => { s.switch['turnOffDelay'] = '100n'; }),
    // The current rises on for td at less than Vin/(Lm + Llk) (Ron and Rp take some of Vin).
    acts: (r) => {
      expect(r.metrics.turnOffCurrent).toBeGreaterThan(1.1 + 0.9 * (60 * 100e-9) / 61.2e-6);
      expect(r.metrics.turnOffCurrent).toBeLessThan(1.1 + (60 * 100e-9) / 61.2e-6);
    },
  },
  {
    name: 'current fall time', variant: 'clamp', scenario: elementScenario((s) => { s.switch['currentFallTime'] = '20n'; }),
    acts: (r) => { expect(r.metrics.turnOffLossPower).toBeGreaterThan(0); },
  },
  {
    name: 'current fall time with damper', variant: 'damped', scenario: elementScenario((s) => { s.switch['currentFallTime'] = '20n'; }),
    acts: (r) => { expect(r.metrics.turnOffLossPower).toBeGreaterThan(0); },
  },
];

describe('reference model: each real part settles with a closed energy balance (conservation of energy)', () => {
  for (const c of ELEMENT_CASES) {
    it(`${c.name} (${c.variant}): settled, balance < ${ENERGY_BOUND}, and the part acts`, () => {
      const r = referenceRun(c.scenario, c.variant, c.stepsPerRing === undefined ? {} : { stepsPerRing: c.stepsPerRing });
      expect(r.settled).toBe(true);
      expect(r.periodicChange).toBeLessThan(SETTLE_BOUND);
      expect(r.energyBalance.relativeMismatch).toBeLessThan(ENERGY_BOUND);
      for (const [term, joules] of Object.entries(r.energyBalance)) {
        // Every loss is a dissipation (≥ 0); the stored change and the on-state correction may have either sign.
        if (['storedChangeJoules', 'mismatchJoules', 'switchChannelNodeEnergyCorrectionJoules', 'turnOnJoules'].includes(term)) continue;
        expect(joules, term).toBeGreaterThanOrEqual(-1e-15);
      }
      c.acts(r);
    }, 60_000);
  }

  it('Co(er)/Co(tr) in the result are those of the transistor curve alone over 0…Vin + VR, without Cw (spec)', () => {
    const r = referenceRun(elementScenario((s) => { s.switch['drainCapacitance'] = CURVE; s.transformer['windingCapacitance'] = '50p'; }), 'bare');
    const alone = equivalentCapacitances([
      { volts: 0, farads: 1e-9 }, { volts: 10, farads: 400e-12 }, { volts: 50, farads: 150e-12 }, { volts: 100, farads: 120e-12 },
    ], 60 + 2.5 * 12.5);
    expect(r.drainCapacitanceEnergyEquivalent).toBe(alone.energyFarads);
    expect(r.drainCapacitanceChargeEquivalent).toBe(alone.chargeFarads);
  }, 60_000);
});

describe('reference model: step halving with real parts (breakpoints, the fall end and device events are landed on, so RK4 keeps its order)', () => {
  const FINE = { stepsPerRing: 400, stepsPerTimeConstant: 48, minStepsPerPeriod: 2000 };
  const cases: Array<{ name: string; variant: Variant; scenario: Json; keys: ReadonlyArray<keyof ReferenceMetrics> }> = [
    {
      name: 'Coss curve, Cw, td and tf with damper', variant: 'damped',
      scenario: elementScenario((s) => {
        s.switch['drainCapacitance'] = CURVE; s.transformer['windingCapacitance'] = '20p';
        s.switch['turnOffDelay'] = '60n'; s.switch['currentFallTime'] = '20n';
      }),
      keys: ['peakDrainVoltage', 'clampVoltageMean', 'clampVoltageRipple', 'damperResistorPower', 'clampDiodePeakCurrent', 'switchTurnOnLossPower', 'turnOffLossPower'],
    },
    {
      name: 'reverse recovery with Ls', variant: 'clamp',
      scenario: elementScenario((s) => { s.clamp['diodeRecoveryTime'] = '35n'; s.clamp['loopInductance'] = '30n'; }),
      keys: ['peakDrainVoltage', 'clampVoltageMean', 'clampVoltageRipple', 'clampDiodePeakCurrent', 'clampDiodePower', 'clampDiodeReverseCharge'],
    },
  ];
  for (const c of cases) {
    it(`${c.name}: each metric changes by < 1e-6 relative`, () => {
      const coarse = referenceRun(c.scenario, c.variant);
      const fine = referenceRun(c.scenario, c.variant, FINE);
      for (const key of c.keys) {
        const a = coarse.metrics[key], b = fine.metrics[key];
        expect(a, key).not.toBeNull();
        expect(b, key).not.toBe(0);
        expect((16 / 15) * Math.abs(a! - b!) / Math.abs(b!), key).toBeLessThan(1e-6);
      }
    }, 60_000);
  }
});

describe('reference model: the optional trace of the recorded period', () => {
  it('covers 0…T in order, holds the turn-off event, and its step-end maximum lies just under the refined peak', () => {
    const json = readDemo('bias-48v.json');
    const r = referenceRun(json, 'clamp', { trace: true });
    const trace = r.trace!;
    const period = 1 / 200e3;
    expect(trace.timeSeconds[0]).toBe(0);
    expect(Math.abs(trace.timeSeconds[trace.timeSeconds.length - 1]! - period)).toBeLessThan(1e-15 * period);
    expect(trace.timeSeconds.every((t, k) => k === 0 || t >= trace.timeSeconds[k - 1]!)).toBe(true);
    expect(trace.events.some((e) => e.name === 'switch-opens' && e.seconds === r.turnOffSeconds)).toBe(true);
    const stepMax = Math.max(...trace.drainVolts);
    // Refinement can only raise the maximum; with 200 steps per ring a step-end sample is within
    // (π/200)²/2 ≈ 1.2e-4 of the ring amplitude of the true peak (Taylor; common practice).
    expect(stepMax).toBeLessThanOrEqual(r.metrics.peakDrainVoltage);
    expect(r.metrics.peakDrainVoltage - stepMax).toBeLessThan(1e-3 * (r.supplyVoltage + r.reflectedVoltage));
    expect(trace.drainVolts.length).toBe(trace.clampDiodeAmps.length);
  }, 60_000);
});
