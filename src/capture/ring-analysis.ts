// The ring after each turn-off edge: find the first peak, follow the ring's extrema (with a
// hysteresis above the noise) while it keeps its period and stands out of the noise, take a coarse
// frequency and decay from them, then fit a damped sinusoid from the first trough to the last
// extremum followed (Levenberg–Marquardt).
// Edges are combined by their mean; the uncertainty is the larger of the fits' own (from the
// residual) and the scatter between edges.

import { fitDampedSinusoid, RingFitFailed, type DampedSinusoid } from './damped-sinusoid-fit.js';
import { signalLevels, type SignalLevels } from './signal-levels.js';
import { turnOffEdges, type TurnOffEdge } from './turn-off-edges.js';

export class RingNotFound extends Error {}

export interface EdgeRing {
  edge: TurnOffEdge;
  /** Index of the first peak after the edge (with a clamp: where the clamp lets go, within the noise). */
  peakIndex: number;
  /**
   * First sample of the damped-sinusoid window: the first trough after the peak. A clamped drain's
   * peak lies somewhere on the clamp's flat top in a noisy capture, so the window starts half a
   * period later, where the ring is free for certain (it cost a clamped ring 0.7 % in frequency).
   */
  windowStartIndex: number;
  /** Last sample of the window the ring was fitted over. */
  endIndex: number;
  fit: DampedSinusoid;
}

export interface RingAnalysis {
  levels: SignalLevels;
  edges: TurnOffEdge[];
  rings: EdgeRing[];
  /** Edges whose ring could not be used, with the reason. */
  skipped: string[];
  /** Noise standard deviation estimated from sample-to-sample differences, V. */
  noiseVolts: number;
  frequencyHz: number;
  frequencySigmaHz: number;
  decayPerSecond: number;
  decaySigmaPerSecond: number;
  /** √(ω² + α²)/2π: the undamped LC frequency 1/(2π√(LC)) of a series RLC ring, Hz. */
  undampedFrequencyHz: number;
}

/** Samples per ring window kept for the fit; denser windows are strided (bounds the work per edge). */
export const MAX_RING_WINDOW_SAMPLES = 4000;
/** Rings followed for at most this many periods (enough for frequency and decay; our choice). */
const MAX_RING_PERIODS = 20;
/** Edges analysed at most (a long capture repeats the same settled ring). */
export const MAX_EDGES = 32;
/**
 * An extremum counts once the signal has moved this many noise σ back from it: white noise
 * exceeds ±2.5σ (5σ peak to peak) in about 1 % of samples, and a run of such samples is rarer
 * still (normal tails; our choice). The ring is followed while its half-swing is twice that.
 */
const HYSTERESIS_IN_NOISE = 5;
/** Fewer samples per ring period than this cannot place the ring's extrema (Nyquist is 2; margin ours). */
const MIN_SAMPLES_PER_PERIOD = 6;

export function analyseRing(timeSeconds: Float64Array, volts: Float64Array): RingAnalysis {
  const levels = signalLevels(volts);
  const swing = levels.highVolts - levels.lowVolts;
  if (!(swing > 0)) throw new RingNotFound('the drain voltage is constant: no turn-off edge to analyse');
  const edges = turnOffEdges(timeSeconds, volts, levels);
  if (edges.length === 0) {
    throw new RingNotFound(`no turn-off edge: the drain never rises through the midpoint ${levels.midpointVolts.toPrecision(4)} V after sitting near its low level ${levels.lowVolts.toPrecision(4)} V`);
  }
  const noiseVolts = differenceNoise(volts);
  const rings: EdgeRing[] = [];
  const skipped: string[] = [];
  for (let e = 0; e < edges.length && rings.length < MAX_EDGES; e++) {
    const edge = edges[e]!;
    const limit = e + 1 < edges.length ? edges[e + 1]!.lowSinceIndex : volts.length;
    const outcome = ringAfterEdge(timeSeconds, volts, edge, limit, levels, noiseVolts);
    if (typeof outcome === 'string') skipped.push(`edge at ${edge.timeSeconds.toExponential(4)} s: ${outcome}`);
    else rings.push(outcome);
  }
  if (rings.length === 0) {
    const quiet = skipped.some((r) => r.includes('stand out of the noise'))
      ? ' (a clamped drain rings little after the clamp lets go: capture the ring on a finer vertical scale, or with the clamp removed)'
      : '';
    throw new RingNotFound(`no usable ring after ${edges.length} turn-off edge(s): ${skipped.slice(0, 3).join('; ')}${skipped.length > 3 ? `; and ${skipped.length - 3} more` : ''}${quiet}`);
  }
  const combine = (values: number[], sigmas: number[]): [number, number] => {
    const n = values.length;
    const mean = values.reduce((s, v) => s + v, 0) / n;
    const own = Math.sqrt(sigmas.reduce((s, v) => s + v * v, 0)) / n;
    const scatter = n > 1 ? Math.sqrt(values.reduce((s, v) => s + (v - mean) ** 2, 0) / (n - 1) / n) : 0;
    return [mean, Math.max(own, scatter)];
  };
  const [frequencyHz, frequencySigmaHz] = combine(rings.map((r) => r.fit.frequencyHz), rings.map((r) => r.fit.frequencySigmaHz));
  const [decayPerSecond, decaySigmaPerSecond] = combine(rings.map((r) => r.fit.decayPerSecond), rings.map((r) => r.fit.decaySigmaPerSecond));
  const omega = 2 * Math.PI * frequencyHz;
  return {
    levels, edges, rings, skipped, noiseVolts,
    frequencyHz, frequencySigmaHz, decayPerSecond, decaySigmaPerSecond,
    undampedFrequencyHz: Math.sqrt(omega * omega + decayPerSecond * decayPerSecond) / (2 * Math.PI),
  };
}

/** σ of white noise from first differences: 1.4826·MAD/√2 (MAD of a normal: Hampel 1974), robust to the edges and rings. */
export function differenceNoise(volts: Float64Array): number {
  const n = Math.min(volts.length - 1, 200_000);
  if (n < 1) return 0;
  // A strided subset keeps the sort bounded on long captures.
  const stride = Math.max(1, Math.floor((volts.length - 1) / n));
  const d = new Float64Array(n);
  for (let k = 0; k < n; k++) d[k] = Math.abs(volts[k * stride + 1]! - volts[k * stride]!);
  d.sort();
  return (1.4826 * d[Math.floor(n / 2)]!) / Math.SQRT2;
}

function ringAfterEdge(t: Float64Array, v: Float64Array, edge: TurnOffEdge, limit: number, levels: SignalLevels, noise: number): EdgeRing | string {
  // The first peak: the running maximum until the drain has fallen halfway back to the midpoint.
  let peak = edge.index;
  let i = edge.index;
  for (; i < limit; i++) {
    if (v[i]! > v[peak]!) peak = i;
    else if (v[i]! < v[peak]! - 0.5 * (v[peak]! - levels.midpointVolts)) break;
  }
  if (i >= limit) return 'the capture ends (or the next on-time starts) before the first ring period';
  const hysteresis = Math.max(HYSTERESIS_IN_NOISE * noise, 0.02 * (v[peak]! - levels.midpointVolts));
  const extrema = followExtrema(v, peak, limit, hysteresis);
  // Keep the ring while its half-periods stay near the first ones and it stands out of the noise.
  const kept = [extrema[0]!];
  let firstHalf = NaN;
  for (let k = 1; k < extrema.length && kept.length <= 2 * MAX_RING_PERIODS; k++) {
    const half = t[extrema[k]!]! - t[extrema[k - 1]!]!;
    const halfSwing = Math.abs(v[extrema[k]!]! - v[extrema[k - 1]!]!) / 2;
    if (k === 1) firstHalf = half;
    else if (Math.abs(half - firstHalf) > 0.35 * firstHalf) break;
    if (halfSwing < 2 * hysteresis) break;
    kept.push(extrema[k]!);
  }
  if (kept.length < 4) return `only ${kept.length - 1} half-period(s) of ring stand out of the noise (need 3)`;
  const first = kept[0]!, last = kept[kept.length - 1]!, windowStart = kept[1]!;
  const periods = (kept.length - 1) / 2;
  const frequencyHz = periods / (t[last]! - t[first]!);
  const samplesPerPeriod = (last - first) / periods;
  if (samplesPerPeriod < MIN_SAMPLES_PER_PERIOD) {
    return `the ring is sampled ${samplesPerPeriod.toFixed(1)} times per period (need ${MIN_SAMPLES_PER_PERIOD}): use a faster sample rate`;
  }
  // Decay from the half-swings: a straight line through ln(half-swing) against time.
  let sx = 0, sy = 0, sxx = 0, sxy = 0;
  for (let k = 1; k < kept.length; k++) {
    const x = (t[kept[k]!]! + t[kept[k - 1]!]!) / 2;
    const y = Math.log(Math.abs(v[kept[k]!]! - v[kept[k - 1]!]!) / 2);
    sx += x; sy += y; sxx += x * x; sxy += x * y;
  }
  const m = kept.length - 1;
  const slope = (m * sxy - sx * sy) / (m * sxx - sx * sx);
  const decayPerSecond = Number.isFinite(slope) ? Math.max(0, -slope) : 0;
  // The window ends a quarter period past the last extremum kept (the ring is still clear there).
  const endTime = t[last]! + 0.25 / frequencyHz;
  let end = last;
  while (end + 1 < limit && t[end + 1]! <= endTime) end++;
  const stride = Math.max(1, Math.ceil((end - windowStart + 1) / MAX_RING_WINDOW_SAMPLES));
  const count = Math.floor((end - windowStart) / stride) + 1;
  const wt = new Float64Array(count), wv = new Float64Array(count);
  for (let k = 0; k < count; k++) {
    wt[k] = t[windowStart + k * stride]! - t[windowStart]!;
    wv[k] = v[windowStart + k * stride]!;
  }
  try {
    const fit = fitDampedSinusoid(wt, wv, { frequencyHz, decayPerSecond });
    if (Math.abs(fit.frequencyHz / frequencyHz - 1) > 0.3) return `the ring fit wandered to ${fit.frequencyHz.toPrecision(4)} Hz from ${frequencyHz.toPrecision(4)} Hz`;
    return { edge, peakIndex: first, windowStartIndex: windowStart, endIndex: end, fit };
  } catch (error) {
    if (error instanceof RingFitFailed) return error.message;
    throw error;
  }
}

/** Alternating maxima and minima from a maximum at `start`, each confirmed by a swing of `hysteresis` (common practice). */
function followExtrema(v: Float64Array, start: number, limit: number, hysteresis: number): number[] {
  const out = [start];
  let lookingForMin = true;
  let candidate = start;
  for (let i = start + 1; i < limit; i++) {
    const x = v[i]!;
    if (lookingForMin) {
      if (x < v[candidate]!) candidate = i;
      else if (x > v[candidate]! + hysteresis) { out.push(candidate); lookingForMin = false; candidate = i; }
    } else {
      if (x > v[candidate]!) candidate = i;
      else if (x < v[candidate]! - hysteresis) { out.push(candidate); lookingForMin = true; candidate = i; }
    }
    if (out.length > 2 * MAX_RING_PERIODS + 2) break;
  }
  return out;
}
