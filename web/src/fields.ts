// The scenario file's fields as the form shows them, in the file's grouping, from the contract's
// field table (src/contract/field-metadata.ts): the validator, the flags and the page read the same
// labels, units and defaults. `path` is the scenario path the server names in its issues, so one
// list drives the inputs, the saved file and where an error is shown.

import { SCENARIO_BLOCKS, SCENARIO_FIELDS, type ControlKindName, type FieldMetadata } from '../../src/contract/field-metadata.js';

export type ControlKind = ControlKindName;

export interface FormField {
  path: string;
  label: string;
  /** The unit shown beside the input: an SI symbol, or '0–1', '×', '°C', '' for a plain number. */
  unit: string;
  fallback?: string;
  /** What leaving an optional field out means, shown as its placeholder. */
  absent?: string;
  when?: ControlKind;
  curve?: boolean;
  choices?: readonly string[];
  text?: boolean;
  /** One line on what the value means, as a tooltip. */
  help?: string;
}
export type FormItem = FormField | { heading: string } | { control: true };

export interface FormGroup {
  key: string;
  title: string;
  optionalBlock?: boolean;
  collapsible?: boolean;
  note?: string;
  fields: FormItem[];
}

export const isField = (item: FormItem): item is FormField => 'path' in item;

/** A field of the contract's table as the form shows it. */
function formFieldOf(field: FieldMetadata): FormField {
  const out: FormField = { path: field.path, label: field.label, unit: field.displayUnit, help: field.help };
  if (field.kind === 'curve') out.curve = true;
  if (field.kind === 'string') out.text = true;
  if (field.kind === 'enum') out.choices = field.options;
  if (field.when) out.when = field.when;
  // "Defaults to supply.voltage": the placeholder says "default: supply".
  const fromSupply = field.defaultText === 'supply.voltage';
  if (field.presence === 'defaulted' && field.defaultText !== undefined) out.fallback = field.defaultText;
  else if (fromSupply) out.fallback = 'supply';
  else if (field.presence === 'optional' && field.absentMeaning !== undefined) out.absent = field.absentMeaning;
  return out;
}

/**
 * The form's groups: the contract's blocks in the file's order (the nested measured-ring block
 * inside its parent), the switch control's choice before the first field that depends on it, and
 * each field's sub-heading.
 */
export const GROUPS: readonly FormGroup[] = SCENARIO_BLOCKS.filter((block) => block.path !== '' && !block.path.includes('.')).map((block) => {
  const items: FormItem[] = [];
  let controlPlaced = false;
  for (const field of SCENARIO_FIELDS.filter((f) => f.path.startsWith(`${block.path}.`))) {
    if (field.when && !controlPlaced) { items.push({ control: true }); controlPlaced = true; }
    if (field.heading) items.push({ heading: field.heading });
    items.push(formFieldOf(field));
  }
  return {
    key: block.path, title: block.title, fields: items,
    ...(block.optional && !block.collapsible ? { optionalBlock: true } : {}),
    ...(block.collapsible ? { collapsible: true } : {}),
    ...(block.note ? { note: block.note } : {}),
  };
});

export const NAME_FIELD: FormField = formFieldOf(SCENARIO_FIELDS.find((f) => f.path === 'name')!);

/** Every field of the form, the name first. */
export const ALL_FIELDS: readonly FormField[] = [NAME_FIELD, ...GROUPS.flatMap((g) => g.fields.filter(isField))];

export function formField(path: string): FormField | undefined { return ALL_FIELDS.find((f) => f.path === path); }

/** Units in words, so a screen reader announces "in farads" rather than a bare letter. */
export const UNIT_WORDS: Readonly<Record<string, string>> = {
  V: 'volts', A: 'amperes', H: 'henries', F: 'farads', Hz: 'hertz', s: 'seconds', W: 'watts', 'Ω': 'ohms',
  'A/s': 'amperes per second', '°C': 'degrees Celsius',
};
export const RATIO_WORDS: Readonly<Record<string, string>> = { '': 'a plain number', '0–1': 'a fraction from 0 to 1', '×': 'a multiple' };
