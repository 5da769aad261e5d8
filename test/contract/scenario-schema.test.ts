// The zod scenario schema: its output type is the program's Scenario, its issues carry path arrays,
// and the validator keeps the messages the rest of the tests expect (test/circuit/).

import { readFileSync } from 'node:fs';
import { describe, expect, expectTypeOf, it } from 'vitest';
import type * as z from 'zod';
import { scenarioSchema, scenarioFileSchema } from '../../src/contract/scenario-schema.js';
import { SCENARIO_BLOCKS, SCENARIO_FIELDS, fieldsOfBlock, blocksOfBlock } from '../../src/contract/field-metadata.js';
import { validateScenario } from '../../src/circuit/validate-scenario.js';
import type { Scenario } from '../../src/circuit/scenario.js';

const demo = (name: string): Record<string, unknown> => JSON.parse(readFileSync(new URL(`../../scenarios/${name}.json`, import.meta.url), 'utf8')) as Record<string, unknown>;

describe('scenario schema', () => {
  it('has Scenario as its output type', () => {
    expectTypeOf<z.output<typeof scenarioSchema>>().toEqualTypeOf<Scenario>();
    const parsed = scenarioSchema.parse(demo('bias-48v'));
    expect(parsed.switch.control.kind).toBe('peak-current');
  });

  it('has exactly the blocks and fields of the field table', () => {
    // Walks the zod object shapes: every key is a table field or block, and every table entry is a key.
    const shapeKeys = (schema: z.ZodType, prefix: string, out: string[]): void => {
      let inner: unknown = schema;
      while (typeof inner === 'object' && inner !== null && 'unwrap' in inner && typeof inner.unwrap === 'function' && !('shape' in inner)) inner = (inner.unwrap as () => unknown).call(inner);
      if (typeof inner !== 'object' || inner === null || !('shape' in inner)) return;
      for (const [key, value] of Object.entries(inner.shape as Record<string, z.ZodType>)) {
        if (prefix === '' && key === '$schema') continue;
        const path = prefix ? `${prefix}.${key}` : key;
        out.push(path);
        shapeKeys(value, path, out);
      }
    };
    const keys: string[] = [];
    shapeKeys(scenarioFileSchema, '', keys);
    const expected = [...SCENARIO_FIELDS.map((f) => f.path), ...SCENARIO_BLOCKS.filter((b) => b.path !== '').map((b) => b.path)];
    expect(keys.sort()).toEqual(expected.sort());
    expect(fieldsOfBlock('design.measuredRing')).toHaveLength(3);
    expect(blocksOfBlock('design').map((b) => b.path)).toEqual(['design.measuredRing']);
  });

  it('accepts the "$schema" key an editor uses, and nothing else unknown', () => {
    expect(validateScenario({ $schema: './scenario.schema.json', ...demo('bias-48v') }).ok).toBe(true);
    const result = validateScenario({ $schemas: './scenario.schema.json', ...demo('bias-48v') });
    expect(result.ok).toBe(false);
    if (!result.ok) expect(result.issues[0]).toMatchObject({ path: '$schemas', pathKeys: ['$schemas'] });
  });

  it('names a curve point by keys and indices', () => {
    const doc = demo('bias-48v');
    (doc.switch as Record<string, unknown>).drainCapacitance = [[0, '1n'], [10, 'lots']];
    const result = validateScenario(doc);
    expect(result.ok).toBe(false);
    if (!result.ok) {
      expect(result.issues).toEqual([{ path: 'switch.drainCapacitance[1][1]', pathKeys: ['switch', 'drainCapacitance', 1, 1], message: expect.stringContaining('expected a capacitance: a number in F') }]);
    }
  });

  it('reports the control choice with a missing field, each at its own path', () => {
    const doc = demo('bias-48v');
    const sw = doc.switch as Record<string, unknown>;
    sw.dutyCycle = 0.2;
    delete (doc.transformer as Record<string, unknown>).turnsRatio;
    const result = validateScenario(doc);
    expect(result.ok).toBe(false);
    if (!result.ok) {
      expect(result.issues.map((i) => i.pathKeys)).toEqual([['transformer', 'turnsRatio'], ['switch', 'dutyCycle']]);
    }
  });
});
