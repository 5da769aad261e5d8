import { describe, expect, it } from 'vitest';
import { loadScenarioFile } from '../../src/circuit/load-scenario.js';
import { reflectedVoltage, type Scenario } from '../../src/circuit/scenario.js';
import { circuitForVariant } from '../../src/model/circuit-params.js';
import { withConstantParts } from '../../src/model/ideal-parts.js';
import { ModeModel, SWITCH_ON, type Mode } from '../../src/model/modes.js';

const FREE_RING: Mode = { drain: 'free', outputDiodeOn: true, clampDiode: 'off', channelFalling: false };
const CLAMP_CONDUCTING: Mode = { drain: 'free', outputDiodeOn: true, clampDiode: 'on', channelFalling: false };

async function demo(name: string): Promise<Scenario> {
  const loaded = await loadScenarioFile(`scenarios/${name}.json`);
  if (!loaded.ok) throw new Error(`${name} did not load`);
  return loaded.scenario;
}

// withConstantParts is the benchmark's reference for what nonlinearity alone costs: it must keep
// the physics that sets the work (loop, junction capacitance, reverse recovery) and drop only what
// makes a mode nonlinear.
describe('withConstantParts(scenario)', () => {
  it('holds Coss at its curve value at Vin + VR (ln C linear between points, read here by hand) and keeps loop, junction capacitance and reverse recovery', async () => {
    const s = await demo('bias-48v');
    const points = s.switch.drainCapacitance as ReadonlyArray<readonly [number, number]>;
    const v = s.supply.voltage + reflectedVoltage(s);
    const i = points.findIndex(([vk]) => vk >= v);
    const [v0, c0] = points[i - 1]!, [v1, c1] = points[i]!;
    const expected = Math.exp(Math.log(c0) + ((v - v0) / (v1 - v0)) * Math.log(c1 / c0));
    const constant = withConstantParts(s);
    expect(constant.switch.drainCapacitance).toBeCloseTo(expected, 20);
    expect(constant.transformer.windingCapacitance).toBe(s.transformer.windingCapacitance);
    expect(constant.clamp?.loopInductance).toBe(s.clamp?.loopInductance);
    expect(constant.clamp?.diodeRecoveryTime).toBe(s.clamp?.diodeRecoveryTime);
    expect(constant.clamp?.diodeForwardRecoveryVoltage).toBeUndefined();
    expect(constant.switch.avalancheVoltage).toBe(s.switch.avalancheVoltage);
  });

  it('makes the on-time, free-ring and clamp-conducting modes linear, where the real circuit has a nonlinear free drain', async () => {
    for (const name of ['bias-48v', 'mains-aux-12v']) {
      const s = await demo(name);
      for (const variant of ['bare', 'clamp', 'damped'] as const) {
        for (const mode of [SWITCH_ON, FREE_RING, CLAMP_CONDUCTING]) {
          expect(new ModeModel(circuitForVariant(withConstantParts(s), variant), mode).linear).toBe(true);
        }
        // With the curve, a free drain is nonlinear; pinned by the switch, it is not.
        expect(new ModeModel(circuitForVariant(s, variant), FREE_RING).linear).toBe(false);
        expect(new ModeModel(circuitForVariant(s, variant), SWITCH_ON).linear).toBe(true);
      }
    }
  });
});
