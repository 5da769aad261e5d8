import { describe, it, expect } from 'vitest';
import {
  CHIP_RESISTOR_CASES,
  THROUGH_HOLE_RESISTORS,
  capacitorVoltageMargin,
  chipResistorCase,
  chooseResistorArrangement,
  isHotSpot,
  powerDeratingFactor,
  resistorPowerRating,
  type ChipResistorCaseName,
  type ResistorArrangement,
  type ResistorArrangementRequest,
} from '../../src/equations/part-ratings.js';

// Case ratings: typical thick-film values of the IEC 60115-8 family (IEC 60115-8, "Fixed resistors
// for use in electronic equipment – Part 8: Sectional specification: Fixed surface mount
// resistors", typical manufacturer values, from memory; 2010 taken at 1/2 W of the typical
// 1/2–3/4 W). Derating curve: full power to 70 °C, zero at 155 °C (same family, typical). 50 %
// power and 80 % voltage margins: common practice. Tens of milliwatts per small chip resistor:
// common practice.

/** The arrangement, failing the test with the function's own reason if it found none. */
function arranged(request: ResistorArrangementRequest): Extract<ResistorArrangement, { ok: true }> {
  const result = chooseResistorArrangement(request);
  if (!result.ok) throw new Error(`chooseResistorArrangement found none: ${result.reason}`);
  return result;
}

describe('CHIP_RESISTOR_CASES', () => {
  it('CHIP_RESISTOR_CASES lists 0402 1/16 W 50 V, 0603 1/10 W 75 V, 0805 1/8 W 150 V, 1206 1/4 W 200 V, 2010 1/2 W 200 V, 2512 1 W 200 V (IEC 60115-8 family, typical values, from memory)', () => {
    expect(CHIP_RESISTOR_CASES.map((c) => [c.name, c.ratedPower, c.maxWorkingVoltage])).toEqual([
      ['0402', 0.0625, 50],
      ['0603', 0.1, 75],
      ['0805', 0.125, 150],
      ['1206', 0.25, 200],
      ['2010', 0.5, 200],
      ['2512', 1, 200],
    ]);
  });

  it('chipResistorCase(unknown case) throws a RangeError naming caseName', () => {
    expect(chipResistorCase('0805').ratedPower).toBe(0.125);
    expect(() => chipResistorCase('1210' as ChipResistorCaseName)).toThrow(/^caseName must be one of 0402, 0603/);
  });
});

describe('resistorPowerRating', () => {
  it('resistorPowerRating(2512, T) is 1 W at 70 °C, 0.5 W at 112.5 °C and 0 W at 155 °C (IEC 60115-8 family: linear derating from 70 °C to 155 °C)', () => {
    expect(resistorPowerRating('2512', 70)).toBe(1);
    expect(resistorPowerRating('2512', 112.5)).toBeCloseTo(0.5, 12);
    expect(resistorPowerRating('2512', 155)).toBe(0);
  });

  it('resistorPowerRating holds the full rating below 70 °C and stays at zero above 155 °C', () => {
    expect(resistorPowerRating('0603', -40)).toBe(0.1);
    expect(resistorPowerRating('0603', 25)).toBe(0.1);
    expect(resistorPowerRating('0603', 180)).toBe(0);
  });

  it('resistorPowerRating(1206, T) falls on the straight line between (70 °C, 1/4 W) and (155 °C, 0) at every degree', () => {
    const off: number[] = [];
    for (let t = 70; t <= 155; t++) {
      if (Math.abs(resistorPowerRating('1206', t) - 0.25 * (155 - t) / 85) > 1e-15) off.push(t);
    }
    expect(off).toEqual([]);
    expect(resistorPowerRating('1206', 100)).toBeCloseTo(0.25 * 55 / 85, 15);
  });

  it('powerDeratingFactor(NaN) throws a RangeError naming ambientCelsius', () => {
    expect(() => powerDeratingFactor(Number.NaN)).toThrow(/^ambientCelsius must be a finite number/);
    expect(() => resistorPowerRating('0402', Number.POSITIVE_INFINITY)).toThrow(RangeError);
  });
});

describe('chooseResistorArrangement', () => {
  it('chooseResistorArrangement(15 kΩ, 1.5 W, 150 V) — the AN-4147 worked clamp — needs 6 × 2010 at 0.25 W each (power binds; the worked clamp of Choi, AN-4147, 2006, from memory)', () => {
    const result = arranged({ resistance: 15e3, power: 1.5, voltage: 150 });
    expect(result).toMatchObject({ caseName: '2010', count: 6, countForPower: 6, countForVoltage: 1, bindingLimit: 'power', hotSpot: true });
    expect(result.resistancePerResistor).toBe(2500);
    expect(result.powerPerResistor).toBe(0.25);
    expect(result.voltagePerResistor).toBe(25);
    expect(result.allowedPower).toBe(0.25);
    expect(result.allowedVoltage).toBe(160);
  });

  it('chooseResistorArrangement(50 kΩ, 1 W, 250 V) with the default margins gives 8 × 1206; power needs 8 there, voltage only 2', () => {
    const result = arranged({ resistance: 50e3, power: 1, voltage: 250 });
    expect(result).toMatchObject({ caseName: '1206', count: 8, countForPower: 8, countForVoltage: 2, bindingLimit: 'power' });
    expect(result.resistancePerResistor).toBe(6250);
    expect(result.voltagePerResistor).toBe(31.25);
    expect(result.hotSpot).toBe(true);
  });

  it('chooseResistorArrangement(50 kΩ, 1 W, 250 V) with no power margin and one resistor is refused for voltage: a 2512 takes the watt but not 250 V against 160 V', () => {
    const result = chooseResistorArrangement({ resistance: 50e3, power: 1, voltage: 250, powerDerating: 1, maxCount: 1 });
    expect(result).toMatchObject({ ok: false, limitedBy: 'voltage' });
    if (!result.ok) expect(result.reason).toMatch(/250 V needs 2 × 2512 at 160 V each/);
  });

  it('chooseResistorArrangement(50 kΩ, 1 W, 250 V, no power margin, at most 2) splits into 2 × 2010, exactly at 0.5 W each, both limits needing 2', () => {
    const result = arranged({ resistance: 50e3, power: 1, voltage: 250, powerDerating: 1, maxCount: 2 });
    expect(result).toMatchObject({ caseName: '2010', count: 2, bindingLimit: 'both', powerPerResistor: 0.5, voltagePerResistor: 125 });
  });

  it('chooseResistorArrangement(1 MΩ, 0.16 W, 400 V) — a bleeder — is set by voltage: 7 × 0603 at 57 V, where power alone needs 4', () => {
    const result = arranged({ resistance: 1e6, power: 0.16, voltage: 400 });
    // 0402 would need 10 for its 40 V (80 % of 50 V), more than 8.
    expect(result).toMatchObject({ caseName: '0603', count: 7, countForPower: 4, countForVoltage: 7, bindingLimit: 'voltage', hotSpot: false });
    expect(result.voltagePerResistor).toBeCloseTo(57.14, 2);
    expect(result.voltagePerResistor).toBeLessThanOrEqual(result.allowedVoltage);
    expect(result.powerPerResistor).toBeCloseTo(0.02286, 5);
  });

  it('chooseResistorArrangement at 112.5 °C has half the power: the 15 kΩ clamp moves from 6 × 2010 to 6 × 2512', () => {
    const result = arranged({ resistance: 15e3, power: 1.5, voltage: 150, ambientCelsius: 112.5 });
    expect(result).toMatchObject({ caseName: '2512', count: 6 });
    expect(result.allowedPower).toBeCloseTo(0.25, 12);
  });

  it('chooseResistorArrangement at 155 °C is refused for power: no rating is left', () => {
    const result = chooseResistorArrangement({ resistance: 15e3, power: 1.5, voltage: 150, ambientCelsius: 155 });
    expect(result).toMatchObject({ ok: false, limitedBy: 'power' });
    if (!result.ok) expect(result.reason).toMatch(/no power rating is left at 155 °C/);
  });

  it('chooseResistorArrangement(2 W at 2 kV) is refused for both power and voltage, each reason given', () => {
    const result = chooseResistorArrangement({ resistance: 2e6, power: 10, voltage: 2000 });
    expect(result).toMatchObject({ ok: false, limitedBy: 'both' });
    if (!result.ok) {
      expect(result.reason).toMatch(/10 W needs 20 × 2512 at 0\.5 W each/);
      expect(result.reason).toMatch(/2000 V needs 13 × 2512 at 160 V each/);
    }
  });

  it('chooseResistorArrangement(0.1 × 3 W over 0603 at full rating) counts 3, not 4: the quotient 3.0000000000000004 is not a fourth resistor', () => {
    const power = 0.1 * 3;
    expect(power / 0.1).toBeGreaterThan(3); // the floating-point case the tolerance exists for
    const result = arranged({ resistance: 300, power, voltage: 9, powerDerating: 1, maxCount: 3 });
    expect(result).toMatchObject({ caseName: '0603', count: 3 });
  });

  it('chooseResistorArrangement(no power, no voltage) is one 0402 with no binding limit', () => {
    expect(arranged({ resistance: 1e3, power: 0, voltage: 0 })).toMatchObject({ caseName: '0402', count: 1, bindingLimit: 'none', hotSpot: false });
  });

  it('chooseResistorArrangement results keep every resistor within both derated limits over a grid of requests', () => {
    const failures: string[] = [];
    for (const resistance of [100, 4.7e3, 47e3, 470e3]) {
      for (const voltage of [10, 50, 150, 300, 600]) {
        for (const ambientCelsius of [25, 85, 125]) {
          const power = voltage ** 2 / resistance;
          const result = chooseResistorArrangement({ resistance, power, voltage, ambientCelsius });
          if (!result.ok) continue;
          const within = result.powerPerResistor <= resistorPowerRating(result.caseName as ChipResistorCaseName, ambientCelsius) * 0.5 * (1 + 1e-12)
            && result.voltagePerResistor <= chipResistorCase(result.caseName as ChipResistorCaseName).maxWorkingVoltage * 0.8
            && result.count >= 1 && result.count <= 8
            && Math.abs(result.resistancePerResistor * result.count - resistance) <= resistance * 1e-12;
          // One resistor fewer in the same case must break a limit, or the count is not the fewest.
          const fewer = result.count - 1;
          const fewerFails = fewer === 0
            || power / fewer > result.allowedPower * (1 + 1e-12)
            || voltage / fewer > result.allowedVoltage * (1 + 1e-12);
          if (!within || !fewerFails) failures.push(`${resistance} Ω, ${voltage} V, ${ambientCelsius} °C → ${result.count} × ${result.caseName}`);
        }
      }
    }
    expect(failures).toEqual([]);
  });

  it.each([
    ['resistance', { resistance: 0, power: 1, voltage: 100 }],
    ['power', { resistance: 1e3, power: -1, voltage: 100 }],
    ['voltage', { resistance: 1e3, power: 1, voltage: Number.NaN }],
    ['ambientCelsius', { resistance: 1e3, power: 1, voltage: 100, ambientCelsius: Number.NaN }],
    ['powerDerating', { resistance: 1e3, power: 1, voltage: 100, powerDerating: 0 }],
    ['powerDerating', { resistance: 1e3, power: 1, voltage: 100, powerDerating: 1.2 }],
    ['voltageDerating', { resistance: 1e3, power: 1, voltage: 100, voltageDerating: -0.8 }],
    ['maxCount', { resistance: 1e3, power: 1, voltage: 100, maxCount: 0 }],
    ['maxCount', { resistance: 1e3, power: 1, voltage: 100, maxCount: 9 }],
    ['maxCount', { resistance: 1e3, power: 1, voltage: 100, maxCount: 2.5 }],
  ] as const)('chooseResistorArrangement with a bad %s throws a RangeError naming it', (field, request) => {
    expect(() => chooseResistorArrangement(request)).toThrow(RangeError);
    expect(() => chooseResistorArrangement(request)).toThrow(new RegExp(`^${field} must be`));
  });
});

describe('isHotSpot', () => {
  it('isHotSpot(power per resistor) flags above 0.1 W only: tens of milliwatts are fine (common practice)', () => {
    expect(isHotSpot(0.05)).toBe(false);
    expect(isHotSpot(0.1)).toBe(false);
    expect(isHotSpot(0.101)).toBe(true);
  });
});

describe('capacitorVoltageMargin', () => {
  it('capacitorVoltageMargin(working, rated) is 1 − working/rated: 0.2 for 200 V on 250 V, 0 at the rating, negative above it', () => {
    expect(capacitorVoltageMargin(200, 250)).toBeCloseTo(0.2, 15);
    expect(capacitorVoltageMargin(250, 250)).toBe(0);
    expect(capacitorVoltageMargin(300, 250)).toBeCloseTo(-0.2, 15);
    expect(capacitorVoltageMargin(0, 50)).toBe(1);
  });

  it('capacitorVoltageMargin with a bad voltage throws a RangeError naming it', () => {
    expect(() => capacitorVoltageMargin(100, 0)).toThrow(/^ratedVoltage must be a positive finite number/);
    expect(() => capacitorVoltageMargin(-1, 100)).toThrow(/^workingVoltage must be a non-negative finite number/);
    expect(() => capacitorVoltageMargin(Number.NaN, 100)).toThrow(RangeError);
  });
});

describe('chooseResistorArrangement over through-hole power resistors', () => {
  it('carries 3.35 W at 60 V in two 5 W metal-oxide parts at half their rating (typical ratings, common practice), where chips need seven 2512s', () => {
    const chips = chooseResistorArrangement({ resistance: 1e3, power: 3.35, voltage: 60 });
    expect(chips.ok && `${chips.count} × ${chips.caseName}`).toBe('7 × 2512');
    // The design asks for the fewest parts: at most two here.
    const th = chooseResistorArrangement({ resistance: 1e3, power: 3.35, voltage: 60, cases: THROUGH_HOLE_RESISTORS, maxCount: 2 });
    expect(th.ok && th.count).toBe(2);
    expect(th.ok && th.caseName).toBe('metal oxide 5 W');
    expect(th.ok && th.powerPerResistor).toBeLessThanOrEqual(0.5 * 5);
  });
});
