import { describe, it, expect } from 'vitest';
import { designDamper, type DamperInputs } from '../../src/equations/rc-damper.js';

// RC damper: Rs ≈ √(L/Cp), Cs ≈ 3–4 × Cp, loss ≈ Cs·V²·fsw. Todd, "Snubber Circuits: Theory,
// Design and Application", Unitrode SEM-900, 1993; Severns, "Design of Snubbers for Power Circuits"
// (neither at hand, from memory). Check values: L = 10 µH, Cp = 100 pF → Z0 = √(L/Cp) = 316 Ω
// (arithmetic on that form); the loss figures below are arithmetic on the published form.

const base: DamperInputs = { leakageInductance: 10e-6, drainCapacitance: 100e-12, frequency: 100e3, voltageStep: 200 };

describe('designDamper', () => {
  it('designDamper(10 µH, 100 pF) gives Rs = Z0 = 316 Ω (√(L/Cp), Todd SEM-900; arithmetic)', () => {
    const design = designDamper(base);
    expect(design.characteristicImpedance).toBeCloseTo(316.2, 1);
    expect(design.resistance).toBe(design.characteristicImpedance);
  });

  it('designDamper without capacitanceRatio takes Cs = 4 × Cp = 400 pF, and the loss 400 pF × (200 V)² × 100 kHz = 1.6 W (Todd; Severns)', () => {
    const design = designDamper(base);
    expect(design.capacitance).toBeCloseTo(400e-12, 20);
    expect(design.lossPower).toBeCloseTo(1.6, 12);
  });

  it('designDamper(capacitanceRatio 3) gives Cs = 300 pF and 1.2 W, the lower end of the sources\' 3–4', () => {
    const design = designDamper({ ...base, capacitanceRatio: 3 });
    expect(design.capacitance).toBeCloseTo(300e-12, 20);
    expect(design.lossPower).toBeCloseTo(1.2, 12);
    expect(design.resistance).toBeCloseTo(316.2, 1);
  });

  it('designDamper loss goes with V² and fsw and does not depend on the leakage inductance', () => {
    const reference = designDamper(base).lossPower;
    expect(designDamper({ ...base, voltageStep: 400 }).lossPower).toBeCloseTo(4 * reference, 12);
    expect(designDamper({ ...base, frequency: 65e3 }).lossPower).toBeCloseTo(0.65 * reference, 12);
    const otherLeakage = designDamper({ ...base, leakageInductance: 40e-6 });
    expect(otherLeakage.lossPower).toBeCloseTo(reference, 12);
    // Four times the inductance doubles the characteristic impedance.
    expect(otherLeakage.resistance).toBeCloseTo(632.5, 1);
  });

  it('designDamper(2.2 µH, 470 pF, 300 V, 65 kHz) gives Rs = 68.4 Ω, Cs = 1.88 nF, 11.0 W: a damper across a large Coss is costly', () => {
    const design = designDamper({ leakageInductance: 2.2e-6, drainCapacitance: 470e-12, frequency: 65e3, voltageStep: 300 });
    expect(design.resistance).toBeCloseTo(68.42, 2);
    expect(design.capacitance).toBeCloseTo(1.88e-9, 15);
    expect(design.lossPower).toBeCloseTo(11.0, 1);
  });

  it.each([
    ['leakageInductance', { ...base, leakageInductance: 0 }],
    ['drainCapacitance', { ...base, drainCapacitance: -100e-12 }],
    ['frequency', { ...base, frequency: Number.NaN }],
    ['voltageStep', { ...base, voltageStep: 0 }],
    ['capacitanceRatio', { ...base, capacitanceRatio: 0 }],
    ['capacitanceRatio', { ...base, capacitanceRatio: Number.POSITIVE_INFINITY }],
  ] as const)('designDamper with a bad %s throws a RangeError naming it', (field, inputs) => {
    expect(() => designDamper(inputs)).toThrow(RangeError);
    expect(() => designDamper(inputs)).toThrow(new RegExp(`^${field} must be a positive finite number`));
  });
});
