// The engine against the independent reference model of test/oracle/reference/ (its own netlist
// assembly, device logic, fixed-step Runge–Kutta and Newton shooting; it imports nothing of
// src/model, src/solver, src/simulation or src/analysis). Every metric of every demo scenario and
// variant, and each real part alone, must agree; and the comparison must catch a planted fault.

import { readFileSync, readdirSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { validateScenario } from '../../src/circuit/validate-scenario.js';
import { availableVariants, type Scenario, type VariantName } from '../../src/circuit/scenario.js';
import { scenarioToJson } from '../../src/circuit/scenario-json.js';
import { runVariant } from '../../src/simulation/run-variant.js';
import { variantMetrics } from '../../src/analysis/variant-metrics.js';
import { simulationReport } from '../../src/analysis/simulation-report.js';
import { referenceRun, type ReferenceResult } from './reference/reference-run.js';
import { compareWithReference, type Disagreement } from '../support/reference-comparison.js';
import { labScenario } from '../support/lab-scenarios.js';

/**
 * 1e-4 of each metric's scale (Vin + VR, the turn-off current, the input power): ten times the
 * engine's settle tolerance, which dominates its error (odex at rtol 1e-7; the reference's own
 * error is below 1e-8 at 100 steps per ring, checked by step halving in reference-settled.test.ts).
 * Measured worst case: 2.4e-5 (the clamp diode's peak current with a slow diode in a loop).
 */
const TOLERANCE = 1e-4;
/** 100 steps per fastest ring keeps the reference's RK4 error far below TOLERANCE at half its default cost. */
const REFERENCE_OPTIONS = { stepsPerRing: 100 };

function scenarioOf(json: unknown): Scenario {
  const result = validateScenario(json);
  if (!result.ok) throw new Error(result.issues.map((i) => `${i.path}: ${i.message}`).join('\n'));
  return result.scenario;
}

function disagreements(engineScenario: Scenario, variant: VariantName, reference: ReferenceResult): Disagreement[] {
  const m = variantMetrics(runVariant(engineScenario, variant), engineScenario.switch.voltageRating);
  return compareWithReference(m, reference, engineScenario.switch.frequency, TOLERANCE);
}

const demos = readdirSync('scenarios').filter((f) => f.endsWith('.json') && !f.endsWith('.schema.json'));

describe('engine against the independent reference model, demo scenarios', () => {
  const cases = demos.flatMap((file) => {
    const json = JSON.parse(readFileSync(`scenarios/${file}`, 'utf8')) as unknown;
    return availableVariants(scenarioOf(json)).map((variant) => [file, variant, json] as const);
  });
  it.each(cases)('%s %s: every metric within 1e-4 of its scale', (_file, variant, json) => {
    const reference = referenceRun(json, variant, REFERENCE_OPTIONS);
    expect(reference.settled).toBe(true);
    expect(disagreements(scenarioOf(json), variant, reference)).toEqual([]);
  }, 180_000);

  it.each(demos)('%s: Co(er) and Co(tr) of the curve over 0…Vin + VR agree within 1e-9', (file) => {
    const json = JSON.parse(readFileSync(`scenarios/${file}`, 'utf8')) as unknown;
    const scenario = scenarioOf(json);
    const report = simulationReport(scenario, []);
    const reference = referenceRun(json, 'bare', REFERENCE_OPTIONS);
    expect(Math.abs(report.drainCapacitanceEnergyEquivalent / reference.drainCapacitanceEnergyEquivalent - 1)).toBeLessThan(1e-9);
    expect(Math.abs(report.drainCapacitanceChargeEquivalent / reference.drainCapacitanceChargeEquivalent - 1)).toBeLessThan(1e-9);
  }, 60_000);
});

describe('engine against the independent reference model, each real part alone', () => {
  // The lab flyback (Vin 100 V, VR 100 V, Ipk 1 A, Llk 10 µH, 100 kHz) with a 100 pF drain and a
  // small clamp capacitor, so that both models settle in few cycles.
  const base = { switch: { drainCapacitance: '100p' }, clamp: { capacitance: '10n' } };
  const cases: Array<[string, Record<string, Record<string, unknown>>, VariantName]> = [
    ['a Coss curve', { switch: { drainCapacitance: [[0, '600p'], [100, '150p'], [300, '80p']] } }, 'clamp'],
    ['winding capacitance', { transformer: { windingCapacitance: '20p' } }, 'bare'],
    ['a clamp loop', { clamp: { loopInductance: '30n', loopResistance: 0.5 } }, 'clamp'],
    ['a clamp loop and junction capacitance', { clamp: { loopInductance: '100n', loopResistance: 2, diodeCapacitance: '50p' } }, 'clamp'],
    ['a junction capacitance lumped with the drain', { clamp: { diodeCapacitance: '20p' } }, 'clamp'],
    ['reverse recovery', { clamp: { diodeRecoveryTime: '300n' } }, 'clamp'],
    ['reverse recovery in a loop', { clamp: { diodeRecoveryTime: '300n', loopInductance: '30n', loopResistance: 0.5 } }, 'clamp'],
    ['forward recovery', { clamp: { loopInductance: '30n', loopResistance: 0.5, diodeForwardRecoveryVoltage: 8, diodeForwardRecoveryTime: '60n' } }, 'clamp'],
    ['avalanche', { switch: { avalancheVoltage: 300 } }, 'bare'],
    ['a turn-off delay', { switch: { turnOffDelay: '150n' } }, 'clamp'],
    ['a current fall time', { switch: { currentFallTime: '40n' } }, 'damped'],
  ];
  it.each(cases)('%s: every metric within 1e-4 of its scale', (_what, patch, variant) => {
    const scenario = labScenario({
      ...base, ...patch,
      switch: { ...base.switch, ...patch.switch },
      clamp: { ...base.clamp, ...patch.clamp },
      ...(variant === 'damped' ? { damper: { resistance: 300, capacitance: '300p' } } : {}),
    });
    const json = scenarioToJson(scenario);
    const reference = referenceRun(json, variant, REFERENCE_OPTIONS);
    expect(reference.settled).toBe(true);
    expect(disagreements(scenario, variant, reference)).toEqual([]);
  }, 180_000);
});

describe('the comparison catches faults planted in the engine\'s input', () => {
  // What a fault in the engine's circuit assembly would do: the engine sees a different circuit
  // than the file describes, the reference reads the file.
  const json = JSON.parse(readFileSync('scenarios/gate-drive-24v.json', 'utf8')) as Record<string, Record<string, unknown>>;
  const scenario = scenarioOf(json);

  it('a halved damper capacitance is caught', () => {
    const reference = referenceRun(json, 'damped', REFERENCE_OPTIONS);
    const planted: Scenario = { ...scenario, damper: { ...scenario.damper!, capacitance: scenario.damper!.capacitance / 2 } };
    expect(disagreements(scenario, 'damped', reference)).toEqual([]);
    expect(disagreements(planted, 'damped', reference).map((d) => d.metric)).toContain('damperResistorPower');
  }, 120_000);

  it('an ignored clamp-diode drop is caught', () => {
    const reference = referenceRun(json, 'clamp', REFERENCE_OPTIONS);
    const planted: Scenario = { ...scenario, clamp: { ...scenario.clamp!, diodeDrop: 0 } };
    expect(disagreements(planted, 'clamp', reference).map((d) => d.metric)).toEqual(expect.arrayContaining(['clampDiodePower']));
  }, 120_000);
});
