// The scenario object and the form: filling the form from a file's JSON, reading it back for the
// server (values as typed) or for a saved file (plain numbers as numbers), and reading numbers.

import { ALL_FIELDS, GROUPS, formField, isField, type ControlKind } from './fields.js';
import { blockBox, blockOn, clearFieldErrors, controlKind, curveEditor, inputFor, setChoice, syncBlocks, syncControl } from './form.js';
import { fmtNumber, fmtSi, readSi, SI_UNITS } from './format.js';
import type { RawScenario } from './api.js';
import { state } from './state.js';

/**
 * Every path the form carries, and the file's `$schema` (for editors; flyclamp ignores it, the saved
 * file keeps it); anything else in a loaded file is reported on load.
 */
const KNOWN_PATHS = new Set(['$schema', ...ALL_FIELDS.map((f) => f.path)]);

export function getPath(obj: unknown, path: string): unknown {
  return path.split('.').reduce<unknown>((o, k) => (o !== null && typeof o === 'object' ? (o as Record<string, unknown>)[k] : undefined), obj);
}

function asText(value: unknown): string {
  if (value === undefined || value === null) return '';
  if (typeof value === 'string') return value;
  if (typeof value === 'number') return String(value);
  return JSON.stringify(value);
}

export const isScenarioObject = (raw: unknown): raw is RawScenario => raw !== null && typeof raw === 'object' && !Array.isArray(raw);

/** The paths of `raw` that the scenario format does not have ("transformer.leakageInductanse"). */
export function unknownPaths(raw: RawScenario): string[] {
  const unknown: string[] = [];
  const walk = (obj: RawScenario, prefix: string): void => {
    for (const [key, value] of Object.entries(obj)) {
      const path = prefix ? `${prefix}.${key}` : key;
      if (KNOWN_PATHS.has(path)) continue;
      const isBlock = [...KNOWN_PATHS].some((known) => known.startsWith(`${path}.`));
      if (isBlock && isScenarioObject(value)) walk(value, path);
      else unknown.push(path);
    }
  };
  walk(raw, '');
  return unknown;
}

/** Puts a raw scenario (as in the file) into the form; returns what the form could not carry. */
export function fillForm(raw: unknown): string[] {
  if (!isScenarioObject(raw)) return ['the file does not hold a scenario object'];
  const notes: string[] = [];
  inputFor('name')!.value = asText(raw.name);
  for (const group of GROUPS) {
    for (const field of group.fields.filter(isField)) {
      if (field.curve) { curveEditor().fill(getPath(raw, field.path)); continue; }
      const input = inputFor(field.path)!;
      const text = asText(getPath(raw, field.path));
      if (input instanceof HTMLSelectElement) setChoice(input, text);
      else input.value = text;
    }
    if (group.optionalBlock) blockBox(group.key).checked = raw[group.key] !== undefined;
  }
  const sw = isScenarioObject(raw.switch) ? raw.switch : {};
  const hasDuty = sw.dutyCycle !== undefined, hasPeak = sw.peakCurrent !== undefined;
  document.querySelector<HTMLInputElement>(hasDuty && !hasPeak ? '#control-duty' : '#control-peak')!.checked = true;
  if (hasDuty && hasPeak) notes.push('the file gives both switch.peakCurrent and switch.dutyCycle; the form uses peak-current control, switch to fixed duty if that was meant');
  syncBlocks();
  syncControl();
  clearFieldErrors();
  return notes;
}

/** A plain decimal number, written to a saved file as a JSON number like the bundled files. */
const PLAIN_NUMBER = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;

/**
 * The scenario as the form holds it. For the server the text goes as typed (it parses SI prefixes
 * and names the field when it cannot); empty fields are left out so that the server applies its
 * default or says the field is required. For a file, plain numbers become numbers.
 */
export function readForm(forFile = false, everything = false): RawScenario {
  const value = (text: string): string | number => (forFile ? (PLAIN_NUMBER.test(text.trim()) ? Number(text.trim()) : text.trim()) : text);
  const name = inputFor('name')!.value;
  const schema = state.loaded.raw.$schema;
  const scenario: RawScenario = { ...(forFile && typeof schema === 'string' ? { $schema: schema } : {}), name: forFile ? name.trim() : name };
  const kind = controlKind();
  for (const group of GROUPS) {
    if (group.optionalBlock && !blockOn(group.key) && !everything) continue;
    const block: RawScenario = {};
    for (const field of group.fields.filter(isField)) {
      if (field.when && field.when !== kind && !everything) continue;
      const key = field.path.split('.').slice(1);
      if (field.curve) {
        const read = curveEditor().read(value);
        if (read !== undefined) block[key[0]!] = read;
        continue;
      }
      const text = inputFor(field.path)!.value;
      if (text.trim() === '') continue;
      // Nested blocks (design.measuredRing) appear only when one of their fields is filled in.
      let target = block;
      for (const k of key.slice(0, -1)) target = (target[k] ??= {}) as RawScenario;
      target[key[key.length - 1]!] = field.choices ? text : value(text);
    }
    if ((group.collapsible || (everything && !blockOn(group.key) && group.optionalBlock)) && Object.keys(block).length === 0) continue;
    scenario[group.key] = block;
  }
  return scenario;
}

/**
 * Everything the form holds, for a link: the fields as a file would have them, also those of a
 * block switched off and of the other switch control (kept in the form, so kept in the link), with
 * which blocks are off and which control is chosen.
 */
export function formSnapshot(): { scenario: RawScenario; off: string[]; control: ControlKind } {
  const off = GROUPS.filter((g) => g.optionalBlock && !blockOn(g.key)).map((g) => g.key);
  return { scenario: readForm(true, true), off, control: controlKind() };
}

/** Switches blocks off and chooses the control as a link says (after fillForm). */
export function applyFormSwitches(off: readonly string[], control: ControlKind | undefined): void {
  for (const key of off) if (GROUPS.some((g) => g.key === key && g.optionalBlock)) blockBox(key).checked = false;
  if (control) document.querySelector<HTMLInputElement>(control === 'fixed-duty' ? '#control-duty' : '#control-peak')!.checked = true;
  syncBlocks();
  syncControl();
}

/** The SI unit the reader takes for a field ('' for ratios, counts and °C). */
export function unitOf(path: string): string {
  const u = formField(path)?.unit ?? '';
  return SI_UNITS.includes(u) ? u : '';
}

/** The form's current value of a numeric field (its default when empty), or undefined. */
export function formNumber(path: string): number | undefined {
  const field = formField(path);
  if (field?.curve) return curveEditor().nominal();
  const input = inputFor(path);
  if (!field || !input) return undefined;
  const text = input.value.trim();
  if (text === '') return field.fallback !== undefined ? readSi(field.fallback, '') : undefined;
  return readSi(text, unitOf(path));
}

/**
 * The first shown field whose text does not read as a number in its unit, or undefined when every
 * one does: only then does an edit re-simulate by itself (the server judges the rest).
 */
export function unreadableField(): string | undefined {
  const kind = controlKind();
  for (const group of GROUPS) {
    if (group.optionalBlock && !blockOn(group.key)) continue;
    for (const field of group.fields.filter(isField)) {
      if (field.when && field.when !== kind) continue;
      if (field.curve) { if (!curveEditor().readable()) return field.label; continue; }
      if (field.choices || field.text) continue;
      const text = inputFor(field.path)!.value.trim();
      // Shares take a percentage ("3%"), which the server reads against its reference.
      if (text === '' || /^\d+(?:\.\d+)?\s*%$/.test(text)) continue;
      if (readSi(text, unitOf(field.path)) === undefined) return field.label;
    }
  }
  return undefined;
}

/** A field's value with its unit for people (plain numbers for ratios). */
export function fmtField(path: string, value: number): string {
  const unit = unitOf(path);
  return unit ? fmtSi(value, unit, 4) : fmtNumber(value, 4);
}
