// The benchmark's exact solver (test/bench/exact/) is the yardstick of the speed targets, so it is
// checked here against something outside it: the independent RK4 reference model of
// test/oracle/reference/ (its own netlist, device logic and shooting), every metric of every
// variant of a demo with ideal parts; and its period map's Jacobian (propagators times saltation
// matrices) against central differences of the map itself.

import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { validateScenario } from '../../src/circuit/validate-scenario.js';
import { scenarioToJson } from '../../src/circuit/scenario-json.js';
import { withIdealParts } from '../../src/model/ideal-parts.js';
import type { Scenario } from '../../src/circuit/scenario.js';
import { ExactSwitchingNode, exactRun, type ExactMetrics } from '../bench/exact/exact-solver.js';
import type { Mode } from '../bench/exact/ideal-switching-node.js';
import { referenceRun } from './reference/reference-run.js';

function idealDemo(file: string): Scenario {
  const result = validateScenario(JSON.parse(readFileSync(`scenarios/${file}`, 'utf8')));
  if (!result.ok) throw new Error(`${file}: invalid`);
  return withIdealParts(result.scenario);
}

/** The reference's error budget (its own error is below 1e-8 at 100 steps per ring). */
const TOLERANCE = 1e-5;

describe('the benchmark\'s exact solver', () => {
  const scenario = idealDemo('gate-drive-24v.json');
  const json = scenarioToJson(scenario);
  const volts = scenario.supply.voltage + scenario.transformer.turnsRatio * (scenario.output.voltage + scenario.output.diodeDrop);

  for (const variant of ['bare', 'clamp', 'damped'] as const) {
    it(`agrees with the RK4 reference model on every metric (${variant})`, () => {
      const exact = exactRun(scenario, variant);
      expect(exact.converged).toBe(true);
      const reference = referenceRun(json, variant, { stepsPerRing: 100 });
      const m = reference.metrics as unknown as Record<string, number | null>;
      const scales: Record<keyof ExactMetrics, number> = {
        peakDrainVoltage: volts, clampVoltageMean: volts, clampVoltageRipple: volts,
        peakPrimaryCurrent: exact.metrics.turnOffCurrent, turnOffCurrent: exact.metrics.turnOffCurrent, clampDiodePeakCurrent: exact.metrics.turnOffCurrent,
        switchTurnOnLossPower: exact.metrics.inputPower, inputPower: exact.metrics.inputPower, outputPower: exact.metrics.inputPower,
        clampResistorPower: exact.metrics.inputPower, damperResistorPower: exact.metrics.inputPower,
      };
      const compared: string[] = [];
      for (const [name, value] of Object.entries(exact.metrics) as Array<[keyof ExactMetrics, number]>) {
        const f = scenario.switch.frequency;
        const expected = name === 'inputPower' ? reference.energyBalance.supplyJoules * f
          : name === 'outputPower' ? reference.energyBalance.loadJoules * f : m[name];
        if (expected === undefined || expected === null) continue;
        expect(Math.abs(value - expected) / scales[name], name).toBeLessThan(TOLERANCE);
        compared.push(name);
      }
      // The metrics both models report: at least the peak, the turn-off current and the turn-on loss.
      expect(compared).toEqual(expect.arrayContaining(['peakDrainVoltage', 'turnOffCurrent', 'switchTurnOnLossPower', 'inputPower', 'outputPower']));
      if (variant !== 'bare') expect(compared).toEqual(expect.arrayContaining(['clampVoltageMean', 'clampResistorPower']));
    }, 60_000);
  }

  it('has the period map\'s Jacobian of its own finite differences', () => {
    const node = new ExactSwitchingNode(scenario, 'clamp');
    const settled = exactRun(scenario, 'clamp');
    expect(settled.converged).toBe(true);
    // A start near the orbit: three periods from the hand-formula start (the mode sequence is the orbit's).
    const start = new Float64Array(6);
    start[2] = 0.5; start[3] = 0.9; start[5] = 1;
    let state: { x: Float64Array; mode: Mode } = { x: start, mode: { on: false, outputDiodeOn: false, drain: 'free' } };
    for (let i = 0; i < 20; i++) state = node.period(state.x, state.mode);
    const jacobian = new Float64Array(36);
    for (let i = 0; i < 6; i++) jacobian[i * 7] = 1;
    node.period(state.x, state.mode, jacobian);
    // Columns of ip, vd and vc (im equals ip at this period start: the output diode has stopped).
    for (const j of [0, 2, 3]) {
      const step = 1e-6;
      const plus = Float64Array.from(state.x), minus = Float64Array.from(state.x);
      plus[j]! += step; minus[j]! -= step;
      if (j === 0) { plus[1]! += step; minus[1]! -= step; }
      const up = node.period(plus, state.mode).x, down = node.period(minus, state.mode).x;
      for (const i of [0, 2, 3]) {
        const difference = (up[i]! - down[i]!) / (2 * step);
        const exact = jacobian[i * 6 + j]! + (j === 0 ? jacobian[i * 6 + 1]! : 0);
        expect(Math.abs(exact - difference), `∂x${i}/∂x${j}`).toBeLessThan(1e-5 * Math.max(1, Math.abs(difference)));
      }
    }
  });
});
