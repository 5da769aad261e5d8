// scenarios/scenario.schema.json is generated from the contract (npm run schema): this keeps the
// file in step, and holds the README's field tables to both the zod schema and the JSON Schema.

import { readFileSync, readdirSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import type * as z from 'zod';
import { propertyAt, scenarioJsonSchemaText, SCENARIO_SCHEMA_FILE_NAME, siTextPattern } from '../../src/contract/scenario-json-schema.js';
import { SI_UNITS } from '../../src/contract/field-metadata.js';
import { parseSiNumber } from '../../src/circuit/si-number.js';
import { scenarioFileSchema } from '../../src/contract/scenario-schema.js';
import { validateScenario } from '../../src/circuit/validate-scenario.js';
import { readmeFieldPaths } from './readme-fields.js';

const scenariosDir = new URL('../../scenarios/', import.meta.url);
const readme = readFileSync(new URL('../../README.md', import.meta.url), 'utf8');
const readmePaths = readmeFieldPaths(readme);

/** The zod schema at a dotted path, through optional and default wrappers and object shapes. */
function zodAt(path: string): z.ZodType | undefined {
  let at: unknown = scenarioFileSchema;
  for (const key of path.split('.')) {
    while (typeof at === 'object' && at !== null && !('shape' in at) && 'unwrap' in at && typeof at.unwrap === 'function') at = (at.unwrap as () => unknown).call(at);
    const shape: unknown = typeof at === 'object' && at !== null && 'shape' in at ? at.shape : undefined;
    at = typeof shape === 'object' && shape !== null ? (shape as Record<string, unknown>)[key] : undefined;
  }
  return at as z.ZodType | undefined;
}

describe('scenario.schema.json', () => {
  it('is what npm run schema writes from the contract today', () => {
    const onDisk = readFileSync(new URL(SCENARIO_SCHEMA_FILE_NAME, scenariosDir), 'utf8');
    expect(onDisk, 'scenarios/scenario.schema.json is out of date: run npm run schema').toBe(scenarioJsonSchemaText());
  });

  it.each(readmePaths)('the README field %s is in the zod schema and in the JSON Schema', (path) => {
    expect(zodAt(path)).toBeDefined();
    const property = propertyAt(JSON.parse(scenarioJsonSchemaText()), path);
    expect(property).toBeDefined();
    expect(typeof property?.description).toBe('string');
  });

  it('refuses unknown fields in every block, as the loader does', () => {
    const schema = JSON.parse(scenarioJsonSchemaText()) as Record<string, unknown>;
    const blocks = ['', 'supply', 'transformer', 'output', 'switch', 'clamp', 'damper', 'design', 'design.measuredRing', 'simulation'];
    for (const block of blocks) {
      const at = block === '' ? schema : propertyAt(schema, block);
      expect(at?.additionalProperties, block || '(scenario)').toBe(false);
    }
  });

  it('is named by every bundled scenario with its "$schema" line, which the loader accepts', () => {
    const files = readdirSync(scenariosDir).filter((f) => f.endsWith('.json') && f !== SCENARIO_SCHEMA_FILE_NAME);
    expect(files.length).toBeGreaterThan(2);
    for (const file of files) {
      const doc = JSON.parse(readFileSync(new URL(file, scenariosDir), 'utf8')) as Record<string, unknown>;
      expect(doc['$schema'], file).toBe(`./${SCENARIO_SCHEMA_FILE_NAME}`);
      expect(validateScenario(doc).ok, file).toBe(true);
    }
  });

  it.each(SI_UNITS.map((unit) => [unit === '' ? '(none)' : unit, unit] as const))('marks a number text in %s as the loader reads it', (_name, unit) => {
    const texts = ['1', '2.2u', `2.2u${unit}`, ` 4.7m${unit} `, `2.2 u${unit}`, '1e-6', '.5k', '5.', '-5', '+5m', `5µ${unit}`, `5μ${unit}`,
      '60uF', '1uV', '2.2u H', 'fast', 'mm', '1mm', 'µ5', '1kohm', '3R', '10 kHz', '100A/s', '1MΩ', '1e3kHz', '', '1 %'];
    const pattern = new RegExp(siTextPattern(unit));
    for (const text of texts) expect(pattern.test(text), `${JSON.stringify(text)} in ${unit || 'no unit'}`).toBe(parseSiNumber(text, unit).ok);
  });

  it('puts the pattern on the string form of numbers, curves and shares', () => {
    const schema = JSON.parse(scenarioJsonSchemaText()) as Record<string, unknown>;
    expect(propertyAt(schema, 'transformer.leakageInductance')?.pattern).toBe(siTextPattern('H'));
    expect(String(propertyAt(schema, 'design.lossBudget')?.pattern)).toContain('%');
    const curve = propertyAt(schema, 'switch.drainCapacitance')?.anyOf as Array<Record<string, unknown>>;
    expect(curve.find((branch) => branch.type === 'string')?.pattern).toBe(siTextPattern('F'));
  });
});
