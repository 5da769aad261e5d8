// The drain's low (switch on) and high (switch off) levels. A flyback drain is bimodal but its
// high side is spread over the ring, the plateau at Vin + VR and the idle level at Vin, so the
// split between the two is found by Otsu's method (N. Otsu, "A threshold selection method from
// gray-level histograms", IEEE Trans. SMC 9(1), 1979) on a 256-bin histogram, and each level is
// the median of its class.

export interface SignalLevels {
  lowVolts: number;
  highVolts: number;
  /** (low + high)/2: the drain rises through it at each turn-off. */
  midpointVolts: number;
}

const BINS = 256;

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
  // Otsu: the split that maximises the between-class variance ω0·ω1·(μ0 − μ1)².
  const total = volts.length;
  let sumAll = 0;
  for (let b = 0; b < BINS; b++) sumAll += b * counts[b]!;
  let weightBelow = 0, sumBelow = 0, bestSplit = 0, bestVariance = -1;
  for (let b = 0; b < BINS - 1; b++) {
    weightBelow += counts[b]!;
    sumBelow += b * counts[b]!;
    const weightAbove = total - weightBelow;
    if (weightBelow === 0 || weightAbove === 0) continue;
    const meanBelow = sumBelow / weightBelow;
    const meanAbove = (sumAll - sumBelow) / weightAbove;
    const variance = weightBelow * weightAbove * (meanBelow - meanAbove) ** 2;
    if (variance > bestVariance) { bestVariance = variance; bestSplit = b; }
  }
  const lowVolts = binMedian(counts, 0, bestSplit, min, width);
  const highVolts = binMedian(counts, bestSplit + 1, BINS - 1, min, width);
  return { lowVolts, highVolts, midpointVolts: (lowVolts + highVolts) / 2 };
}

/** Median of the samples in bins first..last, to the bin's centre. */
function binMedian(counts: Float64Array, first: number, last: number, min: number, width: number): number {
  let total = 0;
  for (let b = first; b <= last; b++) total += counts[b]!;
  let running = 0;
  for (let b = first; b <= last; b++) {
    running += counts[b]!;
    if (running >= total / 2) return min + (b + 0.5) * width;
  }
  return min + (last + 0.5) * width;
}
