// The scenario file's JSON Schema, generated from the zod schema (the input side: what a file may
// hold, numbers or SI strings), so an editor completes field names and flags unknown ones.
// `npm run schema` writes it to scenarios/scenario.schema.json; a test keeps that file in step.

import * as z from 'zod';
import { scenarioFileSchema } from './scenario-schema.js';
import { SCENARIO_FIELDS, type FieldMetadata } from './field-metadata.js';

/** Where the bundled scenarios find it: `"$schema": "./scenario.schema.json"`. */
export const SCENARIO_SCHEMA_FILE_NAME = 'scenario.schema.json';

export function scenarioJsonSchema(): Record<string, unknown> {
  const schema = z.toJSONSchema(scenarioFileSchema, { io: 'input', target: 'draft-2020-12', unrepresentable: 'any' });
  for (const field of SCENARIO_FIELDS) {
    const property = propertyAt(schema, field.path);
    if (!property) throw new Error(`the JSON Schema has no property for ${field.path}`);
    const fileDefault = defaultInFile(field);
    if (fileDefault !== undefined) property.default = fileDefault;
  }
  return {
    ...schema,
    title: 'flyclamp scenario',
    description: 'A flyback switching node with its clamp and damper, as flyclamp reads it. Numbers are plain SI numbers or strings with an SI prefix and optionally the unit ("2.2u", "2.2uH"). Generated from src/contract/scenario-schema.ts by npm run schema; do not edit.',
  };
}

/** The file's text: two-space indentation and a final newline, as the bundled scenarios are written. */
export function scenarioJsonSchemaText(): string {
  return `${JSON.stringify(scenarioJsonSchema(), null, 2)}\n`;
}

type JsonObject = Record<string, unknown>;
const isJsonObject = (value: unknown): value is JsonObject => typeof value === 'object' && value !== null && !Array.isArray(value);

/** The JSON Schema of a dotted field path, through the blocks' `properties`. */
export function propertyAt(schema: unknown, path: string): JsonObject | undefined {
  let at: unknown = schema;
  for (const key of path.split('.')) {
    const properties: unknown = isJsonObject(at) ? at.properties : undefined;
    at = isJsonObject(properties) ? properties[key] : undefined;
  }
  return isJsonObject(at) ? at : undefined;
}

/** A defaulted field's default as a file would write it (a share as its text, "3%"). */
function defaultInFile(field: FieldMetadata): number | string | undefined {
  if (field.presence !== 'defaulted') return undefined;
  if (field.kind === 'number') return field.defaultValue;
  return field.defaultText;
}
