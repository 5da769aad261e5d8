import { describe, it, expect } from 'vitest';
import { fitDampedSinusoid } from '../../src/capture/damped-sinusoid-fit.js';
import { analyseRing } from '../../src/capture/ring-analysis.js';

// A closed-form damped sinusoid y = c + A·e^(−αt)·cos(ωt + φ) (any circuits text: the free
// response of a series RLC, e.g. Nilsson & Riedel, "Electric Circuits", ch. 8).
function dampedSinusoid(n: number, dtSeconds: number, f: number, alpha: number, c: number, amplitude: number, phase: number): { t: Float64Array; v: Float64Array } {
  const t = new Float64Array(n), v = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    t[k] = k * dtSeconds;
    v[k] = c + amplitude * Math.exp(-alpha * t[k]!) * Math.cos(2 * Math.PI * f * t[k]! + phase);
  }
  return { t, v };
}

/** Deterministic normal deviates (Box–Muller on a linear congruential generator, Numerical Recipes' constants). */
function gaussian(seed: number): () => number {
  let s = seed >>> 0;
  const uniform = (): number => { s = (Math.imul(s, 1664525) + 1013904223) >>> 0; return (s + 0.5) / 4294967296; };
  return () => Math.sqrt(-2 * Math.log(uniform())) * Math.cos(2 * Math.PI * uniform());
}

describe('fitDampedSinusoid against a closed-form damped sinusoid', () => {
  it('recovers f and α within 0.1 % at no noise, from a start 8 % off (issue 13 check)', () => {
    const f = 7.3e6, alpha = 9.1e5;
    const { t, v } = dampedSinusoid(1500, 1 / (f * 53.7), f, alpha, 41.5, 23.2, 0.4);
    const fit = fitDampedSinusoid(t, v, { frequencyHz: f * 1.08, decayPerSecond: alpha * 0.7 });
    expect(Math.abs(fit.frequencyHz / f - 1)).toBeLessThan(1e-3);
    expect(Math.abs(fit.decayPerSecond / alpha - 1)).toBeLessThan(1e-3);
    expect(fit.centreVolts).toBeCloseTo(41.5, 6);
    expect(fit.amplitudeVolts).toBeCloseTo(23.2, 6);
  });

  it('gives a one-sigma frequency uncertainty that covers the error on a noisy ring (linearised covariance)', () => {
    const f = 2.5e6, alpha = 2e5;
    const { t, v } = dampedSinusoid(3000, 1 / (f * 41.3), f, alpha, 0, 10, 0);
    const noise = gaussian(7);
    for (let k = 0; k < v.length; k++) v[k] = v[k]! + 0.2 * noise();
    const fit = fitDampedSinusoid(t, v, { frequencyHz: f * 0.95, decayPerSecond: alpha });
    expect(fit.frequencySigmaHz).toBeGreaterThan(0);
    // 4σ: a single draw falls outside with probability 6e-5 (normal tails).
    expect(Math.abs(fit.frequencyHz - f)).toBeLessThan(4 * fit.frequencySigmaHz);
    expect(fit.residualRmsVolts).toBeGreaterThan(0.18);
    expect(fit.residualRmsVolts).toBeLessThan(0.22);
  });
});

describe('analyseRing on a switching waveform built from closed forms', () => {
  it('finds every turn-off edge and the ring frequency and decay within 0.1 % at no noise', () => {
    // Three periods: 2 µs low (switch on), then a step to a damped ring around 45 V, then back low.
    const period = 5e-6, dt = 1e-9, f = 9.7e6, alpha = 6e5;
    const n = Math.round((3 * period) / dt);
    const t = new Float64Array(n), v = new Float64Array(n);
    for (let k = 0; k < n; k++) {
      t[k] = k * dt;
      const local = t[k]! % period;
      const off = local - 2e-6;
      // Starts at the plateau going up (the output diode starts conducting): a sine from zero phase.
      v[k] = off < 0 ? 0.2 : 45 + 30 * Math.exp(-alpha * off) * Math.sin(2 * Math.PI * f * off);
    }
    const ring = analyseRing(t, v);
    expect(ring.edges.length).toBe(3);
    expect(ring.rings.length).toBe(3);
    expect(Math.abs(ring.frequencyHz / f - 1)).toBeLessThan(1e-3);
    expect(Math.abs(ring.decayPerSecond / alpha - 1)).toBeLessThan(1e-3);
  });
});

describe('turn-off edges', () => {
  it('a ring valley that touches the low level and rises again is not a turn-off (its low stretch is short)', () => {
    // Per 5 µs period: 2 µs low, a ring around 45 V of 30 V amplitude, then from 3.5 µs a slow
    // ring around 30 V whose valleys touch 0 V for a few ns (valley switching in DCM), closed forms.
    const period = 5e-6, dt = 1e-9, f = 9.7e6, alpha = 6e5, slow = 1.6e6;
    const n = Math.round((3 * period) / dt);
    const t = new Float64Array(n), v = new Float64Array(n);
    for (let k = 0; k < n; k++) {
      t[k] = k * dt;
      const local = t[k]! % period;
      if (local < 2e-6) v[k] = 0.2;
      else if (local < 3.5e-6) v[k] = 45 + 30 * Math.exp(-alpha * (local - 2e-6)) * Math.sin(2 * Math.PI * f * (local - 2e-6));
      else v[k] = Math.max(0.2, 30 + 32 * Math.cos(2 * Math.PI * slow * (local - 3.5e-6) + Math.PI));
    }
    const ring = analyseRing(t, v);
    // The three turn-offs at 2, 7 and 12 µs, and none of the valley rises.
    expect(ring.edges.map((e) => Math.round(e.timeSeconds * 1e6))).toEqual([2, 7, 12]);
  });
});
