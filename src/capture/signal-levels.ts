// The drain's low (switch on) and high (switch off) levels, from a fine histogram. The low level is
// the 1st percentile: the on-state, where any flyback spends well over 1 % of its period. The high
// side of a flyback drain is spread over the ring, the plateau at Vin + VR, the idle level at Vin
// and the demagnetisation ring between them, so a two-class split (Otsu) lands inside that spread
// in DCM; the high level is instead the median of the samples above halfway between the 1st and
// 99th percentiles, which lies near the plateau. (Our choice; the 1/99 % points stand for the
// scope's "base" and "top" without the overshoot, common practice in pulse measurements.)

export interface SignalLevels {
  lowVolts: number;
  highVolts: number;
  /** (low + high)/2: the drain rises through it at each turn-off. */
  midpointVolts: number;
}

const BINS = 4096;

export function signalLevels(volts: Float64Array): SignalLevels {
  let min = Infinity, max = -Infinity;
  for (let i = 0; i < volts.length; i++) {
    const v = volts[i]!;
    if (v < min) min = v;
    if (v > max) max = v;
  }
  const width = (max - min) / BINS;
  if (!(width > 0)) return { lowVolts: min, highVolts: max, midpointVolts: min };
  const counts = new Float64Array(BINS);
  const binOf = (v: number): number => Math.min(BINS - 1, Math.floor((v - min) / width));
  for (let i = 0; i < volts.length; i++) counts[binOf(volts[i]!)]!++;
  const quantile = (q: number, fromBin = 0): number => {
    let total = 0;
    for (let b = fromBin; b < BINS; b++) total += counts[b]!;
    let running = 0;
    for (let b = fromBin; b < BINS; b++) {
      running += counts[b]!;
      if (running >= q * total) return min + (b + 0.5) * width;
    }
    return max;
  };
  const lowVolts = quantile(0.01);
  const top = quantile(0.99);
  const highVolts = quantile(0.5, binOf((lowVolts + top) / 2));
  return { lowVolts, highVolts, midpointVolts: (lowVolts + highVolts) / 2 };
}
