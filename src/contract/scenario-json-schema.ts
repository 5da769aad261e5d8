// The scenario file's JSON Schema, generated from the zod schema (the input side: what a file may
// hold, numbers or SI strings), so an editor completes field names and flags unknown ones.
// `npm run schema` writes it to scenarios/scenario.schema.json; a test keeps that file in step.

import * as z from 'zod';
import { scenarioFileSchema } from './scenario-schema.js';
import { SCENARIO_FIELDS, type FieldMetadata, type SiUnit } from './field-metadata.js';
import { MAX_NUMBER_TEXT_LENGTH } from '../circuit/si-number.js';

/**
 * What src/circuit/si-number.ts accepts, as a JSON Schema pattern, so an editor marks "60uF" on an
 * inductance as the loader would. Held to the parser by a test (test/contract/json-schema.test.ts).
 */
const UNIT_TEXT: Readonly<Record<SiUnit, string>> = {
  '': '', V: 'V', A: 'A', H: 'H', F: 'F', Hz: 'Hz', s: 's', W: 'W', 'A/s': 'A/s', 'Ω': '(?:Ω|ohm|Ohm|R)',
};
const MANTISSA = '[+-]?(?:\\d+(?:\\.\\d*)?|\\.\\d+)(?:[eE][+-]?\\d+)?';
const PREFIX = '[fpnuµμmkMG]';

/** The pattern of a number text in `unit`: the mantissa, then an SI prefix and the unit, each optional. */
export function siTextPattern(unit: SiUnit): string {
  const suffix = unit === '' ? `${PREFIX}?` : `${PREFIX}?(?:${UNIT_TEXT[unit]})?`;
  return `^\\s*${MANTISSA}\\s*${suffix}\\s*$`;
}
/** A share also takes a percentage ("3%"). */
const PERCENT_PATTERN = '^\\s*\\d{1,3}(?:\\.\\d{1,6})?\\s*%\\s*$';

/** Where the bundled scenarios find it: `"$schema": "./scenario.schema.json"`. */
export const SCENARIO_SCHEMA_FILE_NAME = 'scenario.schema.json';

export function scenarioJsonSchema(): Record<string, unknown> {
  const schema = z.toJSONSchema(scenarioFileSchema, { io: 'input', target: 'draft-2020-12', unrepresentable: 'any' });
  for (const field of SCENARIO_FIELDS) {
    const property = propertyAt(schema, field.path);
    if (!property) throw new Error(`the JSON Schema has no property for ${field.path}`);
    const fileDefault = defaultInFile(field);
    if (fileDefault !== undefined) property.default = fileDefault;
    addTextPattern(property, field);
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

/** The pattern and length of a numeric field's text form, on its string branch. */
function addTextPattern(property: JsonObject, field: FieldMetadata): void {
  if (field.kind === 'string' || field.kind === 'enum') return;
  const pattern = field.kind === 'share' ? `${siTextPattern(field.unit)}|${PERCENT_PATTERN}` : siTextPattern(field.unit);
  const text = { pattern, maxLength: MAX_NUMBER_TEXT_LENGTH };
  const branches: unknown = property.anyOf;
  if (Array.isArray(branches)) {
    const stringBranch: unknown = branches.find((branch) => isJsonObject(branch) && branch.type === 'string');
    if (isJsonObject(stringBranch)) Object.assign(stringBranch, text);
  } else Object.assign(property, text);
}
