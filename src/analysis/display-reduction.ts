// Reduces a uniformly sampled trace for display: min and max per pixel column over a window,
// so a response stays small whatever the cycle count while every crest and trough still shows.

export interface ReducedTrace {
  /** Seconds; with reduction each column appears twice (its min, then its max). */
  timeSeconds: number[];
  values: number[];
}

/**
 * `columns` pixel columns over [startSeconds, endSeconds]. When the window holds fewer samples
 * than 2 × columns, the samples are returned as they are.
 */
export function reduceForDisplay(time: ArrayLike<number>, values: ArrayLike<number>, startSeconds: number, endSeconds: number, columns: number): ReducedTrace {
  let lo = 0;
  while (lo < time.length && time[lo]! < startSeconds) lo++;
  let hi = time.length;
  while (hi > lo && time[hi - 1]! > endSeconds) hi--;
  const count = hi - lo;
  const out: ReducedTrace = { timeSeconds: [], values: [] };
  if (count <= 2 * columns) {
    for (let i = lo; i < hi; i++) { out.timeSeconds.push(time[i]!); out.values.push(values[i]!); }
    return out;
  }
  const width = (endSeconds - startSeconds) / columns;
  let i = lo;
  for (let c = 0; c < columns; c++) {
    const columnEnd = c === columns - 1 ? Infinity : startSeconds + (c + 1) * width;
    let min = Infinity, max = -Infinity, tMin = NaN, tMax = NaN;
    for (; i < hi && time[i]! < columnEnd; i++) {
      const v = values[i]!;
      if (v < min) { min = v; tMin = time[i]!; }
      if (v > max) { max = v; tMax = time[i]!; }
    }
    if (min === Infinity) continue;
    // Keep the two in time order so the line does not double back.
    if (tMin <= tMax) { out.timeSeconds.push(tMin, tMax); out.values.push(min, max); }
    else { out.timeSeconds.push(tMax, tMin); out.values.push(max, min); }
  }
  return out;
}

/**
 * One recorded cycle of a settled orbit drawn as `copies` cycles: the grid's samples 1…S shifted
 * by whole periods after the first copy (sample 0, the left limit at the period start, once). On
 * a settled orbit the cycles differ by less than the settle tolerance, so the copies are what
 * recording them all would draw, for a fraction of the work.
 */
export function repeatCycle(time: ArrayLike<number>, values: ArrayLike<number>, periodSeconds: number, copies: number): { time: Float64Array; values: Float64Array } {
  const perCycle = time.length - 1;
  const n = copies * perCycle + 1;
  const outTime = new Float64Array(n);
  const outValues = new Float64Array(n);
  outTime[0] = time[0]!;
  outValues[0] = values[0]!;
  for (let k = 0; k < copies; k++) {
    const offset = k * periodSeconds;
    for (let j = 1; j <= perCycle; j++) {
      outTime[k * perCycle + j] = time[j]! + offset;
      outValues[k * perCycle + j] = values[j]!;
    }
  }
  return { time: outTime, values: outValues };
}

/**
 * Rounds a reduced trace for sending: times to a decimal step of at most 1 % of a column, values
 * to one of at most 1e-5 of the trace's range (far below a pixel), so that the JSON carries a few
 * digits per number instead of seventeen.
 */
export function roundForDisplay(trace: ReducedTrace, windowSeconds: number, columns: number): ReducedTrace {
  let lo = Infinity, hi = -Infinity;
  for (const v of trace.values) { if (v < lo) lo = v; if (v > hi) hi = v; }
  const range = hi > lo ? hi - lo : Math.max(Math.abs(hi), 1);
  return {
    timeSeconds: roundTo(trace.timeSeconds, windowSeconds / columns / 100),
    values: roundTo(trace.values, range * 1e-5),
  };
}

/** Above this a whole number of steps is no longer exact in a double. */
const EXACT_INTEGER = 2 ** 53;
/** Powers of ten up to this one are exact in a double, so k / 10^d is the double nearest the decimal. */
const EXACT_POWER_OF_TEN = 22;

function roundTo(xs: readonly number[], largestStep: number): number[] {
  if (!(largestStep > 0) || !Number.isFinite(largestStep)) return [...xs];
  const exponent = Math.floor(Math.log10(largestStep));
  const step = 10 ** exponent;
  const digits = Math.min(100, Math.max(0, -exponent));
  // Each value is the double nearest k·10^exponent. k / 10^digits (one correctly rounded
  // division) gives that double as parsing the decimal text does, without building the text:
  // the text took about a third of a simulate answer's work after the runs.
  const exact = digits <= EXACT_POWER_OF_TEN;
  const divisor = 10 ** digits;
  return xs.map((x) => {
    if (!Number.isFinite(x)) return x;
    const k = Math.round(x / step);
    if (k === 0) return 0; // not −0: the same JSON, and the same value to a reader
    if (!exact || Math.abs(k) >= EXACT_INTEGER) return Number((k * step).toFixed(digits));
    return exponent < 0 ? k / divisor : k * step;
  });
}
