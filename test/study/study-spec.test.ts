import { describe, expect, it } from 'vitest';
import { parseTolerance, parseVary, rangeValues, StudySpecError } from '../../src/study/study-spec.js';
import { cornerPoints, gridPoints, monteCarloPoints, percentile, seededRandom } from '../../src/study/study-points.js';

const nominal = (path: string): number | undefined => ({ 'transformer.leakageInductance': 1.2e-6, 'clamp.resistance': 3300 } as Record<string, number>)[path];

describe('parseVary(spec, nominal)', () => {
  it('reads percentages of the nominal value and a step count', () => {
    const r = parseVary('transformer.leakageInductance=-20%..+20%:9', nominal);
    expect(r.path).toBe('transformer.leakageInductance');
    expect(r.from).toBeCloseTo(0.96e-6, 15);
    expect(r.to).toBeCloseTo(1.44e-6, 15);
    expect(r.steps).toBe(9);
    expect(rangeValues(r)[4]).toBeCloseTo(1.2e-6, 15);
  });

  it('reads SI-prefixed ends, with or without a unit, and defaults to 5 steps', () => {
    const r = parseVary('clamp.resistance=2.2k..4.7kΩ', nominal);
    expect([r.from, r.to, r.steps]).toEqual([2200, 4700, 5]);
    const l = parseVary('transformer.leakageInductance=1uH..1.5u:3', nominal);
    expect([l.from, l.to, l.steps]).toEqual([1e-6, 1.5e-6, 3]);
  });

  it.each([
    ['clamp.resistance', 'expected PATH=FROM..TO'],
    ['clamp.resistance=1k-2k', 'expected PATH=FROM..TO'],
    ['clamp.resistence=1k..2k', 'found no field clamp.resistence'],
    ['clamp.resistance=1k..abc', 'expected TO as a number'],
    ['clamp.resistance=1k..2k:1', 'expected STEPS from 2 to 1000'],
    ['clamp.resistance=1k..2k:5000', 'expected STEPS from 2 to 1000'],
    ['clamp.resistance=1k..2k:abc', 'expected STEPS after the colon as a whole number from 2 to 1000, found "abc"'],
    ['clamp.resistance=1k..2k:2.5', 'expected STEPS after the colon as a whole number'],
    ['clamp.resistance=1...2k', 'FROM and TO separated by exactly two dots'],
    ['clamp.resistance=1k..2k..3k', 'FROM and TO separated by exactly two dots'],
    ['transformer.leakageInductance=1uV..2uA', 'expected FROM as a number in H or a string with an SI prefix'],
    ['transformer.leakageInductance=1uH..2uF', 'expected TO as a number in H'],
  ])('rejects %s with a message saying what was expected', (spec, message) => {
    expect(() => parseVary(spec, nominal)).toThrow(StudySpecError);
    expect(() => parseVary(spec, nominal)).toThrow(message);
  });
});

describe('parseTolerance(spec, nominal)', () => {
  it('reads ±X% with a uniform default and :normal', () => {
    expect(parseTolerance('clamp.resistance=±5%', nominal)).toEqual({ path: 'clamp.resistance', fraction: 0.05, distribution: 'uniform' });
    expect(parseTolerance('clamp.resistance=+-5%:normal', nominal).distribution).toBe('normal');
  });

  it.each([
    ['clamp.resistance=5%', 'expected PATH=±X%'],
    ['clamp.resistance=±5%:gaussian', 'expected PATH=±X%'],
    ['clamp.resistance=±150%', 'between 0 and 100'],
    ['nothing.here=±5%', 'found no field nothing.here'],
  ])('rejects %s naming what was expected', (spec, message) => {
    expect(() => parseTolerance(spec, nominal)).toThrow(message);
  });
});

describe('study points', () => {
  const ranges = [
    { path: 'a', from: 1, to: 3, steps: 3 },
    { path: 'b', from: 10, to: 20, steps: 2 },
  ];

  it('gridPoints(ranges) is the Cartesian product, the first range slowest', () => {
    expect(gridPoints(ranges)).toEqual([
      { a: 1, b: 10 }, { a: 1, b: 20 }, { a: 2, b: 10 }, { a: 2, b: 20 }, { a: 3, b: 10 }, { a: 3, b: 20 },
    ]);
  });

  it('cornerPoints(ranges) is every combination of the ends', () => {
    expect(cornerPoints(ranges)).toEqual([{ a: 1, b: 10 }, { a: 1, b: 20 }, { a: 3, b: 10 }, { a: 3, b: 20 }]);
  });

  it('monteCarloPoints(…, seed) is repeatable for a seed, differs between seeds, and stays within the tolerance', () => {
    const tol = [{ path: 'x', fraction: 0.2, distribution: 'uniform' as const }, { path: 'y', fraction: 0.1, distribution: 'normal' as const }];
    const nom = (p: string): number => (p === 'x' ? 100 : 5);
    const a = monteCarloPoints(tol, nom, 500, 42);
    expect(monteCarloPoints(tol, nom, 500, 42)).toEqual(a);
    expect(monteCarloPoints(tol, nom, 500, 43)).not.toEqual(a);
    expect(a.every((p) => Math.abs(p.x! / 100 - 1) <= 0.2 && Math.abs(p.y! / 5 - 1) <= 0.1)).toBe(true);
    // Normal with σ = X/3: about 68 % of draws within ±X/3 (three-sigma rule, any statistics text).
    const inside = a.filter((p) => Math.abs(p.y! / 5 - 1) <= 0.1 / 3).length / a.length;
    expect(inside).toBeGreaterThan(0.6);
    expect(inside).toBeLessThan(0.76);
  });

  it('seededRandom(seed) is uniform on [0, 1): mean 1/2 and variance 1/12 within sampling error', () => {
    const r = seededRandom(7);
    const xs = Array.from({ length: 20000 }, r);
    const mean = xs.reduce((s, x) => s + x, 0) / xs.length;
    const variance = xs.reduce((s, x) => s + (x - mean) ** 2, 0) / xs.length;
    expect(Math.abs(mean - 0.5)).toBeLessThan(0.01);
    expect(Math.abs(variance - 1 / 12)).toBeLessThan(0.003);
    expect(xs.every((x) => x >= 0 && x < 1)).toBe(true);
  });

  it('percentile(values, p) uses the nearest rank', () => {
    const v = [5, 1, 4, 2, 3];
    expect([percentile(v, 0), percentile(v, 50), percentile(v, 95), percentile(v, 100)]).toEqual([1, 3, 5, 5]);
  });
});

describe('parseVary(spec, nominal) guards against a forgotten %', () => {
  it('refuses an end a thousand times the nominal value, pointing at the %', () => {
    expect(() => parseVary('transformer.leakageInductance=-20%..+20', nominal)).toThrow(/TO within a factor of 1000 of the nominal .*a percentage needs its %/);
  });
});
