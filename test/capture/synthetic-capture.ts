// Synthetic scope captures made by the simulator from a known scenario, degraded as a scope would
// degrade them: resampled at an interval unrelated to the ring (linear interpolation of a run
// sampled ~1000 times per ring period), an offset, white noise, 8-bit quantisation over a full
// scale, and a trigger placed so the first turn-off edge lies a given fraction into the record.

import { validateScenario } from '../../src/circuit/validate-scenario.js';
import type { Scenario, VariantName } from '../../src/circuit/scenario.js';
import { runVariant } from '../../src/simulation/run-variant.js';

export interface Degradation {
  sampleIntervalSeconds: number;
  /** The record's length, s. */
  spanSeconds: number;
  /** Where the first turn-off lies in the record, 0–1. */
  preTriggerFraction: number;
  noiseVolts: number;
  offsetVolts: number;
  /** Quantisation: 2^bits levels over [fullScaleMin, fullScaleMax]; 0 for none. */
  bits: number;
  fullScaleMin: number;
  fullScaleMax: number;
  seed: number;
}

export const CLEAN: Omit<Degradation, 'sampleIntervalSeconds' | 'spanSeconds'> = {
  preTriggerFraction: 0.3, noiseVolts: 0, offsetVolts: 0, bits: 0, fullScaleMin: 0, fullScaleMax: 1, seed: 1,
};

/** A scenario from plain JSON, validated as a file would be. */
export function scenarioFrom(json: unknown): Scenario {
  const r = validateScenario(json);
  if (!r.ok) throw new Error(r.issues.map((i) => `${i.path}: ${i.message}`).join('\n'));
  return r.scenario;
}

/** Deterministic normal deviates (Box–Muller on a linear congruential generator, Numerical Recipes' constants). */
export function gaussian(seed: number): () => number {
  let s = seed >>> 0;
  const uniform = (): number => { s = (Math.imul(s, 1664525) + 1013904223) >>> 0; return (s + 0.5) / 4294967296; };
  return () => Math.sqrt(-2 * Math.log(uniform())) * Math.cos(2 * Math.PI * uniform());
}

export function syntheticCapture(scenario: Scenario, variant: VariantName, d: Degradation): { timeSeconds: Float64Array; volts: Float64Array } {
  const s = structuredClone(scenario);
  const period = 1 / s.switch.frequency;
  s.simulation = { ...s.simulation, recordedCycles: 3, samplesPerCycle: 50_000 };
  const run = runVariant(s, variant);
  const w = run.recorder.waveform;
  const dt = w.timeSeconds[1]!;
  // The settled waveform repeats: the middle recorded cycle stands for every period, so a record
  // of any length costs one run (the wrap is continuous to the settle tolerance).
  const drainAt = (t: number): number => {
    const x = (period + (((t % period) + period) % period)) / dt;
    const i = Math.floor(x);
    const f = x - i;
    return w.channels.drainVoltage[i]! * (1 - f) + w.channels.drainVoltage[i + 1]! * f;
  };
  const pre = d.preTriggerFraction * d.spanSeconds;
  // Trigger on a turn-off late enough that the record starts at t ≥ 0.
  const turnOff = run.recorder.cycles[1]!.turnOffSeconds - period + Math.ceil(pre / period + 1) * period;
  const t0 = turnOff - pre;
  const n = Math.floor(d.spanSeconds / d.sampleIntervalSeconds);
  const noise = gaussian(d.seed);
  const lsb = (d.fullScaleMax - d.fullScaleMin) / 2 ** d.bits;
  const timeSeconds = new Float64Array(n), volts = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    const t = t0 + k * d.sampleIntervalSeconds;
    let y = drainAt(t) + d.offsetVolts + d.noiseVolts * noise();
    if (d.bits > 0) y = d.fullScaleMin + Math.min(2 ** d.bits - 1, Math.max(0, Math.floor((y - d.fullScaleMin) / lsb))) * lsb + lsb / 2;
    // Time as the scope reports it: zero at the trigger.
    timeSeconds[k] = t - turnOff;
    volts[k] = y;
  }
  return { timeSeconds, volts };
}

/** The capture as a scope's CSV: a header block, then time and one or more channels. */
export function captureCsv(c: { timeSeconds: Float64Array; volts: Float64Array }, style: 'comma' | 'semicolon-decimal-comma' = 'comma'): string {
  const lines: string[] = [];
  if (style === 'comma') {
    lines.push('Model,Synthetic 8-bit scope', `Record Length,${c.volts.length}`, `Sample Interval,${(c.timeSeconds[1]! - c.timeSeconds[0]!).toExponential(6)}`, 'Vertical Units,V', 'TIME,CH1,CH2');
    for (let k = 0; k < c.volts.length; k++) lines.push(`${c.timeSeconds[k]!.toExponential(9)},${c.volts[k]!.toPrecision(7)},0.0`);
  } else {
    lines.push('Aufzeichnung;synthetisch', 'Time [us];Drain [V]');
    for (let k = 0; k < c.volts.length; k++) lines.push(`${(c.timeSeconds[k]! * 1e6).toFixed(7).replace('.', ',')};${c.volts[k]!.toFixed(4).replace('.', ',')}`);
  }
  return `${lines.join('\n')}\n`;
}
