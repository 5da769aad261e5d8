import { describe, expect, it } from 'vitest';
import { OrbitTracker } from '../../src/simulation/orbit.js';
import { runVariant } from '../../src/simulation/run-variant.js';
import { labScenario } from '../support/lab-scenarios.js';

function classify(sequence: (k: number) => number[], maxCycles = 2000): { verdict: string | null; cycles: number } {
  const tracker = new OrbitTracker([1, 1], 1e-6, maxCycles);
  for (let k = 0; k < maxCycles + 5; k++) {
    const verdict = tracker.push(sequence(k));
    if (verdict) return { verdict, cycles: k };
  }
  return { verdict: null, cycles: maxCycles };
}

describe('OrbitTracker.push(state) classifies the period-start sequence', () => {
  it('calls a geometrically converging sequence settled', () => {
    expect(classify((k) => [1 + 0.5 ** k, 2]).verdict).toBe('settled');
  });

  it('calls a slowly converging alternating sequence settled, not period-2', () => {
    // ρ = −0.9: x_k and x_{k−2} get close long before x_k and x_{k−1} do.
    expect(classify((k) => [1 + (-0.9) ** k, 0]).verdict).toBe('settled');
  });

  it('recognises a period-2 orbit', () => {
    expect(classify((k) => [k % 2 === 0 ? 1 : 1.3, 0]).verdict).toBe('period-2');
  });

  it('recognises a period-3 orbit', () => {
    expect(classify((k) => [[1, 1.2, 1.7][k % 3]!, 0]).verdict).toBe('period-3');
  });

  it('calls a chaotic sequence (logistic map, r = 4) non-periodic before the cap', () => {
    let x = 0.3;
    const result = classify(() => { x = 4 * x * (1 - x); return [x, 0]; });
    expect(result.verdict).toBe('non-periodic');
    expect(result.cycles).toBeLessThan(2000);
  });

  it('reports the cap when a sequence is still converging but too slowly', () => {
    expect(classify((k) => [1 + 0.999 ** k, 0], 200).verdict).toBe('cycle-cap');
  });
});

describe('runVariant on peak-current control in continuous conduction', () => {
  // Without slope compensation a perturbation of the valley current grows by −D/(1−D) per cycle:
  // stable below 50 % duty, period-doubling and chaotic above (common practice; e.g. any
  // current-mode control text).
  const ccm = (turnsRatio: number) => labScenario({
    supply: { voltage: 12 },
    transformer: { magnetizingInductance: '100u', leakageInductance: '200n', turnsRatio, primaryResistance: 0.3 },
    output: { voltage: 12 },
    switch: { peakCurrent: 3, drainCapacitance: '2n', voltageRating: 200 },
    clamp: undefined,
  });

  it('settles below 50 % duty (VR < Vin)', () => {
    const run = runVariant(ccm(0.5), 'bare');
    expect(run.orbit).toBe('settled');
    expect(run.recorder.cycles.at(-1)!.outputDiodeOnAtEnd).toBe(true);
  }, 30_000);

  it('does not report a steady state above 50 % duty (VR > Vin), and stops well before the cap', () => {
    const run = runVariant(ccm(2), 'bare');
    expect(run.orbit).not.toBe('settled');
    expect(['period-2', 'period-3', 'period-4', 'non-periodic']).toContain(run.orbit);
    expect(run.cycles).toBeLessThan(1000);
  }, 60_000);
});
