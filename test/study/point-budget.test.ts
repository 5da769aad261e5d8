import { describe, expect, it } from 'vitest';
import { scenarioAtPoint, STUDY_POINT_CYCLE_BUDGET } from '../../src/study/run-study.js';
import type { ScenarioJson } from '../../src/circuit/scenario-json.js';
import { validateScenario } from '../../src/circuit/validate-scenario.js';
import { runVariant } from '../../src/simulation/run-variant.js';
import { readFileSync } from 'node:fs';

const base = JSON.parse(readFileSync('scenarios/gate-drive-24v.json', 'utf8')) as ScenarioJson;

describe('scenarioAtPoint(base, values): the cycle budget of a study point', () => {
  it(`caps each point at ${STUDY_POINT_CYCLE_BUDGET} cycles where the scenario sets no simulation.maxCycles, and keeps a cap the scenario sets`, () => {
    const capped = validateScenario(scenarioAtPoint(base, { 'transformer.leakageInductance': 3e-6 }));
    expect(capped.ok && capped.scenario.simulation.maxCycles).toBe(STUDY_POINT_CYCLE_BUDGET);
    const own = validateScenario(scenarioAtPoint({ ...base, simulation: { maxCycles: 900, recordedCycles: 2 } }, {}));
    expect(own.ok && own.scenario.simulation.maxCycles).toBe(900);
    expect(own.ok && own.scenario.simulation.recordedCycles).toBe(2);
  });

  it('leaves room for a normal point: every demo variant at a swept point settles well inside the budget', () => {
    const at = validateScenario(scenarioAtPoint(base, { 'transformer.leakageInductance': 3e-6 }));
    if (!at.ok) throw new Error('invalid point');
    for (const variant of ['bare', 'clamp', 'damped'] as const) {
      const run = runVariant(at.scenario, variant);
      expect(run.orbit).toBe('settled');
      expect(run.cycles).toBeLessThan(STUDY_POINT_CYCLE_BUDGET / 3);
    }
  });
});
