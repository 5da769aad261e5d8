import { describe, expect, it } from 'vitest';
import { JacobianMemory } from '../../src/server/jacobian-memory.js';

describe('JacobianMemory', () => {
  it('recalls a Jacobian by the exact start state it was remembered with, per variant, after a JSON round trip', () => {
    const memory = new JacobianMemory();
    const state = [0.1 + 0.2, 1 / 3, -2.5e-9, 41.000000000000014];
    memory.remember('clamp', state, [1, 2, 3, 4]);
    expect(memory.recall('clamp', JSON.parse(JSON.stringify(state)) as number[])).toEqual([1, 2, 3, 4]);
    expect(memory.recall('damped', state)).toBeUndefined();
    expect(memory.recall('clamp', state.map((v, i) => (i === 3 ? v * (1 + 1e-15) : v)))).toBeUndefined();
  });

  it('keeps at most its capacity, forgetting the least recently remembered first', () => {
    const memory = new JacobianMemory(3);
    for (let k = 0; k < 5; k++) memory.remember('bare', [k], [k]);
    expect(memory.size).toBe(3);
    expect(memory.recall('bare', [0])).toBeUndefined();
    expect(memory.recall('bare', [1])).toBeUndefined();
    expect(memory.recall('bare', [4])).toEqual([4]);
    // Remembered again, a state becomes the newest.
    memory.remember('bare', [2], [20]);
    memory.remember('bare', [5], [5]);
    expect(memory.recall('bare', [2])).toEqual([20]);
    expect(memory.recall('bare', [3])).toBeUndefined();
  });
});
