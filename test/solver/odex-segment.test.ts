import { describe, expect, it } from 'vitest';
import { OdexSegmentIntegrator } from '../../src/solver/odex-segment.js';
import { ModeModel, SECONDS_PER_TIME_UNIT, SWITCH_ON, type Mode } from '../../src/model/modes.js';
import { circuitForVariant } from '../../src/model/circuit-params.js';
import { IP, VC, VD } from '../../src/model/state.js';
import type { CircuitParams } from '../../src/model/circuit-params.js';
import { labScenario } from '../support/lab-scenarios.js';

// Closed forms per mode (Nilsson & Riedel, Electric Circuits; any circuits text):
// LC ring f0 = 1/(2π√(LC)); series RLC ζ = (R/2)·√(C/L), ωd = ω0·√(1−ζ²), envelope exp(−ζ·ω0·t);
// RC decay exp(−t/RC). Errors are stated in units of the solver tolerance.

const RTOL = 1e-8;
const integrator = (scale: number): OdexSegmentIntegrator =>
  new OdexSegmentIntegrator({ stateSize: 5, relativeTolerance: RTOL, absoluteTolerance: [1, 1, scale, scale, scale].map((s) => s * RTOL) });

/** One mode's field as the integrator takes it. */
function field(p: CircuitParams, mode: Mode) {
  const m = new ModeModel(p, mode);
  return { derivative: (x: ArrayLike<number>, out: number[]) => m.derivative(x, out), system: null };
}

/** The drain-free, output-diode-on mode: the leakage inductance rings against the drain capacitance. */
function ringMode(primaryResistance: number) {
  // A 100 mH magnetizing inductance keeps im (and the R·im shift of the equilibrium) still during the ring.
  const scenario = labScenario({
    transformer: { primaryResistance, magnetizingInductance: '100m' },
    switch: { drainCapacitance: '100p', peakCurrent: undefined, dutyCycle: 0.1 },
  });
  const p = circuitForVariant(scenario, 'clamp');
  return { p, mode: field(p, { ...SWITCH_ON, drain: 'free', outputDiodeOn: true }) };
}

describe('OdexSegmentIntegrator on single modes against closed forms', () => {
  it('integrate(free+out, R = 0) follows the LC ring: vd − (Vin+VR) = I0·Z0·sin(ω0·t), within 20 × rtol', () => {
    const { p, mode } = ringMode(0);
    const l = p.leakageInductance, c = p.drainNode.at(0);
    const w0 = 1 / Math.sqrt(l * c) * SECONDS_PER_TIME_UNIT; // rad per µs
    const z0 = Math.sqrt(l / c);
    const i0 = 0.5, vEq = p.supplyVoltage + p.reflectedVoltage;
    const tEnd = 3.3 * (2 * Math.PI / w0);
    let worst = 0;
    const result = integrator(vEq).integrate({
      ...mode, t0: 0, x0: [i0, 1, vEq, 0, 0], tEnd, events: [], initialStep: 0.001, maxStep: 1,
      observer: (a, b, stateAt) => {
        const x = [0, 0, 0, 0, 0];
        for (const t of [a, (a + b) / 2, b]) {
          stateAt(t, x);
          worst = Math.max(worst, Math.abs(x[VD]! - vEq - i0 * z0 * Math.sin(w0 * t)) / (i0 * z0), Math.abs(x[IP]! - i0 * Math.cos(w0 * t)) / i0);
        }
      },
    });
    expect(result.status).toBe('reached-end');
    expect(Math.abs(result.x[VD]! - vEq - i0 * z0 * Math.sin(w0 * tEnd)) / (i0 * z0)).toBeLessThan(20 * RTOL);
    expect(worst).toBeLessThan(20 * RTOL * 10); // dense output is one order less accurate than the step ends
  });

  it('integrate(free+out, R > 0) decays like the series RLC: ωd = ω0·√(1−ζ²), envelope exp(−ζ·ω0·t)', () => {
    const { p, mode } = ringMode(20);
    const l = p.leakageInductance, c = p.drainNode.at(0), r = p.primaryResistance;
    const w0 = SECONDS_PER_TIME_UNIT / Math.sqrt(l * c);
    const zeta = (r / 2) * Math.sqrt(c / l);
    const wd = w0 * Math.sqrt(1 - zeta * zeta);
    // Start at the equilibrium voltage with i0; the magnetizing current is held equal so that the
    // winding resistance drop is part of the equilibrium: vEq = Vin + VR − R·im.
    const i0 = 0.5, im = 0;
    const vEq = p.supplyVoltage + p.reflectedVoltage - r * im;
    const tEnd = 2.7 * (2 * Math.PI / wd);
    const result = integrator(vEq).integrate({ ...mode, t0: 0, x0: [i0, im, vEq, 0, 0], tEnd, events: [], initialStep: 0.001, maxStep: 1 });
    // Current of a series RLC released at the equilibrium voltage with current i0:
    // i(t) = i0·e^(−ζω0t)·(cos ωd t − ζω0/ωd · sin ωd t); vd follows from Coss·dvd/dt = i.
    const decay = Math.exp(-zeta * w0 * tEnd);
    const expectedCurrent = i0 * decay * (Math.cos(wd * tEnd) - (zeta * w0 / wd) * Math.sin(wd * tEnd));
    expect(zeta).toBeGreaterThan(0.01);
    // What is left is the magnetizing current's slide at −VR/Lm (about 1e-6 of i0 here).
    expect(Math.abs(result.x[IP]! - expectedCurrent) / i0).toBeLessThan(1e-5);
  });

  it('integrate(clamp cap with the diode off) decays as exp(−t/(R·C)) within 10 × rtol', () => {
    const scenario = labScenario();
    const p = circuitForVariant(scenario, 'clamp');
    const mode = field(p, { ...SWITCH_ON, drain: 'free' });
    const tau = p.clamp!.resistance * p.clamp!.capacitance / SECONDS_PER_TIME_UNIT;
    const result = integrator(200).integrate({ ...mode, t0: 0, x0: [0, 0, 100, 150, 0], tEnd: 2 * tau, events: [], initialStep: 0.01, maxStep: 1e9 });
    expect(Math.abs(result.x[VC]! - 150 * Math.exp(-2)) / 150).toBeLessThan(10 * RTOL);
  });

  it('integrate finds a threshold crossed and re-crossed inside one solver step', () => {
    const { p, mode } = ringMode(0);
    const l = p.leakageInductance, c = p.drainNode.at(0);
    const w0 = SECONDS_PER_TIME_UNIT / Math.sqrt(l * c);
    const z0 = Math.sqrt(l / c);
    const i0 = 0.5, vEq = p.supplyVoltage + p.reflectedVoltage;
    // A level 0.2 % below the ring's crest: the drain stays above it for ~4 % of a ring period,
    // far shorter than the extrapolation code's steps on this smooth ring.
    const level = vEq + 0.998 * i0 * z0;
    const event = (x: ArrayLike<number>): number => x[VD]! - level;
    const expected = Math.asin(0.998) / w0;
    const problem = { ...mode, t0: 0, x0: [i0, 1, vEq, 0, 0], tEnd: 2 * Math.PI / w0, events: [event], initialStep: 0.001, maxStep: 1 };
    const stepEndsOnly = new OdexSegmentIntegrator({ stateSize: 5, relativeTolerance: 1e-6, absoluteTolerance: [1e-6, 1e-6, 1e-4, 1e-4, 1e-4], eventSamplesPerStep: 1 }).integrate(problem);
    const sampled = new OdexSegmentIntegrator({ stateSize: 5, relativeTolerance: 1e-6, absoluteTolerance: [1e-6, 1e-6, 1e-4, 1e-4, 1e-4] }).integrate(problem);
    // Sign tests at step ends only miss it: that is what the interior samples are for.
    expect(stepEndsOnly.status).toBe('reached-end');
    expect(sampled.status).toBe('event');
    // Near the crest the drain moves slowly, so the time error is the voltage tolerance divided by
    // the slope there (cos(asin 0.998) ≈ 0.063): allow 50 × rtol in phase.
    expect(Math.abs(sampled.t - expected) * w0).toBeLessThan(50 * 1e-6);
  });
});

describe('OdexSegmentIntegrator carrying only the components a mode moves', () => {
  it('ModeModel.movingComponents lists the currents and the drain in a bare free ring (the clamp and damper states held), and every component it leaves out has a rate of exactly zero', () => {
    const p = circuitForVariant(labScenario(), 'bare');
    const model = new ModeModel(p, { ...SWITCH_ON, drain: 'free', outputDiodeOn: true });
    expect(model.movingComponents).toEqual([IP, 1, VD]);
    const clamped = new ModeModel(circuitForVariant(labScenario(), 'clamp'), { ...SWITCH_ON, drain: 'free' });
    expect(clamped.movingComponents).toContain(VC);
    // Any state: what is left out does not move (seeded states far from the probes).
    const out = new Array<number>(5);
    for (let k = 0; k < 20; k++) {
      const x = [0.3 - 0.07 * k, -1.1 + 0.2 * k, 40 + 13 * k, 90 - 5 * k, 12 * k - 60];
      model.derivative(x, out);
      for (let i = 0; i < 5; i++) if (!model.movingComponents.includes(i)) expect(out[i], `component ${i}`).toBe(0);
    }
  });

  it('integrate(free+out, R = 0) on the ring alone (3 of 5 components) keeps the closed form within 20 × rtol, the clamp state untouched, and the same event as the whole state', () => {
    const { p, mode } = ringMode(0);
    const l = p.leakageInductance, c = p.drainNode.at(0);
    const w0 = 1 / Math.sqrt(l * c) * SECONDS_PER_TIME_UNIT;
    const z0 = Math.sqrt(l / c);
    const i0 = 0.5, vEq = p.supplyVoltage + p.reflectedVoltage;
    const tEnd = 3.3 * (2 * Math.PI / w0);
    const x0 = [i0, 1, vEq, 37.5, 12];
    const moving = [IP, 1, VD];
    const reduced = integrator(vEq).integrate({ ...mode, moving, t0: 0, x0, tEnd, events: [], initialStep: 0.001, maxStep: 1 });
    expect(reduced.status).toBe('reached-end');
    expect(Math.abs(reduced.x[VD]! - vEq - i0 * z0 * Math.sin(w0 * tEnd)) / (i0 * z0)).toBeLessThan(20 * RTOL);
    expect(reduced.x[VC]).toBe(37.5);
    expect(reduced.x[4]).toBe(12);
    // The crossing of a level on the ring: located where the whole state's run locates it.
    const level = vEq + 0.9 * i0 * z0;
    const problem = { ...mode, t0: 0, x0, tEnd, events: [(x: ArrayLike<number>) => x[VD]! - level], initialStep: 0.001, maxStep: 1 };
    const whole = integrator(vEq).integrate(problem);
    const part = integrator(vEq).integrate({ ...problem, moving });
    expect(whole.status).toBe('event');
    expect(part.status).toBe('event');
    expect(Math.abs(part.t - Math.asin(0.9) / w0) * w0).toBeLessThan(1e-6);
    expect(Math.abs(part.t - whole.t) * w0).toBeLessThan(1e-7);
    expect(part.x[VC]).toBe(37.5);
  });
});
