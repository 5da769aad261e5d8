import { describe, it, expect } from 'vitest';
import { extractFromAddedCapacitor, ringFrequency, type RingParameters } from '../../src/equations/ring-extraction.js';

// Added-capacitor method: Cp = Cadd/((f1/f2)² − 1), L = 1/((2π·f1)²·Cp). Todd, "Snubber Circuits:
// Theory, Design and Application", Unitrode SEM-900, 1993; Severns, "Design of Snubbers for Power
// Circuits" (neither document at hand, from memory). Check values, arithmetic on those forms
// (not published): L = 10 µH, Cp = 100 pF → f1 = 5.033 MHz, Z0 = 316 Ω;
// adding 300 pF halves the frequency.

function expectRelativelyClose(actual: number, expected: number, relative: number): void {
  expect(Math.abs(actual - expected)).toBeLessThanOrEqual(Math.abs(expected) * relative);
}

/** The extracted parameters, failing the test with the function's own message if it refused. */
function extracted(f1: number, f2: number, addedCapacitance: number): RingParameters {
  const result = extractFromAddedCapacitor({ ringFrequency: f1, ringFrequencyWithAddedCapacitor: f2, addedCapacitance });
  if (!result.ok) throw new Error(`extractFromAddedCapacitor refused ${result.field}: ${result.message}`);
  return result;
}

describe('ringFrequency', () => {
  it('ringFrequency(10 µH, 100 pF) is 5.033 MHz (f0 = 1/(2π√(LC)): Nilsson & Riedel, Electric Circuits; arithmetic)', () => {
    expect(ringFrequency(10e-6, 100e-12) / 1e6).toBeCloseTo(5.033, 3);
  });

  it('ringFrequency(10 µH, 100 pF + 300 pF) is half of ringFrequency(10 µH, 100 pF) (f0 ∝ 1/√C: a fourfold capacitance halves it)', () => {
    expectRelativelyClose(ringFrequency(10e-6, 400e-12), ringFrequency(10e-6, 100e-12) / 2, 1e-14);
  });

  it.each([
    [0, 100e-12, 'inductance'],
    [10e-6, -1e-12, 'capacitance'],
    [Number.NaN, 100e-12, 'inductance'],
    [10e-6, Number.POSITIVE_INFINITY, 'capacitance'],
  ])('ringFrequency(%s, %s) throws a RangeError naming %s', (l, c, name) => {
    expect(() => ringFrequency(l, c)).toThrow(RangeError);
    expect(() => ringFrequency(l, c)).toThrow(new RegExp(`^${name} must be a positive finite number`));
  });
});

describe('extractFromAddedCapacitor', () => {
  it('extractFromAddedCapacitor(f1 = 5.033 MHz, f2 = f1/2, Cadd = 300 pF) gives Cp = 100 pF, L = 10 µH, Z0 = 316 Ω (Todd SEM-900; arithmetic on its form)', () => {
    const f1 = ringFrequency(10e-6, 100e-12);
    const result = extracted(f1, f1 / 2, 300e-12);
    expectRelativelyClose(result.parasiticCapacitance, 100e-12, 1e-12);
    expectRelativelyClose(result.inductance, 10e-6, 1e-12);
    expect(result.characteristicImpedance).toBeCloseTo(316.2, 1);
  });

  it('extractFromAddedCapacitor with the rounded bench readings 5.033 MHz and 2.516 MHz stays within 0.1 percent of 100 pF and 10 µH', () => {
    const result = extracted(5.033e6, 2.5165e6, 300e-12);
    expectRelativelyClose(result.parasiticCapacitance, 100e-12, 1e-3);
    expectRelativelyClose(result.inductance, 10e-6, 1e-3);
  });

  it('extractFromAddedCapacitor round trip (L, Cp) → (f1, f2) → (L, Cp, Z0) over a grid of 100 nH–1 mH, 1 pF–10 nF, Cadd 0.1–10 × Cp', () => {
    const failures: string[] = [];
    for (const inductance of [100e-9, 1e-6, 4.7e-6, 22e-6, 150e-6, 1e-3]) {
      for (const capacitance of [1e-12, 10e-12, 68e-12, 470e-12, 2.2e-9, 10e-9]) {
        for (const ratio of [0.1, 0.5, 1, 3, 10]) {
          const added = ratio * capacitance;
          const f1 = ringFrequency(inductance, capacitance);
          const f2 = ringFrequency(inductance, capacitance + added);
          const back = extracted(f1, f2, added);
          const ok = Math.abs(back.inductance / inductance - 1) < 1e-9
            && Math.abs(back.parasiticCapacitance / capacitance - 1) < 1e-9
            && Math.abs(back.characteristicImpedance / Math.sqrt(inductance / capacitance) - 1) < 1e-9;
          if (!ok) failures.push(`L ${inductance}, Cp ${capacitance}, Cadd ${added}: got L ${back.inductance}, Cp ${back.parasiticCapacitance}`);
        }
      }
    }
    expect(failures).toEqual([]);
  });

  it('extractFromAddedCapacitor round trip with 500 seeded random (L, Cp, Cadd), log-uniform', () => {
    // mulberry32, seeded so a failure reproduces.
    let state = 1993;
    const random = (): number => {
      state = (state + 0x6d2b79f5) >>> 0;
      let t = state;
      t = Math.imul(t ^ (t >>> 15), t | 1);
      t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
      return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
    };
    const logUniform = (low: number, high: number): number => low * (high / low) ** random();
    const failures: string[] = [];
    for (let i = 0; i < 500; i++) {
      const inductance = logUniform(50e-9, 5e-3);
      const capacitance = logUniform(0.5e-12, 50e-9);
      const added = capacitance * logUniform(0.05, 20);
      const back = extracted(ringFrequency(inductance, capacitance), ringFrequency(inductance, capacitance + added), added);
      // The ratio f1/f2 loses a few digits when Cadd is small against Cp: allow 1e-8.
      if (Math.abs(back.inductance / inductance - 1) > 1e-8 || Math.abs(back.parasiticCapacitance / capacitance - 1) > 1e-8) {
        failures.push(`L ${inductance}, Cp ${capacitance}, Cadd ${added}: got L ${back.inductance}, Cp ${back.parasiticCapacitance}`);
      }
    }
    expect(failures).toEqual([]);
  });

  it('extractFromAddedCapacitor(f2 ≥ f1) is refused with field ringFrequencyWithAddedCapacitor', () => {
    for (const f2 of [5e6, 6e6]) {
      const result = extractFromAddedCapacitor({ ringFrequency: 5e6, ringFrequencyWithAddedCapacitor: f2, addedCapacitance: 300e-12 });
      expect(result).toMatchObject({ ok: false, field: 'ringFrequencyWithAddedCapacitor' });
      if (!result.ok) expect(result.message).toMatch(/must be below ringFrequency/);
    }
  });

  it.each([
    ['ringFrequency', { ringFrequency: 0, ringFrequencyWithAddedCapacitor: 2e6, addedCapacitance: 300e-12 }],
    ['ringFrequency', { ringFrequency: Number.NaN, ringFrequencyWithAddedCapacitor: 2e6, addedCapacitance: 300e-12 }],
    ['ringFrequencyWithAddedCapacitor', { ringFrequency: 5e6, ringFrequencyWithAddedCapacitor: -2e6, addedCapacitance: 300e-12 }],
    ['addedCapacitance', { ringFrequency: 5e6, ringFrequencyWithAddedCapacitor: 2e6, addedCapacitance: 0 }],
    ['addedCapacitance', { ringFrequency: 5e6, ringFrequencyWithAddedCapacitor: 2e6, addedCapacitance: Number.POSITIVE_INFINITY }],
  ] as const)('extractFromAddedCapacitor with a bad %s is refused naming that field', (field, measurement) => {
    const result = extractFromAddedCapacitor(measurement);
    expect(result).toMatchObject({ ok: false, field });
    if (!result.ok) expect(result.message).toMatch(new RegExp(`^${field} must be a positive finite number`));
  });
});
