import { describe, expect, it } from 'vitest';
import { duplicateKeyIssues } from '../../src/circuit/duplicate-keys.js';

describe('duplicateKeyIssues(text)', () => {
  it('names a repeated key by its path, in nested blocks and lists', () => {
    const text = '{"switch": {"frequency": 1, "peakCurrent": 2, "frequency": 3}, "list": [{"a": 1}, {"b": 1, "b": 2}], "name": "x", "name": "y"}';
    expect(duplicateKeyIssues(text).map((i) => i.path)).toEqual(['switch.frequency', 'list[1].b', 'name']);
    expect(duplicateKeyIssues(text)[0]!.message).toMatch(/^expected each field once/);
  });

  it('does not count equal keys in different blocks, keys spelled with escapes, or keys inside string values', () => {
    const text = '{"a": {"k": 1}, "b": {"k": 1}, "s": "\\"s\\": 1, \\"s\\": 2", "\\u0061x": 1, "ax2": {"": 1}, "q\\\\": [1, {"": 2}]}';
    expect(JSON.parse(text)).toBeTypeOf('object');
    expect(duplicateKeyIssues(text)).toEqual([]);
    expect(duplicateKeyIssues('{"\\u0061": 1, "a": 2}').map((i) => i.path)).toEqual(['a']);
  });

  it('puts rootKeys before the paths (body.… for an HTTP body)', () => {
    expect(duplicateKeyIssues('{"scenario": {"x": 1, "x": 2}}', ['body']).map((i) => i.path)).toEqual(['body.scenario.x']);
  });
});
