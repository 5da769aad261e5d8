import { describe, expect, it } from 'vitest';
import { loadScenarioFile } from '../../src/circuit/load-scenario.js';
import { availableVariants, type Scenario, type VariantName } from '../../src/circuit/scenario.js';
import { circuitForVariant } from '../../src/model/circuit-params.js';
import { runVariant, stateScales, START_HINT_SCALES, type VariantRun } from '../../src/simulation/run-variant.js';
import { MAX_STATE_SIZE, VD } from '../../src/model/state.js';
import { MAX_START_STATE_LENGTH } from '../../src/contract/api.js';

// A start hint is a warm start only: whatever it holds, the run settles on the orbit it settles on
// without one, within the settle tolerance (both ends are within it of the orbit).

const load = async (file: string): Promise<Scenario> => {
  const loaded = await loadScenarioFile(file);
  if (!loaded.ok) throw new Error(`${file} is invalid`);
  return loaded.scenario;
};
const withLeakage = (s: Scenario, factor: number): Scenario => ({ ...s, transformer: { ...s.transformer, leakageInductance: s.transformer.leakageInductance * factor } });

/** The largest difference of the settled period-start states, in units of the settle tolerance. */
function distanceInTolerances(scenario: Scenario, variant: VariantName, a: VariantRun, b: VariantRun): number {
  const scales = stateScales(circuitForVariant(scenario, variant));
  return Math.max(...a.startState.map((v, i) => Math.abs(v - b.startState[i]!) / scales[i]! / scenario.simulation.settleTolerance));
}

function expectSameAnswer(scenario: Scenario, variant: VariantName, cold: VariantRun, hinted: VariantRun): void {
  expect(hinted.orbit).toBe('settled');
  // Each end is within one tolerance of the orbit (its last change and its predicted distance).
  expect(distanceInTolerances(scenario, variant, cold, hinted)).toBeLessThan(2);
  // …and the peak drain voltage moves by about as much as the drain's state does.
  const peak = (r: VariantRun): number => Math.max(...r.recorder.cycles.map((c) => c.drainVoltage.max));
  const drainScale = stateScales(circuitForVariant(scenario, variant))[VD]!;
  expect(Math.abs(peak(hinted) - peak(cold))).toBeLessThan(2 * scenario.simulation.settleTolerance * drainScale);
}

describe('runVariant with a start hint', () => {
  it('settles every variant of gate-drive-24v, started from the orbit of a circuit with 5 % more leakage, on the orbit a cold run finds (fewer cycles in all)', async () => {
    const scenario = await load('scenarios/gate-drive-24v.json');
    const nearby = withLeakage(scenario, 1.05);
    let coldCycles = 0, hintedCycles = 0;
    for (const variant of availableVariants(scenario)) {
      const cold = runVariant(scenario, variant);
      const hinted = runVariant(scenario, variant, { startHint: runVariant(nearby, variant).startState });
      expect(cold.orbit).toBe('settled');
      expect(hinted.startedFromHint).toBe(true);
      expectSameAnswer(scenario, variant, cold, hinted);
      coldCycles += cold.cycles;
      hintedCycles += hinted.cycles;
    }
    expect(hintedCycles).toBeLessThan(coldCycles);
  }, 60_000);

  it('settles on the same orbit from a hint of the right size that is far from it (currents reversed, voltages halved or doubled; a missing part\'s voltage ignored)', async () => {
    const scenario = await load('scenarios/gate-drive-24v.json');
    for (const variant of ['bare', 'clamp', 'damped'] as const) {
      const cold = runVariant(scenario, variant);
      const scales = stateScales(circuitForVariant(scenario, variant));
      for (const garbage of [
        cold.startState.map((v, i) => (i < 2 ? -v - 0.5 * scales[i]! : 0.5 * v)),
        cold.startState.map((v, i) => (i < 2 ? 3 * scales[i]! : 2 * v + scales[i]!)),
      ]) {
        const hinted = runVariant(scenario, variant, { startHint: garbage });
        expect(hinted.startedFromHint).toBe(true);
        expectSameAnswer(scenario, variant, cold, hinted);
      }
    }
  }, 60_000);

  it('ignores a hint of another size, with a value that is not finite, or beyond its bound of state scales', async () => {
    const scenario = await load('scenarios/gate-drive-24v.json');
    const cold = runVariant(scenario, 'clamp');
    const scales = stateScales(circuitForVariant(scenario, 'clamp'));
    const far = cold.startState.map((v, i) => (i === 3 ? (START_HINT_SCALES + 1) * scales[i]! : v));
    for (const hint of [[...cold.startState, 0], cold.startState.slice(1), cold.startState.map((v, i) => (i === 2 ? NaN : v)), far]) {
      const run = runVariant(scenario, 'clamp', { startHint: hint });
      expect(run.startedFromHint).toBe(false);
      expect(run.cycles).toBe(cold.cycles);
      expect(run.startState).toEqual(cold.startState);
    }
  }, 60_000);

  it('the API bounds a start state by the simulator\'s largest state', () => {
    expect(MAX_START_STATE_LENGTH).toBe(MAX_STATE_SIZE);
  });
});

describe('runVariant asked to stop', () => {
  it('stops at the cycle after stopRequested turns true, also from a start hint (no second run from the usual start)', async () => {
    const scenario = await load('scenarios/gate-drive-24v.json');
    const settled = runVariant(scenario, 'clamp', { recordedCyclesWhenSettled: 1 });
    for (const hinted of [false, true]) {
      let cycles = 0;
      let asked = 0;
      const run = (): VariantRun => runVariant(withLeakage(scenario, 1.2), 'clamp', {
        onCycle: (n) => { cycles = n; },
        stopRequested: () => { asked++; return cycles >= 2; },
        ...(hinted ? { startHint: settled.startState } : {}),
      });
      expect(run).toThrow(/withdrawn \(stopped after \d+ cycles\)/);
      expect(asked).toBeGreaterThan(0);
      // One cycle may finish after the flag is read true (its check comes between cycles).
      expect(cycles).toBeGreaterThanOrEqual(2);
      expect(cycles).toBeLessThanOrEqual(3);
    }
  });
});
