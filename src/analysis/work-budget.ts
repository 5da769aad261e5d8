// What a run will cost, estimated from the scenario before any cycle is simulated, so that a valid
// but extreme scenario (a 150 Hz switch against a 10 MHz ring, a 1 fF drain capacitance, a damper
// whose RC is picoseconds) is refused with the value that makes it expensive instead of running for
// hours or filling memory.

import { availableVariants, type Scenario, type VariantName } from '../circuit/scenario.js';
import { recordedSamplesPerCycle } from '../simulation/run-variant.js';
import { circuitForVariant, fastestRingPeriodSeconds, leakageRingPeriodSeconds } from '../model/circuit-params.js';

/**
 * Wall time per fast period integrated (a leakage-ring period, or 2π times the fastest RC or L/R
 * time constant), s. The integrator's step is capped at half a ring period and, being explicit,
 * must stay near the fastest time constant; so the cost of a cycle grows with the fast periods in
 * it. Measured on the demo scenarios on one core of the two-core development machine: 38–151 µs
 * per ring period once the JIT is warm (a ring still ringing costs most), 317 µs for the very first
 * run. Rounded up from the warm range: the estimate is there to refuse what is off by orders of
 * magnitude; the deadline catches the rest.
 */
export const SECONDS_PER_RING_PERIOD = 2e-4;
/** Cycles assumed for settling: the demo scenarios settle in 12–34 (settling jumps ahead). */
export const ESTIMATED_CYCLES = 30;
/** Samples kept per variant (recorded cycles × samples per cycle after the raise for the ring): 9 channels × 8 bytes each, 29 MB at the cap. */
export const MAX_RECORDED_SAMPLES = 400_000;

/**
 * The variant runs a design makes about: the clamp and damped circuits at each of up to five corners
 * and for an adjustment or two, and the bare circuit once at the worst case.
 */
export function designVariantRuns(scenario: Scenario): VariantName[] {
  const verdict = availableVariants(scenario).filter((v) => v !== 'bare');
  return ['bare', ...Array.from({ length: 7 }, () => verdict).flat()];
}

/** One of the circuit's fast time scales, with the fields that set it. */
interface TimeScale { periodSeconds: number; what: string; fields: string[] }

export interface WorkEstimate {
  /** The fastest time scale: it sets the integrator's step. */
  fastest: TimeScale;
  /** Fastest periods in one switching period: the integrator's work per cycle. */
  fastPeriodsPerCycle: number;
  /** Samples the recorder keeps per variant. */
  recordedSamples: number;
  estimatedSeconds: number;
}

/** The time scales that bound the step of one variant, as periods (2π·τ for a time constant τ). */
function timeScales(scenario: Scenario, variant: VariantName): TimeScale[] {
  const params = circuitForVariant(scenario, variant);
  // The smallest node capacitance: the fastest the drain can move (a curve's value at high voltage).
  const coss = params.drainNode.minimum();
  const scales: TimeScale[] = [{
    periodSeconds: leakageRingPeriodSeconds(circuitForVariant(scenario, 'bare')),
    what: 'the leakage ring', fields: ['transformer.leakageInductance', 'switch.drainCapacitance'],
  }];
  // The clamp loop against the diode's junction capacitance rings whenever the diode blocks; the
  // loop against the drain node only while it conducts, a small share of the cycle (not counted).
  const clamp = params.clamp;
  if (clamp && clamp.loopInductance > 0 && clamp.diodeCapacitance > 0) {
    scales.push({ periodSeconds: fastestRingPeriodSeconds(params), what: 'the clamp loop against the diode\'s junction capacitance', fields: ['clamp.loopInductance', 'clamp.diodeCapacitance'] });
  }
  const { primaryResistance: rp, leakageInductance: llk } = scenario.transformer;
  if (rp > 0) scales.push({ periodSeconds: (2 * Math.PI * llk) / rp, what: 'the leakage inductance over the winding resistance', fields: ['transformer.primaryResistance', 'transformer.leakageInductance'] });
  if (scenario.damper && variant === 'damped') {
    const { resistance: rs, capacitance: cs } = scenario.damper;
    scales.push({ periodSeconds: 2 * Math.PI * rs * ((cs * coss) / (cs + coss)), what: 'the damper RC (with the drain capacitance in series)', fields: ['damper.resistance', 'damper.capacitance', 'switch.drainCapacitance'] });
  }
  if (scenario.clamp && variant !== 'bare') {
    const { resistance: rc, capacitance: cc } = scenario.clamp;
    scales.push({ periodSeconds: 2 * Math.PI * rc * cc, what: 'the clamp RC', fields: ['clamp.resistance', 'clamp.capacitance'] });
  }
  return scales;
}

/** The estimate for `variants` run one after another (a name may repeat: a design runs each twice). */
export function estimateWork(scenario: Scenario, variants: readonly VariantName[]): WorkEstimate {
  const periodSeconds = 1 / scenario.switch.frequency;
  const cycles = Math.min(ESTIMATED_CYCLES, scenario.simulation.maxCycles);
  const fastestOf = (v: VariantName): TimeScale => timeScales(scenario, v).reduce((a, b) => (b.periodSeconds < a.periodSeconds ? b : a));
  // Named after the costliest variant; the time is the sum over all of them.
  const fastest = variants.map(fastestOf).reduce((a, b) => (b.periodSeconds < a.periodSeconds ? b : a), fastestOf('bare'));
  const seconds = variants.reduce((sum, v) => sum + (cycles * periodSeconds * SECONDS_PER_RING_PERIOD) / fastestOf(v).periodSeconds, 0);
  // The recorder's own rule for the samples it keeps.
  const ringPeriodSeconds = timeScales(scenario, 'bare')[0]!.periodSeconds;
  const samplesPerCycle = recordedSamplesPerCycle(scenario.simulation.samplesPerCycle, periodSeconds, ringPeriodSeconds);
  return {
    fastest,
    fastPeriodsPerCycle: periodSeconds / fastest.periodSeconds,
    recordedSamples: scenario.simulation.recordedCycles * samplesPerCycle,
    estimatedSeconds: seconds,
  };
}

export interface BudgetRefusal { kind: 'recorded-samples' | 'time'; path: string; message: string }

/** Typical ranges of the values that set the work per cycle; the one furthest outside is named. */
const TYPICAL: Readonly<Record<string, { unit: string; low: number; high: number; read: (s: Scenario) => number | undefined }>> = {
  'switch.frequency': { unit: 'Hz', low: 20e3, high: 2e6, read: (s) => s.switch.frequency },
  'switch.drainCapacitance': { unit: 'F', low: 10e-12, high: 10e-9, read: (s) => circuitForVariant(s, 'bare').drainNode.minimum() },
  'clamp.loopInductance': { unit: 'H', low: 1e-9, high: 100e-9, read: (s) => s.clamp?.loopInductance || undefined },
  'clamp.diodeCapacitance': { unit: 'F', low: 1e-12, high: 1e-9, read: (s) => s.clamp?.diodeCapacitance || undefined },
  'transformer.leakageInductance': { unit: 'H', low: 50e-9, high: 500e-6, read: (s) => s.transformer.leakageInductance },
  'transformer.primaryResistance': { unit: 'Ω', low: 1e-3, high: 10, read: (s) => s.transformer.primaryResistance },
  'damper.resistance': { unit: 'Ω', low: 1, high: 10e3, read: (s) => s.damper?.resistance },
  'damper.capacitance': { unit: 'F', low: 10e-12, high: 100e-9, read: (s) => s.damper?.capacitance },
  'clamp.resistance': { unit: 'Ω', low: 100, high: 1e6, read: (s) => s.clamp?.resistance },
  'clamp.capacitance': { unit: 'F', low: 100e-12, high: 10e-6, read: (s) => s.clamp?.capacitance },
};

const fmt = (x: number): string => Number(x.toPrecision(3)).toString();

/** How far (decades) a field is outside its typical range; 0 inside it. */
function outsideTypical(scenario: Scenario, path: string): number {
  const t = TYPICAL[path];
  const v = t?.read(scenario);
  if (!t || v === undefined || !(v > 0)) return 0;
  return v < t.low ? Math.log10(t.low / v) : v > t.high ? Math.log10(v / t.high) : 0;
}

/** Refusals for a run over `maxSeconds` or over the recorded-sample budget; empty when it fits. */
export function checkWorkBudget(scenario: Scenario, variants: readonly VariantName[], maxSeconds: number, liftHint: (neededSeconds: number) => string): BudgetRefusal[] {
  const estimate = estimateWork(scenario, variants);
  const refusals: BudgetRefusal[] = [];
  if (estimate.recordedSamples > MAX_RECORDED_SAMPLES) {
    const path = estimate.recordedSamples > scenario.simulation.recordedCycles * scenario.simulation.samplesPerCycle
      ? 'simulation.recordedCycles' : 'simulation.samplesPerCycle';
    refusals.push({
      kind: 'recorded-samples',
      path,
      message: `expected at most ${MAX_RECORDED_SAMPLES} recorded samples per variant (simulation.recordedCycles × samples per cycle), found ${scenario.simulation.recordedCycles} × ${Math.round(estimate.recordedSamples / scenario.simulation.recordedCycles)} = ${estimate.recordedSamples}${path === 'simulation.recordedCycles' ? ' (samples per cycle are raised to 24 per leakage ring): record fewer cycles' : ''}`,
    });
  }
  if (estimate.estimatedSeconds > maxSeconds) {
    const { fastest } = estimate;
    const culprit = ['switch.frequency', ...fastest.fields].reduce((a, b) => (outsideTypical(scenario, b) > outsideTypical(scenario, a) ? b : a), fastest.fields[0]!);
    const typical = TYPICAL[culprit]!;
    const value = typical.read(scenario)!;
    refusals.push({
      kind: 'time',
      path: culprit,
      message: `expected a scenario that runs within ${fmt(maxSeconds)} s, found ${fmt(value)} ${typical.unit}${outsideTypical(scenario, culprit) > 0 ? ` (typical: ${fmt(typical.low)}–${fmt(typical.high)} ${typical.unit}; a wrong SI prefix?)` : ''}: `
        + `each switching period of ${fmt(1 / scenario.switch.frequency)} s holds ${fmt(estimate.fastPeriodsPerCycle)} periods of ${fastest.what} (${fmt(fastest.periodSeconds)} s from ${fastest.fields.join(', ')}), `
        + `an estimated ${fmt(estimate.estimatedSeconds)} s for ${variants.length} variant run(s). Check those values, or ${liftHint(Math.ceil(2 * estimate.estimatedSeconds))}`,
    });
  }
  return refusals;
}
