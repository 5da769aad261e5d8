// The independent reference model (test/oracle/reference/) against closed forms that need no engine.
// Every expected value below is computed here from a formula; none is copied from a run.

import { describe, expect, it } from 'vitest';
import { DrainCapacitance, equivalentCapacitances, gaussLegendreRule } from './reference/capacitance.js';
import {
  chargeControlFromRecoveryTime, conductingChargeRate, forwardRecoveryFromDatasheet, forwardRecoveryVolts,
  junctionCharge, recoveringChargeRate, recoveringCurrent, type ChargeControl,
} from './reference/charge-control.js';
import { locateRisingRoot, RungeKutta4 } from './reference/integrator.js';
import { readScenario, reflectedVolts, type CossPoint } from './reference/netlist.js';
import { ExtremaRecorder } from './reference/reference-run.js';
import { E_AVALANCHE, E_TURN_OFF, SwitchingNode } from './reference/switching-node.js';

// A lossless bare primary: Rp = 0, Ron = 0 (vd = 0 while on, so the on-time ramp is exactly
// Vin·t/(Lm + Llk)), fixed duty 0.1 so that the ring stays above the body diode.
function losslessScenario(drainCapacitance: unknown, switchExtras: Record<string, unknown> = {}): Record<string, unknown> {
  return {
    name: 'lossless first swing',
    supply: { voltage: 60 },
    transformer: { magnetizingInductance: '60u', leakageInductance: '1.2u', turnsRatio: 2.5, primaryResistance: 0 },
    output: { voltage: 12, diodeDrop: 0.5 },
    switch: { frequency: '200k', dutyCycle: 0.1, drainCapacitance, onResistance: 0, voltageRating: 150, ...switchExtras },
  };
}

/** First period from rest (all currents 0), recorded. */
function firstPeriod(json: unknown): { recorder: ExtremaRecorder; turnOffAmps: number; openSeconds: number; end: Float64Array } {
  const netlist = readScenario(json);
  const node = new SwitchingNode(netlist, 'bare');
  const { x, mode } = node.initialState();
  const recorder = new ExtremaRecorder(netlist.supplyVolts);
  const run = node.runPeriod(x, mode, recorder);
  return { recorder, turnOffAmps: run.outcome.turnOffAmps, openSeconds: run.outcome.openSeconds, end: run.x };
}

/**
 * ∫ₐᵇ (v − c)·C(v) dv in closed form for the spec's curve (ln C linear between points, constant
 * outside): on a piece C = Ck·e^{β(v − Vk)} the antiderivative is Ck·e^{β(v − Vk)}·((v − c)/β − 1/β²);
 * on a constant piece C·(v − c)²/2 (integration by parts; any calculus text).
 */
function weightedIntegral(points: readonly CossPoint[], a: number, b: number, c: number): number {
  if (b < a) return -weightedIntegral(points, b, a, c);
  const edges = [Number.NEGATIVE_INFINITY, ...points.map((p) => p.volts), Number.POSITIVE_INFINITY];
  let sum = 0;
  for (let s = 0; s + 1 < edges.length; s++) {
    const lo = Math.max(a, edges[s]!), hi = Math.min(b, edges[s + 1]!);
    if (!(hi > lo)) continue;
    const left = points[s - 1], right = points[s];
    if (left !== undefined && right !== undefined && right.farads !== left.farads) {
      const beta = Math.log(right.farads / left.farads) / (right.volts - left.volts);
      const anti = (v: number): number => left.farads * Math.exp(beta * (v - left.volts)) * ((v - c) / beta - 1 / (beta * beta));
      sum += anti(hi) - anti(lo);
    } else {
      const farads = (left ?? right)!.farads;
      sum += (farads * ((hi - c) ** 2 - (lo - c) ** 2)) / 2;
    }
  }
  return sum;
}

/**
 * Lossless first swing after a turn-off at current I from vd = 0 (energy balance; any circuits text):
 * phase 1, output diode off: ½(Lm + Llk)·ip² + ∫_Vin^vd (v − Vin)·C dv is constant until vd reaches
 * E' = Vin + VR·(Lm + Llk)/Lm (where vm = −VR); phase 2, output diode on: ½Llk·ip² + ∫_E^vd (v − E)·C dv
 * is constant with E = Vin + VR, and the first maximum Vpk is where ip = 0.
 */
function firstSwingPeak(points: readonly CossPoint[], vin: number, vr: number, lm: number, llk: number, amps: number): number {
  const l1 = lm + llk;
  const e = vin + vr;
  const ePrime = vin + (vr * l1) / lm;
  const h1 = 0.5 * l1 * amps * amps + weightedIntegral(points, vin, 0, vin);
  const i1Squared = (2 / l1) * (h1 - weightedIntegral(points, vin, ePrime, vin));
  const h2 = 0.5 * llk * i1Squared + weightedIntegral(points, e, ePrime, e);
  let lo = ePrime, hi = ePrime + 10 * e;
  for (let k = 0; k < 200; k++) {
    const mid = 0.5 * (lo + hi);
    if (weightedIntegral(points, e, mid, e) < h2) lo = mid; else hi = mid;
  }
  return 0.5 * (lo + hi);
}

describe('reference model: bare first swing with no loss (energy balance; any circuits text)', () => {
  const constant = losslessScenario('180p');
  const netlist = readScenario(constant);
  const vin = netlist.supplyVolts, vr = reflectedVolts(netlist), lm = netlist.magnetizingHenries, llk = netlist.leakageHenries;
  const c = 180e-12;
  const { recorder, turnOffAmps, openSeconds } = firstPeriod(constant);
  const firstMax = recorder.drainMaxima.find((m) => m.seconds > openSeconds);
  const firstMin = recorder.drainMinima.find((m) => firstMax !== undefined && m.seconds > firstMax.seconds);

  it('turn-off current is the ideal ramp Vin·D·T/(Lm + Llk) (Ron = Rp = 0; any circuits text), to 1e-12', () => {
    const expected = (vin * 0.1 * 5e-6) / (lm + llk);
    expect(Math.abs(turnOffAmps - expected) / expected).toBeLessThan(1e-12);
  });

  it('first maximum equals the two-phase energy balance with a constant C, to 1e-9', () => {
    expect(firstMax).toBeDefined();
    const expected = firstSwingPeak([{ volts: 0, farads: c }], vin, vr, lm, llk, turnOffAmps);
    expect(Math.abs(firstMax!.volts - expected) / expected).toBeLessThan(1e-9);
  });

  it('first maximum is Vin + VR + I·√(Llk/C) up to the swing on Lm + Llk before the output diode starts (any circuits text), to 1e-2', () => {
    // The simple formula leaves out phase 1 (C charged from 0 to E' through Lm + Llk, which raises the
    // current by ~2 % at this small I): ~0.5 % here, so 1e-2 is a sanity bound; the test above is the tight one.
    const simple = vin + vr + turnOffAmps * Math.sqrt(llk / c);
    expect(Math.abs(firstMax!.volts - simple) / simple).toBeLessThan(1e-2);
  });

  it('ring half period from the first maximum to the next minimum is π·√(Llk·C) (LC resonance; any circuits text), to 1e-8', () => {
    expect(firstMin).toBeDefined();
    const frequency = 1 / (2 * (firstMin!.seconds - firstMax!.seconds));
    const expected = 1 / (2 * Math.PI * Math.sqrt(llk * c));
    expect(Math.abs(frequency - expected) / expected).toBeLessThan(1e-8);
  });

  it('with a Coss curve, ½Llk·I₁² = ∫_E^Vpk (v − E)·C(v) dv (closed-form integrals of the exponentials), to 1e-8', () => {
    const points: CossPoint[] = [{ volts: 0, farads: 600e-12 }, { volts: 40, farads: 250e-12 }, { volts: 120, farads: 100e-12 }];
    const curved = losslessScenario(points.map((p) => [p.volts, p.farads]));
    const run = firstPeriod(curved);
    const peak = run.recorder.drainMaxima.find((m) => m.seconds > run.openSeconds);
    expect(peak).toBeDefined();
    const expected = firstSwingPeak(points, vin, vr, lm, llk, run.turnOffAmps);
    // The swing crosses every breakpoint, so each segment's formula is exercised.
    expect(expected).toBeGreaterThan(120);
    expect(Math.abs(peak!.volts - expected) / expected).toBeLessThan(1e-8);
  });
});

describe('reference model: avalanche and current fall on the lossless first swing (closed forms; any circuits text)', () => {
  const c = 180e-12;

  it('avalanche at Vav clips the swing and absorbs Vav·Llk·Iav²/(2·(Vav − E)) (linear current fall on Llk at E − Vav), to 1e-9', () => {
    const vav = 120;
    const json = losslessScenario('180p', { avalancheVoltage: vav });
    const n = readScenario(json);
    const vin = n.supplyVolts, vr = reflectedVolts(n), lm = n.magnetizingHenries, llk = n.leakageHenries;
    const run = firstPeriod(json);
    const l1 = lm + llk, e = vin + vr, ePrime = vin + (vr * l1) / lm, i = run.turnOffAmps;
    // Phase 1 as in firstSwingPeak; then ½Llk·ip² + ½C(vd − E)² is constant up to vd = Vav.
    const i1Squared = i * i + (c / l1) * (vin * vin - (ePrime - vin) ** 2);
    const iavSquared = i1Squared + (c / llk) * ((ePrime - e) ** 2 - (vav - e) ** 2);
    const expected = (vav * llk * iavSquared) / (2 * (vav - e));
    // The avalanche starts at the located crossing, on its far side by at most the location tolerance.
    expect(Math.abs(run.recorder.peakDrainVolts - vav)).toBeLessThan(1e-12 * vav);
    expect(Math.abs(run.end[E_AVALANCHE]! - expected) / expected).toBeLessThan(1e-9);
  });

  it('a linear channel-current fall over tf dissipates I·vp·[tf/2 − (1 − cos ωtf)/(ω²·tf)], vp = Vin + I·(Lm + Llk)/tf, ω = 1/√((Lm + Llk)·C), to 1e-8', () => {
    // During the fall the output diode is off (vd stays below E'): (Lm + Llk)·dip/dt = Vin − vd,
    // C·dvd/dt = ip − I·(1 − s/tf), vd(0) = 0, dvd/dt(0) = 0, so vd = vp·(1 − cos ωs) and the
    // integral of vd·I·(1 − s/tf) over the fall is the expression above (integration by parts).
    const tf = 20e-9;
    const json = losslessScenario('180p', { currentFallTime: tf });
    const n = readScenario(json);
    const l1 = n.magnetizingHenries + n.leakageHenries;
    const run = firstPeriod(json);
    const i = run.turnOffAmps;
    const omega = 1 / Math.sqrt(l1 * c);
    const vp = n.supplyVolts + (i * l1) / tf;
    const expected = i * vp * (tf / 2 - (1 - Math.cos(omega * tf)) / (omega * omega * tf));
    expect(vp * (1 - Math.cos(omega * tf))).toBeLessThan(n.supplyVolts + reflectedVolts(n)); // output diode stays off
    // The fall gets tf/24 steps by default: the RK4 error is ~2e-9 here and falls 16× per halving
    // of the step (checked by hand at 100…800 steps per ring), hence 1e-8.
    expect(Math.abs(run.end[E_TURN_OFF]! - expected) / expected).toBeLessThan(1e-8);
  });
});

describe('reference model: turn-off delay (Vin·td/(Lm + Llk) overshoot of a linear ramp; any circuits text)', () => {
  it('peak-current control with td opens at Ipk + Vin·td/(Lm + Llk), td after the trip, to 1e-10', () => {
    const td = 150e-9;
    const json = losslessScenario('180p', { dutyCycle: undefined, peakCurrent: 0.4, turnOffDelay: td });
    const netlist = readScenario(json);
    const run = firstPeriod(json);
    const l = netlist.magnetizingHenries + netlist.leakageHenries;
    const expected = 0.4 + (netlist.supplyVolts * td) / l;
    expect(Math.abs(run.turnOffAmps - expected) / expected).toBeLessThan(1e-10);
    const tripSeconds = (0.4 * l) / netlist.supplyVolts;
    expect(Math.abs(run.openSeconds - (tripSeconds + td))).toBeLessThan(1e-12 * 5e-6 * 10);
  });
});

describe('reference model: Co(er) and Co(tr) of a two-point curve (closed-form integral of an exponential)', () => {
  const points: CossPoint[] = [{ volts: 0, farads: 900e-12 }, { volts: 25, farads: 120e-12 }];
  const beta = Math.log(120 / 900) / 25;
  // ∫₀^V1 C0·e^{βv} dv = C0·(e^{βV1} − 1)/β; ∫₀^V1 v·C0·e^{βv} dv = C0·[e^{βv}(v/β − 1/β²)]₀^V1; constant above.
  const charge = (v: number): number => v <= 25
    ? (900e-12 * (Math.exp(beta * v) - 1)) / beta
    : (900e-12 * (Math.exp(beta * 25) - 1)) / beta + 120e-12 * (v - 25);
  const energy = (v: number): number => {
    const anti = (u: number): number => 900e-12 * Math.exp(beta * u) * (u / beta - 1 / (beta * beta));
    return v <= 25 ? anti(v) - anti(0) : anti(25) - anti(0) + (120e-12 * (v * v - 625)) / 2;
  };
  for (const volts of [12.5, 25, 91.25, 400]) {
    it(`at V = ${volts} V both equivalents match to 1e-12`, () => {
      const got = equivalentCapacitances(points, volts);
      const er = (2 * energy(volts)) / (volts * volts), tr = charge(volts) / volts;
      expect(Math.abs(got.energyFarads - er) / er).toBeLessThan(1e-12);
      expect(Math.abs(got.chargeFarads - tr) / tr).toBeLessThan(1e-12);
    });
  }

  it('node energy below 0 V is ½·(C0 + extras)·v² (constant C0 below the first point, spec)', () => {
    const node = new DrainCapacitance(points, 33e-12);
    expect(Math.abs(node.nodeEnergy(-0.7) - 0.5 * 933e-12 * 0.49) / (0.5 * 933e-12 * 0.49)).toBeLessThan(1e-14);
  });

  it('the Gauss–Legendre rule integrates x^46 on [−1, 1] to 2/47 (exact to degree 2n − 1 = 47; any numerical analysis text)', () => {
    const { nodes, weights } = gaussLegendreRule(24);
    const sum = nodes.reduce((s, x, k) => s + weights[k]! * x ** 46, 0);
    expect(Math.abs(sum - 2 / 47) / (2 / 47)).toBeLessThan(1e-13);
  });
});

// A minimal test circuit for the diode element: a current source drives the diode; while the
// junction charge is positive the diode carries the source current; once it recovers it is the
// current source −qM/TM. The same RK4 and event location as the circuit model.
function recoveryTime(model: ChargeControl, forwardAmps: number, reverseAmps: number): number {
  const tau = model.lifetimeSeconds;
  const stepTime = 40 * tau; // qM = IF·τ·(1 − e^−40) at the step
  const h = tau / 400;
  const rk = new RungeKutta4(1);
  let recovering = false;
  // The source steps when the integrator lands on stepTime (a flag, not a time test, so that no
  // Runge–Kutta stage of the last forward step sees the reverse current).
  let reversed = false;
  const sourceAmps = (_t: number): number => (reversed ? -reverseAmps : forwardAmps);
  const diodeAmps = (t: number, q: number): number => (recovering ? recoveringCurrent(q, model) : sourceAmps(t));
  const f = (t: number, x: Float64Array, dx: Float64Array): void => {
    dx[0] = recovering ? recoveringChargeRate(x[0]!, model) : conductingChargeRate(sourceAmps(t), x[0]!, model);
  };
  // Events: conduction ends when qE = qM + TM·iD falls to 0; recovered when iD rises to −0.25·IR.
  const g = (t: number, q: number): number => (recovering ? diodeAmps(t, q) + 0.25 * reverseAmps : -junctionCharge(diodeAmps(t, q), q, model));
  let t = 0;
  const x = new Float64Array(1), k1 = new Float64Array(1), out = new Float64Array(1);
  for (let guard = 0; guard < 1e6; guard++) {
    const boundary = reversed ? Number.POSITIVE_INFINITY : stepTime;
    const hStep = Math.min(h, boundary - t);
    f(t, x, k1);
    rk.step(f, t, x, k1, hStep, out);
    const g0 = g(t, x[0]!), g1 = g(t + hStep, out[0]!);
    if (g0 < 0 && g1 >= 0) {
      const theta = locateRisingRoot((th) => { rk.step(f, t, x, k1, th * hStep, out); return g(t + th * hStep, out[0]!); }, g0, g1, 1e-14);
      rk.step(f, t, x, k1, theta * hStep, out);
      t += theta * hStep;
      x[0] = out[0]!;
      if (recovering) return t - stepTime;
      recovering = true;
      continue;
    }
    x[0] = out[0]!;
    if (hStep === boundary - t) { t = boundary; reversed = true; } else t += hStep;
  }
  throw new Error('no recovery');
}

describe('reference model: charge-control diode (Lauritzen & Ma 1991, as the spec derives it)', () => {
  it('stored charge for a constant current after many τ is I·τ (steady state of dqM/dt = i − qM/τ), to 1e-9', () => {
    const model = chargeControlFromRecoveryTime(50e-9, 0.1);
    const amps = 2.5;
    const rk = new RungeKutta4(1);
    const f = (_t: number, x: Float64Array, dx: Float64Array): void => { dx[0] = conductingChargeRate(amps, x[0]!, model); };
    const x = new Float64Array(1), k1 = new Float64Array(1), out = new Float64Array(1);
    const h = model.lifetimeSeconds / 200;
    for (let k = 0; k < 200 * 40; k++) {
      f(k * h, x, k1);
      rk.step(f, k * h, x, k1, h, out);
      x[0] = out[0]!;
    }
    const expected = amps * model.lifetimeSeconds;
    expect(Math.abs(x[0]! - expected) / expected).toBeLessThan(1e-9);
  });

  for (const ratio of [0.05, 0.1, 0.3]) {
    it(`IF = IR test circuit recovers (reverse current back to 0.25·IR) after the datasheet trr, r = ${ratio}, to 1e-8`, () => {
      const trr = 35e-9;
      const model = chargeControlFromRecoveryTime(trr, ratio);
      const measured = recoveryTime(model, 1, 1);
      expect(Math.abs(measured - trr) / trr).toBeLessThan(1e-8);
    });
  }

  it('the recovery time scales with the current ratio as τ·ln((IF + IR)/(IR·(1 + r))) + ln 4·r·τ/(1 + r) (same model, IF = 3·IR), to 1e-8', () => {
    const model = chargeControlFromRecoveryTime(35e-9, 0.1);
    const tau = model.lifetimeSeconds, r = 0.1;
    const expected = tau * Math.log(4 / (1 + r)) + (Math.log(4) * r * tau) / (1 + r);
    const measured = recoveryTime(model, 3, 1);
    expect(Math.abs(measured - expected) / expected).toBeLessThan(1e-8);
  });
});

describe('reference model: forward recovery parameters (Ma & Lauritzen 1993, as the spec derives them)', () => {
  it('on the datasheet ramp iD = a·t the excess peaks at VFP − Vf and falls to 10 % at tfr (19.95 vs the exact root 19.9499: 1e-4)', () => {
    const vfp = 4, vf = 1, tfr = 50e-9, a = 1e8;
    const model = forwardRecoveryFromDatasheet(vfp, vf, tfr, a);
    // qM = ∫ a·t dt = a·t²/2 with no decay (spec: no trr); excess at t is vfr(a·t, a·t²/2).
    const excess = (t: number): number => forwardRecoveryVolts(a * t, 0.5 * a * t * t, model);
    const grid = Array.from({ length: 20001 }, (_, k) => (k / 20000) * 3 * model.peakSeconds);
    const peak = Math.max(...grid.map(excess));
    expect(Math.abs(peak - (vfp - vf)) / (vfp - vf)).toBeLessThan(1e-6);
    const tenPercent = locateRisingRoot((th) => 0.1 * (vfp - vf) - excess(model.peakSeconds + th * 30 * model.peakSeconds),
      0.1 * (vfp - vf) - excess(model.peakSeconds), 0.1 * (vfp - vf) - excess(31 * model.peakSeconds), 1e-14);
    const t10 = model.peakSeconds + tenPercent * 30 * model.peakSeconds;
    expect(Math.abs(t10 - tfr) / tfr).toBeLessThan(1e-4);
  });
});
