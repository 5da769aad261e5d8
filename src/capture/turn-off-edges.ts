// Turn-off edges: the drain rising through the midpoint of its low and high levels after it has
// sat near the low level (the switch on). A ring valley that touches the low level briefly (valley
// switching in DCM) also rises through the midpoint; it is told apart by how long the drain stayed
// low before it: an on-time lasts a good part of the period, a valley a fraction of a ring.

import type { SignalLevels } from './signal-levels.js';

export interface TurnOffEdge {
  /** Sample index just after the crossing. */
  index: number;
  /** Crossing instant, linearly interpolated between the two samples, s. */
  timeSeconds: number;
  /** First sample below the low band before the crossing: where the on-time began (or the capture did). */
  lowSinceIndex: number;
}

/** The low band: within this fraction of the swing above the low level counts as "switch on". */
export const LOW_BAND_FRACTION = 0.1;
/** An edge counts when its low dwell is at least this fraction of the longest one (our choice). */
const MIN_DWELL_FRACTION = 0.25;

export function turnOffEdges(timeSeconds: Float64Array, volts: Float64Array, levels: SignalLevels): TurnOffEdge[] {
  const lowBand = levels.lowVolts + LOW_BAND_FRACTION * (levels.highVolts - levels.lowVolts);
  const mid = levels.midpointVolts;
  const candidates: Array<TurnOffEdge & { dwellSeconds: number }> = [];
  let lowSince = -1;
  for (let i = 0; i < volts.length; i++) {
    const v = volts[i]!;
    if (v <= lowBand) {
      if (lowSince < 0) lowSince = i;
      continue;
    }
    if (lowSince >= 0 && i > 0 && volts[i - 1]! < mid && v >= mid) {
      const v0 = volts[i - 1]!, t0 = timeSeconds[i - 1]!, t1 = timeSeconds[i]!;
      const crossing = t0 + ((mid - v0) / (v - v0)) * (t1 - t0);
      candidates.push({ index: i, timeSeconds: crossing, lowSinceIndex: lowSince, dwellSeconds: crossing - timeSeconds[lowSince]! });
      lowSince = -1;
    }
  }
  const longest = candidates.reduce((m, c) => Math.max(m, c.dwellSeconds), 0);
  return candidates
    .filter((c) => c.dwellSeconds >= MIN_DWELL_FRACTION * longest)
    .map(({ index, timeSeconds: t, lowSinceIndex }) => ({ index, timeSeconds: t, lowSinceIndex }));
}
