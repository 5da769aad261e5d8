import { describe, expect, it } from 'vitest';
import { ENERGY_MISMATCH_LIMIT, nonFinitePaths, soundVariants, variantProblem } from '../../src/analysis/result-checks.js';

const balance = (relativeMismatch: number, supply = 1e-6) => ({ supply, relativeMismatch });

describe('nonFinitePaths', () => {
  it('lists NaN, infinities and nulls by path, allowing a null ringFrequency (a ring damped out)', () => {
    const report = { a: 1, b: { c: Number.NaN, d: [0, Number.POSITIVE_INFINITY] }, ringFrequency: null, dutyCycle: null, e: 'text', f: true };
    expect(nonFinitePaths(report)).toEqual(['b.c (NaN)', 'b.d[1] (Infinity)', 'dutyCycle (null)']);
    expect(nonFinitePaths({ x: 1, y: { ringFrequency: null } })).toEqual([]);
  });
});

describe('variantProblem and soundVariants', () => {
  it('a variant with a NaN mismatch and no supply energy is a problem naming both', () => {
    const problem = variantProblem({ energyBalance: balance(Number.NaN, 0) });
    expect(problem).toMatch(/no finite value for energyBalance\.relativeMismatch \(NaN\)/);
    expect(problem).toMatch(/supply delivered no energy/);
  });

  it(`a balance off by more than ${ENERGY_MISMATCH_LIMIT} is a problem; within it is not`, () => {
    expect(variantProblem({ energyBalance: balance(2 * ENERGY_MISMATCH_LIMIT) })).toMatch(/energy balance does not close/);
    expect(variantProblem({ energyBalance: balance(-2 * ENERGY_MISMATCH_LIMIT) })).toMatch(/energy balance does not close/);
    expect(variantProblem({ energyBalance: balance(0.5 * ENERGY_MISMATCH_LIMIT) })).toBeUndefined();
  });

  it("splits a report's variants into the sound ones and the reasons for the others", () => {
    const { sound, problems } = soundVariants({ bare: { energyBalance: balance(1e-8) }, damped: { energyBalance: balance(Number.NaN, 0) } });
    expect(Object.keys(sound)).toEqual(['bare']);
    expect(problems).toHaveLength(1);
    expect(problems[0]).toMatch(/^damped: the result has no finite value/);
  });
});
