import { describe, expect, it } from 'vitest';
import { formatPath } from '../../src/contract/issues.js';

// A path is one word before the message's colon, so that "path: message" lines stay readable and
// parseable whatever keys an input holds.

describe('formatPath(keys)', () => {
  it('joins names with dots and puts indices in brackets', () => {
    expect(formatPath(['switch', 'drainCapacitance', 0, 1])).toBe('switch.drainCapacitance[0][1]');
    expect(formatPath(['$schema'])).toBe('$schema');
    expect(formatPath([])).toBe('(scenario)');
  });

  it('quotes a key that is not a name, its spaces and colons escaped (an unknown key " " was shown as "design.measuredRing. ")', () => {
    expect(formatPath(['design', 'measuredRing', ' '])).toBe('design.measuredRing["\\u0020"]');
    expect(formatPath(['a:b', 'c'])).toBe('["a\\u003ab"].c');
    expect(formatPath(['clamp', ''])).toBe('clamp[""]');
    expect(formatPath(['clamp', 'x.y'])).toBe('clamp["x.y"]');
    for (const key of [' ', 'a b', 'a:b', '\t', '', 'é', '1x']) expect(formatPath(['design', key])).toMatch(/^[^\s:]+$/);
  });
});
