// The points of a study: a grid over --vary ranges, their corners, or seeded Monte Carlo draws.

import { rangeValues, type Tolerance, type VaryRange } from './study-spec.js';

export type PointValues = Record<string, number>;

/** Cartesian product of the ranges, the first range varying slowest. */
export function gridPoints(ranges: readonly VaryRange[]): PointValues[] {
  let points: PointValues[] = [{}];
  for (const r of ranges) {
    const values = rangeValues(r);
    points = points.flatMap((p) => values.map((v) => ({ ...p, [r.path]: v })));
  }
  return points;
}

/** Every combination of the ends of the ranges (2^k points). */
export function cornerPoints(ranges: readonly VaryRange[]): PointValues[] {
  return gridPoints(ranges.map((r) => ({ ...r, steps: r.from === r.to ? 1 : 2 })));
}

/**
 * Seeded pseudo-random numbers (mulberry32): small, fast and repeatable across platforms, which is
 * what a design study needs; not for cryptography.
 */
export function seededRandom(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Standard normal by Box–Muller from a uniform source. */
function normal(random: () => number): number {
  const u = 1 - random();
  return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * random());
}

/**
 * Monte Carlo samples around the nominal values. Uniform: anywhere within ±X %. Normal: σ = X/3,
 * so ±X % is the 3σ spread (common practice for a part tolerance), cut at ±X %.
 */
export function monteCarloPoints(tolerances: readonly Tolerance[], nominal: (path: string) => number, samples: number, seed: number): PointValues[] {
  const random = seededRandom(seed);
  const out: PointValues[] = [];
  for (let i = 0; i < samples; i++) {
    const p: PointValues = {};
    for (const t of tolerances) {
      let offset: number;
      if (t.distribution === 'uniform') offset = (2 * random() - 1) * t.fraction;
      else offset = Math.max(-t.fraction, Math.min(t.fraction, (normal(random) * t.fraction) / 3));
      p[t.path] = nominal(t.path) * (1 + offset);
    }
    out.push(p);
  }
  return out;
}

/** Nearest-rank percentile of a sample (p in 0..100). */
export function percentile(values: readonly number[], p: number): number {
  const sorted = [...values].sort((a, b) => a - b);
  if (sorted.length === 0) return NaN;
  const rank = Math.min(sorted.length, Math.max(1, Math.ceil((p / 100) * sorted.length)));
  return sorted[rank - 1]!;
}
