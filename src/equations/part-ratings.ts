// Typical ratings of thick-film chip resistors and the derating a design keeps from them.
// Case ratings: typical values of the IEC 60115-8 family (sectional specification for SMD fixed
// resistors), from memory; a given part's datasheet governs. 2010 parts
// come as 1/2 W and 3/4 W: the table takes 1/2 W, which is safe for both.
// Power derating curve: full power up to 70 °C ambient, falling linearly to zero at 155 °C (same
// family, from memory of the usual datasheet curve).
// Design margins: 50 % of the rated power and 80 % of the element voltage are common practice;
// IPC-9592B asks for derating on power-conversion parts (from memory; no figures taken from it).
//
// Why the voltage limit can bind first: a resistor's rated voltage is the lower of √(P·R) and the
// limiting element voltage, so above R = Vmax²/P (40 kΩ for a 2512 at 1 W and 200 V) the element
// voltage is reached before the rated power. High-value clamp and bleeder resistors live there.

export type ChipResistorCaseName = '0402' | '0603' | '0805' | '1206' | '2010' | '2512';

export type ChipResistorCase = {
  name: ChipResistorCaseName;
  /** Rated power up to 70 °C ambient, in W. */
  ratedPower: number;
  /** Limiting element voltage (maximum working voltage), in V. */
  maxWorkingVoltage: number;
};

/** Smallest case first; power and voltage ratings never decrease down the list. */
export const CHIP_RESISTOR_CASES: readonly ChipResistorCase[] = [
  { name: '0402', ratedPower: 1 / 16, maxWorkingVoltage: 50 },
  { name: '0603', ratedPower: 1 / 10, maxWorkingVoltage: 75 },
  { name: '0805', ratedPower: 1 / 8, maxWorkingVoltage: 150 },
  { name: '1206', ratedPower: 1 / 4, maxWorkingVoltage: 200 },
  { name: '2010', ratedPower: 1 / 2, maxWorkingVoltage: 200 },
  { name: '2512', ratedPower: 1, maxWorkingVoltage: 200 },
];

/**
 * Through-hole power resistors, for a clamp resistor a few chip parts cannot carry: axial metal film
 * (0207, 0.6 W) and metal oxide (1–5 W), typical ratings at 70 °C (common practice; the part's
 * datasheet governs). Their derating curves usually run to zero above 155 °C; the chip curve is kept,
 * which is on the safe side.
 */
export const THROUGH_HOLE_RESISTORS: readonly ResistorCase[] = [
  { name: 'axial metal film 0.6 W', ratedPower: 0.6, maxWorkingVoltage: 350 },
  { name: 'metal oxide 1 W', ratedPower: 1, maxWorkingVoltage: 350 },
  { name: 'metal oxide 2 W', ratedPower: 2, maxWorkingVoltage: 500 },
  { name: 'metal oxide 3 W', ratedPower: 3, maxWorkingVoltage: 500 },
  { name: 'metal oxide 5 W', ratedPower: 5, maxWorkingVoltage: 750 },
];

/** A resistor type: its name, rated power to 70 °C (W) and element voltage (V). */
export type ResistorCase = { name: string; ratedPower: number; maxWorkingVoltage: number };

export const FULL_POWER_UP_TO_CELSIUS = 70;
export const ZERO_POWER_AT_CELSIUS = 155;
/** Fraction of the (temperature-derated) power rating a design uses: common practice. */
export const DEFAULT_POWER_DERATING = 0.5;
/** Fraction of the limiting element voltage a design uses: common practice. */
export const DEFAULT_VOLTAGE_DERATING = 0.8;
/**
 * Per-resistor dissipation above which a chip resistor is flagged as a board hot spot. Keeping each
 * small chip resistor to tens of milliwatts is common practice; 0.1 W is where "tens" ends.
 */
export const HOT_SPOT_POWER = 0.1;
export const MAX_SERIES_COUNT = 8;

/** Ambient assumed when none is given: the knee of the curve, so any ambient up to it gives the same answer. */
const DEFAULT_AMBIENT_CELSIUS = FULL_POWER_UP_TO_CELSIUS;

/**
 * Keeps a quotient like 0.3/0.1 = 2.9999999999999996 or its mirror image from costing an extra
 * resistor: a per-resistor stress this close to the allowed value counts as within it.
 */
const RATING_TOLERANCE = 1e-12;

/** The case's table entry; RangeError for a name not in the table. */
export function chipResistorCase(caseName: ChipResistorCaseName): ChipResistorCase {
  const found = CHIP_RESISTOR_CASES.find((entry) => entry.name === caseName);
  if (found === undefined) {
    throw new RangeError(`caseName must be one of ${CHIP_RESISTOR_CASES.map((entry) => entry.name).join(', ')}, got ${String(caseName)}`);
  }
  return found;
}

/** Fraction of the rated power allowed at an ambient: 1 up to 70 °C, linear to 0 at 155 °C. */
export function powerDeratingFactor(ambientCelsius: number): number {
  if (typeof ambientCelsius !== 'number' || !Number.isFinite(ambientCelsius)) {
    throw new RangeError(`ambientCelsius must be a finite number, got ${String(ambientCelsius)}`);
  }
  if (ambientCelsius <= FULL_POWER_UP_TO_CELSIUS) return 1;
  if (ambientCelsius >= ZERO_POWER_AT_CELSIUS) return 0;
  return (ZERO_POWER_AT_CELSIUS - ambientCelsius) / (ZERO_POWER_AT_CELSIUS - FULL_POWER_UP_TO_CELSIUS);
}

/** The case's power rating at an ambient, in W, before any design margin. */
export function resistorPowerRating(caseName: ChipResistorCaseName, ambientCelsius: number): number {
  return chipResistorCase(caseName).ratedPower * powerDeratingFactor(ambientCelsius);
}

/** True when one resistor dissipates more than HOT_SPOT_POWER (common practice, see there). */
export function isHotSpot(powerPerResistor: number): boolean {
  return powerPerResistor > HOT_SPOT_POWER;
}

export type ResistorArrangementRequest = {
  /** Total resistance wanted, in Ω. */
  resistance: number;
  /** Total dissipation, in W. */
  power: number;
  /** Voltage across the whole string, in V (its highest steady value, e.g. the clamp voltage). */
  voltage: number;
  /** Default 70 °C; any ambient at or below it gives the same answer. */
  ambientCelsius?: number;
  /** Fraction of the temperature-derated power each resistor may use; default 0.5 (common practice). */
  powerDerating?: number;
  /** Fraction of the element voltage each resistor may see; default 0.8 (common practice). */
  voltageDerating?: number;
  /** Most resistors allowed in series, 1 to 8; default 8. A lower limit trades small cases for fewer parts. */
  maxCount?: number;
  /** Types to choose from, smallest first; default the chip cases. */
  cases?: readonly ResistorCase[];
};

/** Which limit set the count: 'none' when one resistor is within both. */
export type BindingLimit = 'power' | 'voltage' | 'both' | 'none';

export type ResistorArrangement =
  | {
    ok: true;
    caseName: string;
    /** Equal resistors in series. */
    count: number;
    /** resistance / count, unrounded (rounding to a preferred value is the caller's step). */
    resistancePerResistor: number;
    powerPerResistor: number;
    voltagePerResistor: number;
    /** Power each resistor may dissipate: rating at the ambient × powerDerating, in W. */
    allowedPower: number;
    /** Voltage each resistor may see: element voltage × voltageDerating, in V. */
    allowedVoltage: number;
    /** Resistors the power limit alone needs in this case. */
    countForPower: number;
    /** Resistors the voltage limit alone needs in this case. */
    countForVoltage: number;
    bindingLimit: BindingLimit;
    /** powerPerResistor above HOT_SPOT_POWER (common practice). */
    hotSpot: boolean;
  }
  | { ok: false; limitedBy: 'power' | 'voltage' | 'both'; reason: string };

/**
 * The smallest case, and for it the fewest equal resistors in series (1 to maxCount), with each
 * resistor's power and voltage within the derated ratings. Smallest case first, because spreading
 * the loss over more small parts is what keeps each one cool. Throws a RangeError naming a bad field.
 */
export function chooseResistorArrangement(request: ResistorArrangementRequest): ResistorArrangement {
  const { resistance, power, voltage } = request;
  const ambientCelsius = request.ambientCelsius ?? DEFAULT_AMBIENT_CELSIUS;
  const powerDerating = request.powerDerating ?? DEFAULT_POWER_DERATING;
  const voltageDerating = request.voltageDerating ?? DEFAULT_VOLTAGE_DERATING;
  const maxCount = request.maxCount ?? MAX_SERIES_COUNT;
  requireFinite(resistance, 'resistance', 'positive');
  requireFinite(power, 'power', 'non-negative');
  requireFinite(voltage, 'voltage', 'non-negative');
  requireFraction(powerDerating, 'powerDerating');
  requireFraction(voltageDerating, 'voltageDerating');
  if (!Number.isInteger(maxCount) || maxCount < 1 || maxCount > MAX_SERIES_COUNT) {
    throw new RangeError(`maxCount must be an integer from 1 to ${MAX_SERIES_COUNT}, got ${String(maxCount)}`);
  }
  const temperatureFactor = powerDeratingFactor(ambientCelsius);

  const table = request.cases ?? CHIP_RESISTOR_CASES;
  const needs = (entry: ResistorCase) => {
    const allowedPower = entry.ratedPower * temperatureFactor * powerDerating;
    const allowedVoltage = entry.maxWorkingVoltage * voltageDerating;
    return {
      allowedPower,
      allowedVoltage,
      countForPower: countWithin(power, allowedPower),
      countForVoltage: countWithin(voltage, allowedVoltage),
    };
  };

  for (const entry of table) {
    const need = needs(entry);
    const count = Math.max(need.countForPower, need.countForVoltage);
    if (count > maxCount) continue;
    const powerPerResistor = power / count;
    return {
      ok: true,
      caseName: entry.name,
      count,
      resistancePerResistor: resistance / count,
      powerPerResistor,
      voltagePerResistor: voltage / count,
      ...need,
      bindingLimit: bindingLimit(need.countForPower, need.countForVoltage),
      hotSpot: isHotSpot(powerPerResistor),
    };
  }

  // The largest case has the highest ratings of all, so what it lacks every case lacks.
  const largest = table[table.length - 1];
  if (largest === undefined) throw new Error('internal: empty chip resistor table');
  const need = needs(largest);
  const powerFails = need.countForPower > maxCount;
  const voltageFails = need.countForVoltage > maxCount;
  const limitedBy = powerFails && voltageFails ? 'both' : powerFails ? 'power' : 'voltage';
  const parts: string[] = [];
  if (powerFails) {
    parts.push(temperatureFactor === 0
      ? `no power rating is left at ${ambientCelsius} °C (zero from ${ZERO_POWER_AT_CELSIUS} °C)`
      : `${power} W needs ${need.countForPower} × ${largest.name} at ${fmt(need.allowedPower)} W each (${ambientCelsius} °C, ${powerDerating} of rating)`);
  }
  if (voltageFails) {
    parts.push(`${voltage} V needs ${need.countForVoltage} × ${largest.name} at ${fmt(need.allowedVoltage)} V each (${voltageDerating} of ${largest.maxWorkingVoltage} V)`);
  }
  return { ok: false, limitedBy, reason: `no arrangement of up to ${maxCount} resistors in series: ${parts.join('; ')}` };
}

/**
 * Fraction of a capacitor's rated voltage left unused: 1 − working/rated (0.2 for 200 V on a 250 V
 * part), negative when the working voltage exceeds the rating. Which margin is enough is the
 * caller's rule (20–30 % is common practice for drain-node parts).
 */
export function capacitorVoltageMargin(workingVoltage: number, ratedVoltage: number): number {
  requireFinite(workingVoltage, 'workingVoltage', 'non-negative');
  requireFinite(ratedVoltage, 'ratedVoltage', 'positive');
  return 1 - workingVoltage / ratedVoltage;
}

/** Fewest equal shares of `total` that each stay within `allowed`; Infinity when nothing is allowed. */
function countWithin(total: number, allowed: number): number {
  if (total === 0) return 1;
  if (allowed <= 0) return Number.POSITIVE_INFINITY;
  return Math.max(1, Math.ceil((total / allowed) * (1 - RATING_TOLERANCE)));
}

function bindingLimit(countForPower: number, countForVoltage: number): BindingLimit {
  if (countForPower === 1 && countForVoltage === 1) return 'none';
  if (countForPower === countForVoltage) return 'both';
  return countForPower > countForVoltage ? 'power' : 'voltage';
}

function fmt(value: number): string {
  return Number(value.toPrecision(4)).toString();
}

function requireFinite(input: number, name: string, sign: 'positive' | 'non-negative'): void {
  const ok = typeof input === 'number' && Number.isFinite(input) && (sign === 'positive' ? input > 0 : input >= 0);
  if (!ok) throw new RangeError(`${name} must be a ${sign} finite number, got ${String(input)}`);
}

function requireFraction(input: number, name: string): void {
  if (typeof input !== 'number' || !Number.isFinite(input) || input <= 0 || input > 1) {
    throw new RangeError(`${name} must be a fraction in (0, 1], got ${String(input)}`);
  }
}
