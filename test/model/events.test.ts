import { describe, expect, it } from 'vitest';
import { loadScenarioFile } from '../../src/circuit/load-scenario.js';
import { circuitForVariant } from '../../src/model/circuit-params.js';
import { SwitchingNodeModel } from '../../src/model/events.js';
import type { Mode } from '../../src/model/modes.js';
import { stateSizeFor, VC } from '../../src/model/state.js';
import { labScenario } from '../support/lab-scenarios.js';

// The event functions of a free drain read the drain voltage and the magnetizing voltage without
// evaluating the mode's other signals (a shortcut for speed): they must give, to the last bit, what
// the mode's full signals give, in every free-drain mode of a circuit with a clamp loop and one
// without. (A consistency check of two paths through the model, not a check of its physics.)

const DIODE_STATES = ['off', 'on', 'recovering'] as const;

describe('free-drain event functions', () => {
  it('equal the threshold functions written on the full signals, at 200 states per mode', async () => {
    const loaded = await loadScenarioFile('scenarios/bias-48v.json');
    if (!loaded.ok) throw new Error('bias-48v is invalid');
    const circuits = [circuitForVariant(loaded.scenario, 'damped'), circuitForVariant(labScenario(), 'damped')];
    let checked = 0;
    for (const p of circuits) {
      const model = new SwitchingNodeModel(p);
      const n = stateSizeFor(p);
      const vin = p.supplyVoltage, vf = p.clamp!.diodeDrop, vr = p.reflectedVoltage;
      const loop = p.clamp!.loopInductance > 0;
      for (const outputDiodeOn of [false, true]) {
        for (const clampDiode of loop ? DIODE_STATES : (['off'] as const)) {
          const mode: Mode = { drain: 'free', outputDiodeOn, clampDiode, channelFalling: false };
          const entry = model.entry(mode);
          let seed = 3;
          const random = (): number => { seed = (seed * 16807) % 2147483647; return seed / 2147483647 - 0.5; };
          for (let k = 0; k < 200; k++) {
            const x = Array.from({ length: n }, (_, i) => random() * (i === VC ? 200 : 5) * (1 + i));
            const s = entry.model.signals(x);
            const vd = s.drainVoltage, vm = s.magnetizingVoltage;
            for (const e of entry.events) {
              if (e.name === 'output diode on') { expect(e.g(x)).toBe(-vm - vr); checked++; }
              if (e.name === 'clamp diode on' && clampDiode === 'off' && p.clamp!.diodeCapacitance === 0) { expect(e.g(x)).toBe(vd - (vin + x[VC]!) - vf); checked++; }
            }
          }
        }
      }
    }
    // Both events, in both circuits, were met.
    expect(checked).toBeGreaterThanOrEqual(4 * 200);
  });
});
