// What a study tells: the worst point per variant and, for Monte Carlo, the spread of the peak.

import type { VariantName } from '../circuit/scenario.js';
import { percentile, type PointValues } from './study-points.js';
import type { StudyPoint } from './run-study.js';

export interface WorstCase { index: number; values: PointValues; peakDrainVoltage: number; marginToRating: number; marginToDeratedLimit: number }

export interface PeakDistribution {
  samples: number;
  /** Fraction of the samples whose peak exceeds the derated limit. */
  fractionOverDeratedLimit: number;
  percentiles: { p5: number; p50: number; p95: number; p99: number; max: number };
}

export function worstPerVariant(points: readonly StudyPoint[]): Partial<Record<VariantName, WorstCase>> {
  const worst: Partial<Record<VariantName, WorstCase>> = {};
  for (const p of points) {
    for (const [name, m] of Object.entries(p.variants ?? {}) as Array<[VariantName, NonNullable<StudyPoint['variants']>[VariantName]]>) {
      if (!m) continue;
      const current = worst[name];
      if (!current || m.peakDrainVoltage > current.peakDrainVoltage) {
        worst[name] = { index: p.index, values: p.values, peakDrainVoltage: m.peakDrainVoltage, marginToRating: m.marginToRating, marginToDeratedLimit: m.marginToDeratedLimit };
      }
    }
  }
  return worst;
}

export function peakDistribution(points: readonly StudyPoint[], deratedLimit: number): Partial<Record<VariantName, PeakDistribution>> {
  const out: Partial<Record<VariantName, PeakDistribution>> = {};
  const byVariant = new Map<VariantName, number[]>();
  for (const p of points) {
    for (const [name, m] of Object.entries(p.variants ?? {}) as Array<[VariantName, { peakDrainVoltage: number } | undefined]>) {
      if (m) byVariant.set(name, [...(byVariant.get(name) ?? []), m.peakDrainVoltage]);
    }
  }
  for (const [name, peaks] of byVariant) {
    out[name] = {
      samples: peaks.length,
      fractionOverDeratedLimit: peaks.filter((v) => v > deratedLimit).length / peaks.length,
      percentiles: { p5: percentile(peaks, 5), p50: percentile(peaks, 50), p95: percentile(peaks, 95), p99: percentile(peaks, 99), max: Math.max(...peaks) },
    };
  }
  return out;
}
