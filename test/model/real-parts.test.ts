import { describe, expect, it } from 'vitest';
import { DrainCapacitance, outputCapacitanceEquivalents } from '../../src/model/drain-capacitance.js';
import { circuitForVariant, recoveryTimeOverLifetime } from '../../src/model/circuit-params.js';
import { ModeModel, SECONDS_PER_TIME_UNIT, SWITCH_ON } from '../../src/model/modes.js';
import { IC, IP, QD, VD } from '../../src/model/state.js';
import { OdexSegmentIntegrator } from '../../src/solver/odex-segment.js';
import { runVariant } from '../../src/simulation/run-variant.js';
import { variantMetrics, type VariantMetrics } from '../../src/analysis/variant-metrics.js';
import { reflectedVoltage, type Scenario, type VariantName } from '../../src/circuit/scenario.js';
import { labScenario } from '../support/lab-scenarios.js';

// Checks of the real-part models against closed forms and quadratures written here, never against
// the engine's own formulas. Sources beside each check.

/** Composite Simpson's rule on n (even) intervals: a general-purpose quadrature, independent of the closed forms. */
function simpson(f: (x: number) => number, a: number, b: number, n = 20_000): number {
  const h = (b - a) / n;
  let s = f(a) + f(b);
  for (let i = 1; i < n; i++) s += (i % 2 === 1 ? 4 : 2) * f(a + i * h);
  return (s * h) / 3;
}

/** The curve's definition (ln C linear between points, flat beyond the last, C(0) below 0), written out on its own. */
function curveAt(points: ReadonlyArray<readonly [number, number]>, v: number): number {
  if (v <= 0) return points[0]![1];
  for (let i = 0; i + 1 < points.length; i++) {
    const [v0, c0] = points[i]!, [v1, c1] = points[i + 1]!;
    if (v <= v1) return Math.exp(Math.log(c0) + ((v - v0) / (v1 - v0)) * (Math.log(c1) - Math.log(c0)));
  }
  return points[points.length - 1]![1];
}

const SUPERJUNCTION: Array<[number, number]> = [[0, 1.4e-9], [10, 900e-12], [20, 480e-12], [40, 60e-12], [80, 12e-12], [200, 9e-12], [400, 8e-12]];

describe('DrainCapacitance against its definitions', () => {
  it('Co(er) = 2·∫v·C dv/V² and Co(tr) = ∫C dv/V of a curve match Simpson quadrature of the definitions within 1e-9 (datasheet definitions of the equivalents)', () => {
    for (const V of [15, 60, 476, 650]) {
      const eq = outputCapacitanceEquivalents(SUPERJUNCTION, V);
      // Simpson per segment, so each piece is smooth.
      const knots = [0, ...SUPERJUNCTION.map(([v]) => v).filter((v) => v > 0 && v < V), V];
      let energy = 0, charge = 0;
      for (let i = 0; i + 1 < knots.length; i++) {
        energy += simpson((v) => v * curveAt(SUPERJUNCTION, v), knots[i]!, knots[i + 1]!, 2000);
        charge += simpson((v) => curveAt(SUPERJUNCTION, v), knots[i]!, knots[i + 1]!, 2000);
      }
      expect(Math.abs(eq.energyEquivalent / ((2 * energy) / (V * V)) - 1), `Co(er) at ${V} V`).toBeLessThan(1e-9);
      expect(Math.abs(eq.chargeEquivalent / (charge / V) - 1), `Co(tr) at ${V} V`).toBeLessThan(1e-9);
    }
  });

  it('a two-point curve C0·e^(kv) has ∫₀ⱽ C dv = C0·(e^(kV) − 1)/k and ∫₀ⱽ v·C dv = C0·(e^(kV)·(kV − 1) + 1)/k² (integrals of an exponential)', () => {
    const c0 = 1e-9, c1 = 50e-12, v1 = 100, k = Math.log(c1 / c0) / v1;
    const node = new DrainCapacitance([[0, c0], [v1, c1]]);
    for (const V of [2, 7, 55, 100]) { // not smaller: the reference's own e^(kV)·(kV − 1) + 1 cancels badly
      expect(node.transistorCharge(V) / ((c0 * Math.expm1(k * V)) / k)).toBeCloseTo(1, 12);
      expect(node.transistorEnergy(V) / ((c0 * (Math.exp(k * V) * (k * V - 1) + 1)) / (k * k))).toBeCloseTo(1, 9);
    }
    // Beyond the last point it is a constant: energy grows by c1·(V² − v1²)/2.
    expect(node.transistorEnergy(200) - node.transistorEnergy(100)).toBeCloseTo((c1 * (200 ** 2 - 100 ** 2)) / 2, 15);
    expect(node.at(-5)).toBe(c0);
  });
});

/** The free drain with the output diode conducting: Llk rings against C(v) about E = Vin + VR. */
function freeRing(scenario: Scenario) {
  const p = circuitForVariant(scenario, 'bare');
  const mode = new ModeModel(p, { ...SWITCH_ON, drain: 'free', outputDiodeOn: true });
  return { p, mode, centre: p.supplyVoltage + p.reflectedVoltage };
}

const tightIntegrator = (vScale: number, size = 5) =>
  new OdexSegmentIntegrator({ stateSize: size, relativeTolerance: 1e-11, absoluteTolerance: [1, 1, vScale, vScale, vScale, 1, 1, 1e-6, 1, 1].slice(0, size).map((s) => s * 1e-11) });

describe('the drain ring with a Coss curve (lossless, energy balance)', () => {
  const scenario = labScenario({
    transformer: { primaryResistance: 0, magnetizingInductance: '100m' },
    switch: { drainCapacitance: [[0, '900p'], [120, '300p'], [200, '60p'], [260, '25p'], [400, '20p']] },
    clamp: undefined,
  });

  it('the first swing from E = Vin + VR with current I reaches Vpk where ½·Llk·I² = ∫_E^Vpk (v − E)·C(v) dv, within 1e-7 (energy conservation; any circuits text)', () => {
    const { p, mode, centre } = freeRing(scenario);
    const i0 = 1;
    // The drain peaks when the current into it reaches zero.
    const result = tightIntegrator(centre).integrate({
      derivative: (x, out) => mode.derivative(x, out), system: null, t0: 0, x0: [i0, 0, centre, 0, 0], tEnd: 10,
      events: [(x) => -x[IP]!], initialStep: 1e-4, maxStep: 0.01,
    });
    expect(result.status).toBe('event');
    const stored = 0.5 * p.leakageInductance * i0 * i0;
    const energyTo = (v: number) => simpson((u) => (u - centre) * curveAt(scenario.switch.drainCapacitance as Array<[number, number]>, u), centre, v, 4000);
    let lo = centre, hi = centre + 2000;
    for (let k = 0; k < 200; k++) { const mid = (lo + hi) / 2; if (energyTo(mid) < stored) lo = mid; else hi = mid; }
    const expected = (lo + hi) / 2;
    expect(Math.abs(result.x[VD]! - expected) / (expected - centre)).toBeLessThan(1e-7);
  });

  it('a small ring about E has the frequency 1/(2π·√(Llk·C(E))) within 1e-5 (small-signal LC; any circuits text)', () => {
    const { p, mode, centre } = freeRing(scenario);
    const c = curveAt(scenario.switch.drainCapacitance as Array<[number, number]>, centre);
    const i0 = 1e-5; // a swing of about 4 mV: the capacitance barely moves over it
    const integrator = tightIntegrator(centre);
    const run = (t0: number, x0: number[], g: (x: ArrayLike<number>) => number) => integrator.integrate({
      derivative: (x, out) => mode.derivative(x, out), system: null, t0, x0, tEnd: t0 + 10,
      events: [g], initialStep: 1e-5, maxStep: 0.01,
    });
    // The current crosses zero at the top of the swing and again at its bottom, half a period later:
    // over a whole half swing the capacitance's first-order change about E cancels.
    const top = run(0, [i0, 0, centre, 0, 0], (x) => -x[IP]! / i0);
    const bottom = run(top.t, top.x, (x) => x[IP]! / i0);
    expect([top.status, bottom.status]).toEqual(['event', 'event']);
    const frequency = 1 / (2 * (bottom.t - top.t) * SECONDS_PER_TIME_UNIT);
    expect(Math.abs(frequency * 2 * Math.PI * Math.sqrt(p.leakageInductance * c) - 1)).toBeLessThan(1e-5);
  });
});

describe('the charge-control diode (Lauritzen & Ma, IEEE Trans. Power Electronics, 1991)', () => {
  it('stores q = I·τ for a constant forward current held many lifetimes (dq/dt = i − q/τ)', () => {
    // Everything held still but the diode's charge: the loop carries I into a clamp at the drain's level.
    const scenario = labScenario({
      transformer: { primaryResistance: 0 },
      clamp: { resistance: '1G', capacitance: 1, diodeDrop: 1, loopInductance: 1, diodeRecoveryTime: '500n' },
    });
    const p = circuitForVariant(scenario, 'clamp');
    const tau = p.clamp!.recovery!.lifetime;
    const mode = new ModeModel(p, { drain: 'free', outputDiodeOn: false, clampDiode: 'on', channelFalling: false });
    const current = 0.8, vf = p.clamp!.diodeDrop;
    // vc = −Vf puts the clamp node at Vin − Vf, so the drain sits at Vin with no voltage on the loop.
    const x0 = [current, current, p.supplyVoltage, -vf, 0, current, 0, 0];
    const result = tightIntegrator(200, 8).integrate({
      derivative: (x, out) => mode.derivative(x, out), system: null, t0: 0, x0, tEnd: (30 * tau) / SECONDS_PER_TIME_UNIT,
      events: [], initialStep: 1e-3, maxStep: 1,
    });
    expect(result.status).toBe('reached-end');
    expect(Math.abs(result.x[IC]! - current) / current).toBeLessThan(1e-6);
    expect(Math.abs(result.x[QD]! / (current * tau) - 1)).toBeLessThan(1e-6);
  });

  it('trr/τ for IF = IR: storage τ·ln 2 when TM → 0 (the classic charge-control result, ts = τ·ln(1 + IF/IR)), and more tail as TM/τ grows', () => {
    expect(recoveryTimeOverLifetime(1e-9)).toBeCloseTo(Math.log(2), 8);
    expect(recoveryTimeOverLifetime(0.3)).toBeGreaterThan(recoveryTimeOverLifetime(0.1) - 0.1);
    // r = 0.1: ln(2/1.1) + (0.1/1.1)·ln 4, written out.
    expect(recoveryTimeOverLifetime(0.1)).toBeCloseTo(Math.log(2 / 1.1) + (0.1 / 1.1) * Math.log(4), 14);
  });
});

const metricsOf = (s: Scenario, variant: VariantName): VariantMetrics => variantMetrics(runVariant(s, variant), s.switch.voltageRating);

describe('real parts in settled runs, against closed forms and known directions', () => {
  // The lab flyback: Vin 100 V, VR 100 V, Ipk 1 A, Llk 10 µH, 100 kHz, a 15 kΩ clamp on 100 nF.
  const base = { switch: { drainCapacitance: '100p' } };

  it('a turn-off delay td lets the current overshoot by (Vin − (Rp + Ron)·Ipk)·td/(Lm + Llk) within 0.5 % (the on-time slope; any flyback text)', () => {
    const td = 200e-9;
    const s = labScenario({ ...base, switch: { drainCapacitance: '100p', turnOffDelay: td } });
    const m = metricsOf(s, 'clamp');
    const { magnetizingInductance: lm, leakageInductance: llk, primaryResistance: rp } = s.transformer;
    const slope = (s.supply.voltage - (rp + s.switch.onResistance) * 1) / (lm + llk);
    expect(Math.abs((m.turnOffCurrent - 1) / (slope * td) - 1)).toBeLessThan(5e-3);
  }, 60_000);

  it('a clamp loop Ls lets the drain overshoot the clamp by ≈ I·√(Ls/C) (LC step; Todd, SEM-900) within 8 %, I the current arriving at the clamp level', () => {
    const ls = 10e-9, c = 100e-12;
    const s = labScenario({ ...base, clamp: { loopInductance: ls, diodeDrop: 0 } });
    const m = metricsOf(s, 'clamp');
    const vr = reflectedVoltage(s);
    const level = m.clampVoltageMean! + s.supply.voltage;
    // The leakage current left on arrival: ½·Llk·(I0² − I²) went into C above E = Vin + VR (energy balance).
    const e = s.supply.voltage + vr;
    const arriving = Math.sqrt(1 - (c * (level - e) ** 2) / s.transformer.leakageInductance);
    const expected = arriving * Math.sqrt(ls / c);
    expect(Math.abs(m.peakAboveClamp! / expected - 1)).toBeLessThan(0.08);
  }, 60_000);

  it('directions known from practice: a slow-recovery diode lowers the clamp voltage and the resistor loss; loop inductance and forward recovery raise the clamped peak; avalanche holds the drain at its voltage (common practice)', () => {
    const ideal = metricsOf(labScenario(base), 'clamp');
    const slow = metricsOf(labScenario({ ...base, clamp: { diodeRecoveryTime: '1u' } }), 'clamp');
    expect(slow.clampVoltageMean!).toBeLessThan(ideal.clampVoltageMean!);
    expect(slow.clampResistorPower!).toBeLessThan(ideal.clampResistorPower!);
    expect(slow.clampDiodeReverseCharge!).toBeGreaterThan(0);
    const loop = metricsOf(labScenario({ ...base, clamp: { loopInductance: '20n' } }), 'clamp');
    expect(loop.peakDrainVoltage).toBeGreaterThan(ideal.peakDrainVoltage);
    const forward = metricsOf(labScenario({ ...base, clamp: { loopInductance: '20n', diodeForwardRecoveryVoltage: 15, diodeForwardRecoveryTime: '100n' } }), 'clamp');
    expect(forward.peakDrainVoltage).toBeGreaterThan(loop.peakDrainVoltage);
    const bare = metricsOf(labScenario(base), 'bare');
    const vav = 0.9 * bare.peakDrainVoltage;
    const held = metricsOf(labScenario({ ...base, switch: { drainCapacitance: '100p', avalancheVoltage: vav } }), 'bare');
    expect(held.peakDrainVoltage).toBeCloseTo(vav, 9);
    expect(held.avalancheEnergyPerCycle).toBeGreaterThan(0);
    expect(held.avalanchePower).toBeCloseTo(held.avalancheEnergyPerCycle * 100e3, 12);
  }, 120_000);

  it.each<[string, Record<string, unknown>, VariantName]>([
    ['a Coss curve and winding capacitance', { transformer: { windingCapacitance: '15p' }, switch: { drainCapacitance: [[0, '600p'], [100, '150p'], [300, '80p']] } }, 'clamp'],
    ['a clamp loop', { clamp: { loopInductance: '10n', loopResistance: 0.3 } }, 'clamp'],
    // Loop and junction values chosen for a slow (60 ns) loop ring: a 2 ns one costs minutes here.
    ['a clamp loop and junction capacitance', { clamp: { loopInductance: '100n', loopResistance: 2, diodeCapacitance: '50p' } }, 'clamp'],
    ['reverse recovery, no loop', { clamp: { diodeRecoveryTime: '300n' } }, 'clamp'],
    ['reverse recovery in a loop', { clamp: { diodeRecoveryTime: '300n', loopInductance: '30n', loopResistance: 0.5 } }, 'clamp'],
    ['reverse recovery in a loop with junction capacitance', { clamp: { diodeRecoveryTime: '300n', loopInductance: '100n', loopResistance: 2, diodeCapacitance: '50p' } }, 'clamp'],
    ['forward recovery', { clamp: { loopInductance: '10n', diodeForwardRecoveryVoltage: 8, diodeForwardRecoveryTime: '60n' } }, 'clamp'],
    ['avalanche', { switch: { drainCapacitance: '100p', avalancheVoltage: 260 } }, 'bare'],
    ['a turn-off delay and current fall', { switch: { drainCapacitance: '100p', turnOffDelay: '100n', currentFallTime: '40n' } }, 'clamp'],
  ])('with %s the settled period balances its energy within 3e-5 of the input (energy conservation)', (_what, patch, variant) => {
    const m = metricsOf(labScenario({ ...base, ...patch, switch: { ...base.switch, ...(patch.switch as object | undefined) } }), variant);
    expect(m.settled).toBe(true);
    expect(Math.abs(m.energyBalance.relativeMismatch)).toBeLessThan(3e-5);
  }, 120_000);
});

