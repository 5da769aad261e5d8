import { describe, expect, it } from 'vitest';
import { shootPeriodicOrbit } from '../../src/simulation/shooting.js';

// The shooting on affine maps P(x) = M·x + c, whose fixed point solves (I − M)·x* = c in closed
// form (Cramer's rule for the 2×2 cases here), against plain iteration's known rate |λ|ᵏ.

const affine = (m: number[][], c: number[]) => (x: number[]) => ({
  end: m.map((row, i) => row.reduce((s, v, j) => s + v * x[j]!, c[i]!)),
  sameStart: true,
});

describe('shootPeriodicOrbit(start, P, options)', () => {
  it('finds the fixed point of a map with a slow mode (multiplier 0.999) in at most 12 evaluations, where plain iteration would need about 9,000 to reach 1e-6', () => {
    const m = [[0.999, 0.02], [0, 0.3]], c = [1, 2];
    // (I − M)·x* = c: x2 = 2 / 0.7, x1 = (1 + 0.02·x2) / 0.001.
    const x2 = 2 / 0.7, x1 = (1 + 0.02 * x2) / 0.001;
    const result = shootPeriodicOrbit([0, 0], affine(m, c), { scales: [1000, 1], tolerance: 1e-6 });
    expect(result.outcome).toBe('settled');
    expect(result.cycles).toBeLessThanOrEqual(12);
    expect(Math.abs(result.x[0]! - x1) / 1000).toBeLessThan(1e-6);
    expect(Math.abs(result.x[1]! - x2)).toBeLessThan(1e-6);
    expect(result.largestMultiplier!).toBeLessThan(1);
    // Plain iteration: the error shrinks as 0.999ᵏ from about 1 (scaled), so ln(1e-6)/ln(0.999) ≈ 13,800 cycles.
    expect(Math.log(1e-6) / Math.log(0.999)).toBeGreaterThan(9000);
  });

  it('flags a repelling fixed point (multiplier −1.6, a subharmonic) by its largest multiplier', () => {
    const result = shootPeriodicOrbit([0.3], affine([[-1.6]], [1]), { scales: [1], tolerance: 1e-8 });
    expect(result.outcome).toBe('settled');
    expect(Math.abs(result.x[0]! - 1 / 2.6)).toBeLessThan(1e-8);
    expect(result.largestMultiplier!).toBeGreaterThan(1.5);
  });

  it('keeps its multiplier estimate near the true one (0.4 here) when the map carries noise of a tenth of the tolerance, as a solver\'s does', () => {
    // A 3-D affine map with multipliers 0.4, 0.33 and 0.17 plus seeded noise: near the orbit the
    // steps shrink to the noise's size, where a secant update learns the noise (it reported
    // multipliers above 2 that way, and an attracting orbit was tried with extra cycles).
    const tolerance = 1e-5;
    let worst = 0;
    for (let seed = 1; seed <= 50; seed++) {
      let state = seed;
      const noise = (): number => { state = (state * 16807) % 2147483647; return 0.1 * tolerance * (state / 2147483647 - 0.5); };
      const P = (x: number[]) => ({
        end: [0.3 * x[0]! + 0.1 * x[1]! + 1 + noise(), 0.05 * x[0]! + 0.2 * x[1]! - 2 + noise(), 0.4 * x[2]! + 0.5 + noise()],
        sameStart: true,
      });
      const result = shootPeriodicOrbit([0, 0, 0], P, { scales: [1, 1, 1], tolerance });
      expect(result.outcome).toBe('settled');
      worst = Math.max(worst, result.largestMultiplier!);
    }
    expect(worst).toBeLessThan(0.6);
  });

  it('with the components the map does not read marked forgotten, converges where their large row derails the plain update (a drain whose ring phase at turn-on swings 500 V)', () => {
    // P reads x0 and x1 only; x2 is overwritten each period (as the switch pins the drain) but
    // its end value swings hard with the others. Fixed point of the first two rows, found once by
    // plain iteration to 1e-14 (a contraction: its multipliers are below 0.8).
    const swing = 500;
    const P = (x: number[]) => ({
      end: [0.5 * x[0]! + 0.3 * x[1]! + 1, 0.2 * x[0]! + 0.6 * x[1]! - 1 + 0.1 * Math.sin(x[0]!), swing * Math.sin(x[0]! + 2 * x[1]!)],
      sameStart: true,
    });
    let fixed = [0, 0, 0];
    for (let k = 0; k < 400; k++) fixed = P(fixed).end;
    const plain = shootPeriodicOrbit([0, 0, 0], P, { scales: [1, 1, 1], tolerance: 1e-8 });
    const structured = shootPeriodicOrbit([0, 0, 0], P, { scales: [1, 1, 1], tolerance: 1e-8, forgotten: [false, false, true] });
    expect(structured.outcome).toBe('settled');
    structured.x.forEach((v, i) => expect(Math.abs(v - fixed[i]!), `component ${i}`).toBeLessThan(1e-6 * Math.max(1, Math.abs(fixed[i]!))));
    expect(structured.cycles).toBeLessThan(plain.outcome === 'settled' ? plain.cycles : Infinity);
  });

  it('starts one evaluation ahead from a plain cycle the caller ran already, and flags the evaluation that settles it, whose start is on the orbit within the tolerance', () => {
    const m = [[0.9, 0.05], [0.1, 0.5]], c = [1, 2];
    // (I − M)·x* = c by Cramer's rule: det = 0.1·0.5 − 0.05·0.1.
    const det = 0.1 * 0.5 - 0.05 * 0.1;
    const fixed = [(1 * 0.5 + 0.05 * 2) / det, (0.1 * 2 + 0.1 * 1) / det];
    const tolerance = 1e-7;
    const calls: Array<{ x: number[]; mayBeLast: boolean }> = [];
    const P = (x: number[], mayBeLast: boolean) => { calls.push({ x, mayBeLast }); return affine(m, c)(x); };
    const cold = shootPeriodicOrbit([0, 0], P, { scales: [1, 1], tolerance });
    const coldCalls = calls.length;
    calls.length = 0;
    const ahead = shootPeriodicOrbit([0, 0], P, { scales: [1, 1], tolerance, startEvaluated: affine(m, c)([0, 0]) });
    expect(cold.outcome).toBe('settled');
    expect(ahead.outcome).toBe('settled');
    expect(cold.cycles).toBe(coldCalls);
    expect(ahead.cycles).toBe(calls.length);
    expect(ahead.cycles).toBeLessThan(cold.cycles);
    // Flagged only after a quiet step: not the first evaluation, but the last, which settled it
    // and started on the orbit.
    const last = calls.at(-1)!;
    expect(calls[0]!.mayBeLast).toBe(false);
    expect(last.mayBeLast).toBe(true);
    last.x.forEach((v, i) => expect(Math.abs(v - fixed[i]!), `component ${i}`).toBeLessThan(tolerance));
  });

  it('settles on full evaluations only: rough ones (a looser solver, here 3 tolerances of noise) steer while the change is large', () => {
    const m = [[0.8, 0.1], [0.05, 0.6]], c = [1, -1];
    // (I − M)·x* = c by Cramer's rule.
    const det = 0.2 * 0.4 - 0.1 * 0.05;
    const fixed = [(1 * 0.4 + 0.1 * -1) / det, (0.2 * -1 + 0.05 * 1) / det];
    const tolerance = 1e-6;
    let seed = 7;
    const noise = (): number => { seed = (seed * 16807) % 2147483647; return (seed / 2147483647 - 0.5) * 2 * 3 * tolerance; };
    const calls: boolean[] = [];
    const result = shootPeriodicOrbit([0, 0], (x, _mayBeLast, rough) => {
      calls.push(rough);
      const end = affine(m, c)(x).end;
      return { end: rough ? end.map((v) => v + noise()) : end, sameStart: true, rough };
    }, { scales: [1, 1], tolerance });
    expect(result.outcome).toBe('settled');
    result.x.forEach((v, i) => expect(Math.abs(v - fixed[i]!), `component ${i}`).toBeLessThan(tolerance));
    // Rough while far (the start is about 1 away, 10⁶ tolerances), full for the last two.
    expect(calls.some((rough) => rough)).toBe(true);
    expect(calls.slice(-2)).toEqual([false, false]);
  });

  it('from a Jacobian estimate given (a nearby orbit\'s), takes Newton steps at once; the forgotten components\' columns of the estimate are not used', () => {
    // An affine map: F(u) = (M − I)·u + c exactly, so with that Jacobian the first step lands on
    // the fixed point, and two quiet evaluations follow.
    const m = [[0.95, 0.2, 0], [-0.1, 0.7, 0], [3, 1, 0]], c = [1, 2, 0.5];
    const scales = [1, 1, 1];
    const exact = [m[0]![0]! - 1, m[0]![1]!, m[0]![2]!, m[1]![0]!, m[1]![1]! - 1, m[1]![2]!, m[2]![0]!, m[2]![1]!, m[2]![2]! - 1];
    // The third component is forgotten (M's third column is 0): a wrong column there must not matter.
    const given = exact.map((v, k) => (k % 3 === 2 ? 1e6 : v));
    const cold = shootPeriodicOrbit([0, 0, 0], affine(m, c), { scales, tolerance: 1e-9, forgotten: [false, false, true] });
    const warm = shootPeriodicOrbit([0, 0, 0], affine(m, c), { scales, tolerance: 1e-9, forgotten: [false, false, true], initialJacobian: given });
    expect(cold.outcome).toBe('settled');
    expect(warm.outcome).toBe('settled');
    expect(warm.cycles).toBe(3);
    expect(cold.cycles).toBeGreaterThan(warm.cycles);
    warm.x.forEach((v, i) => expect(Math.abs(v - cold.x[i]!), `component ${i}`).toBeLessThan(1e-8));
    // The estimate it ends with is the one to pass on: here still the exact one (the steps confirmed it).
    warm.jacobian!.forEach((v, k) => { if (k % 3 !== 2) expect(v).toBeCloseTo(exact[k]!, 9); });
  });

  it('hands back as bound by noise when the map\'s error is about the tolerance, with what it learned; from that, a quieter map settles in a few evaluations', () => {
    // P(x) = M·x + c plus seeded noise of ±3 tolerances on every evaluation: no step can make two
    // evaluations running quiet, so more iterations only spend cycles. Fixed point by Cramer's rule.
    const m = [[0.9, 0.05], [0.1, 0.5]], c = [1, -1];
    const det = (1 - 0.9) * (1 - 0.5) - 0.05 * 0.1;
    const fixed = [(c[0]! * (1 - 0.5) + 0.05 * c[1]!) / det, ((1 - 0.9) * c[1]! + 0.1 * c[0]!) / det];
    const tolerance = 1e-6;
    const noisy = (amplitude: number) => {
      let state = 7;
      const noise = (): number => { state = (state * 16807) % 2147483647; return amplitude * tolerance * (2 * state / 2147483647 - 1); };
      return (x: number[]) => ({ end: [m[0]![0]! * x[0]! + m[0]![1]! * x[1]! + c[0]! + noise(), m[1]![0]! * x[0]! + m[1]![1]! * x[1]! + c[1]! + noise()], sameStart: true });
    };
    const bound = shootPeriodicOrbit([0, 0], noisy(3), { scales: [1, 1], tolerance });
    expect(bound.outcome).toBe('handed-back');
    expect(bound.noiseBound).toBe(true);
    // Well before the 40-iteration budget: six evaluations near the orbit, after the few that get there.
    expect(bound.cycles).toBeLessThanOrEqual(15);
    // Near the orbit: the map's error over 1 − λ of its slow mode (0.9 here), 30 tolerances, and the noise of the cycle run.
    bound.x.forEach((v, i) => expect(Math.abs(v - fixed[i]!)).toBeLessThan(40 * tolerance));
    const settled = shootPeriodicOrbit(bound.x, noisy(0.03), { scales: [1, 1], tolerance, initialJacobian: bound.jacobian! });
    expect(settled.outcome).toBe('settled');
    expect(settled.cycles).toBeLessThanOrEqual(4);
    settled.x.forEach((v, i) => expect(Math.abs(v - fixed[i]!)).toBeLessThan(tolerance));
  });

  it('is not bound by noise of a tenth of the tolerance: it settles', () => {
    let state = 11;
    const noise = (): number => { state = (state * 16807) % 2147483647; return 0.1e-6 * (2 * state / 2147483647 - 1); };
    const result = shootPeriodicOrbit([0], (x) => ({ end: [0.8 * x[0]! + 1 + noise()], sameStart: true }), { scales: [1], tolerance: 1e-6 });
    expect(result.outcome).toBe('settled');
    expect(result.noiseBound).toBeUndefined();
    expect(Math.abs(result.x[0]! - 5)).toBeLessThan(1e-6);
  });

  it('hands back to the cycle loop when the devices at the period start change', () => {
    let calls = 0;
    const result = shootPeriodicOrbit([0], (x) => ({ end: [0.5 * x[0]! + 1], sameStart: ++calls < 3 }), { scales: [1], tolerance: 1e-12 });
    expect(result.outcome).toBe('handed-back');
    expect(result.reason).toMatch(/devices/);
    expect(result.cycles).toBe(3);
  });

  it('hands back after its iteration budget on a map with no fixed point', () => {
    const result = shootPeriodicOrbit([0], (x) => ({ end: [x[0]! + 1], sameStart: true }), { scales: [1], tolerance: 1e-9, maxIterations: 10 });
    expect(result.outcome).toBe('handed-back');
  });
});
