// What the header block of a scope's CSV export can tell: the sample interval (or rate), where
// time starts, the unit of the time column, and the column names (the last header line, when it
// has as many fields as the data rows). Scopes spell these differently; the keys below are the
// common spellings (from memory), matched loosely.

/** Seconds per time unit. */
const TIME_UNITS: Readonly<Record<string, number>> = {
  s: 1, sec: 1, second: 1, seconds: 1, ms: 1e-3, us: 1e-6, 'µs': 1e-6, 'μs': 1e-6, ns: 1e-9, ps: 1e-12,
};

export function timeUnitSeconds(unit: string): number | undefined {
  return TIME_UNITS[unit.trim().toLowerCase().replace(/^μ/, 'µ')] ?? TIME_UNITS[unit.trim()];
}

/** A time unit written in a column name: "Time (us)", "TIME[ns]", "t / s". */
export function unitInName(name: string): number | undefined {
  const m = /(?:[([]\s*([a-zµμ]+)\s*[)\]]|\/\s*([a-zµμ]+)\s*$)/i.exec(name);
  const unit = m?.[1] ?? m?.[2];
  return unit === undefined ? undefined : timeUnitSeconds(unit);
}

/** Volts per voltage unit. */
const VOLTAGE_UNITS: Readonly<Record<string, number>> = { uv: 1e-6, 'µv': 1e-6, mv: 1e-3, v: 1, kv: 1e3 };

export function voltageUnitVolts(unit: string): number | undefined {
  return VOLTAGE_UNITS[unit.trim().toLowerCase().replace(/^μ/, 'µ')];
}

/** A voltage unit written in a column name: "CH1 (mV)", "Drain [V]". */
export function voltageUnitInName(name: string): number | undefined {
  const m = /[([]\s*([a-zµμ]+)\s*[)\]]/i.exec(name);
  return m ? voltageUnitVolts(m[1]!) : undefined;
}

export interface HeaderInfo {
  /** Seconds between samples, from the header. */
  sampleIntervalSeconds?: number;
  /** Time of the first sample, s. */
  startSeconds?: number;
  /** Unit of the time column, seconds per unit. */
  timeUnitSeconds?: number;
  /** Unit of the voltage columns, volts per unit. */
  voltageUnitVolts?: number;
}

const INTERVAL_KEY = /^(sample\s*interval|sampling\s*(interval|period)|x\s*increment|xincr?|time\s*(step|increment|interval|resolution)|dt|horizontal\s*resolution)$/i;
const RATE_KEY = /^(sample\s*rate|sampling\s*rate|sa\s*rate)$/i;
const START_KEY = /^(x\s*origin|xorigin|xzero|start\s*time|t0|x\s*start|horizontal\s*offset)$/i;
const TIME_UNIT_KEY = /^((time|horizontal|x)[\s_-]*units?)$/i;
const VOLTAGE_UNIT_KEY = /^((vertical|voltage|y)[\s_-]*units?)$/i;

/** A value with an optional unit: "4e-10", "0,4 ns", "2.5 GS/s", "1GSa/s", "500 MHz". */
const VALUE = /^\s*([+-]?(?:\d+[.,]?\d*|[.,]\d+)(?:[eE][+-]?\d+)?)\s*([a-zA-Zµμ/]*)\s*$/;
const RATE_PREFIX: Readonly<Record<string, number>> = { '': 1, k: 1e3, K: 1e3, M: 1e6, G: 1e9, T: 1e12 };

function valueWithUnit(text: string): { value: number; unit: string } | undefined {
  const m = VALUE.exec(text);
  if (!m) return undefined;
  const value = Number(m[1]!.replace(',', '.'));
  return Number.isFinite(value) ? { value, unit: m[2] ?? '' } : undefined;
}

/** Reads one header line (already split into fields, or "key: value" / "key = value") into `info`. */
export function readHeaderLine(fields: readonly string[], info: HeaderInfo): void {
  let key = fields[0]?.trim() ?? '';
  let rest = fields.slice(1).map((f) => f.trim()).filter((f) => f !== '');
  const inline = /^([^:=]+?)\s*[:=]\s*(.+)$/.exec(key);
  if (inline && rest.length === 0) { key = inline[1]!; rest = [inline[2]!]; }
  key = key.replace(/[:=]\s*$/, '').trim();
  const raw = rest[0];
  if (raw === undefined) return;
  if (TIME_UNIT_KEY.test(key)) {
    const unit = timeUnitSeconds(raw);
    if (unit !== undefined) info.timeUnitSeconds = unit;
    return;
  }
  if (VOLTAGE_UNIT_KEY.test(key)) {
    const unit = voltageUnitVolts(raw);
    if (unit !== undefined) info.voltageUnitVolts = unit;
    return;
  }
  const parsed = valueWithUnit(raw);
  if (!parsed) return;
  if (INTERVAL_KEY.test(key)) {
    const scale = parsed.unit === '' ? 1 : timeUnitSeconds(parsed.unit);
    if (scale !== undefined && parsed.value > 0) info.sampleIntervalSeconds = parsed.value * scale;
  } else if (RATE_KEY.test(key)) {
    // "2.5GS/s", "1 GSa/s", "500MHz": a prefix, then S/s, Sa/s, Sps or Hz.
    const m = /^([kKMGT]?)(s\/s|sa\/s|sps|hz)?$/i.exec(parsed.unit);
    if (m && parsed.value > 0) info.sampleIntervalSeconds = 1 / (parsed.value * RATE_PREFIX[m[1] ?? '']!);
  } else if (START_KEY.test(key)) {
    const scale = parsed.unit === '' ? 1 : timeUnitSeconds(parsed.unit);
    if (scale !== undefined) info.startSeconds = parsed.value * scale;
  }
}

/** Names that mark the first column as time. */
export const TIME_NAME = /^\s*(time|t|sec|seconds|s)\b/i;
/** Names that mark the first column as a sample number, not time (time = start + n·interval). */
export const INDEX_NAME = /^\s*(index|sample|samples|seq|sequence|x|no\.?|#|point|points)\s*$/i;
