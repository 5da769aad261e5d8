// The parameter form, built from the field list: one input per scenario field with its label, its
// unit in words for a screen reader, its default as the placeholder and an error box beside it.

import { $, $all, el } from './dom.js';
import { GROUPS, NAME_FIELD, RATIO_WORDS, UNIT_WORDS, type ControlKind, type FormField, type FormGroup, type FormItem } from './fields.js';
import { createCurveEditor, type CurveEditor } from './curve-editor.js';
import { AXIS, BASE_LAYOUT } from './plot-style.js';
import { readSi, siForForm } from './format.js';
import { hooks } from './state.js';

export const form = $<HTMLFormElement>('#params');
let curve: CurveEditor | null = null;

/** The drain-capacitance editor (made with the form). */
export function curveEditor(): CurveEditor {
  if (!curve) throw new Error('the form is not built yet');
  return curve;
}

export function fieldId(path: string): string { return `f-${path.replace(/\./g, '-')}`; }

export function inputFor(path: string): HTMLInputElement | HTMLSelectElement | null {
  return form.querySelector<HTMLInputElement | HTMLSelectElement>(`[data-path="${CSS.escape(path)}"]`);
}

export function controlKind(): ControlKind {
  return form.querySelector<HTMLInputElement>('input[name="control"]:checked')?.value === 'fixed-duty' ? 'fixed-duty' : 'peak-current';
}

export function blockOn(key: string): boolean {
  return document.querySelector<HTMLInputElement>(`#use-${key}`)?.checked ?? false;
}

export function buildForm(): void {
  form.append(makeField(NAME_FIELD));
  for (const group of GROUPS) form.append(makeGroup(group));
  form.addEventListener('input', (event) => {
    const target = event.target as HTMLElement;
    if (target.dataset.path) clearFieldError(target.dataset.path);
    hooks.edited();
    // The C(v) plot marks Vin + VR and reaches the rating; both come from other fields.
    curve?.redraw();
  });
  syncBlocks();
  syncControl();
}

function makeGroup(group: FormGroup): HTMLFieldSetElement {
  const set = el('fieldset', { class: 'group', dataset: { group: group.key } });
  let body: HTMLElement = set;
  const note = group.note ? el('p', { class: 'group-note', text: group.note }) : null;
  if (group.collapsible) {
    // Rarely changed; folded away, they still open when an error names one.
    const details = el('details', { class: 'solver' }, el('summary', { text: `${group.title} (optional)` }), note);
    set.append(details);
    body = details;
  } else {
    const legend = el('legend');
    if (group.optionalBlock) {
      const box = el('input', { type: 'checkbox', id: `use-${group.key}`, dataset: { block: group.key } });
      box.addEventListener('change', () => { syncBlocks(); hooks.edited(); });
      legend.append(el('label', { class: 'toggle' }, box, ` ${group.title}`));
    } else legend.textContent = group.title;
    set.append(legend, note ?? '');
  }
  for (const item of group.fields) body.append(makeItem(item));
  return set;
}

function makeItem(item: FormItem): HTMLElement {
  if ('control' in item) return makeControlChoice();
  if ('heading' in item) return el('p', { class: 'subhead', text: item.heading });
  if (item.curve) return makeCurveField(item);
  return makeField(item);
}

/** The unit as part of the label's accessible name; the visible unit after the input is hidden from it. */
function spokenUnit(unit: string): HTMLElement {
  return el('span', { class: 'sr-only', text: UNIT_WORDS[unit] ? `, in ${UNIT_WORDS[unit]}` : `, ${RATIO_WORDS[unit] ?? unit}` });
}

function makeCurveField(field: FormField): HTMLElement {
  curve = createCurveEditor({
    path: field.path, label: field.label, formatForForm: siForForm, plotLayout: BASE_LAYOUT, axis: AXIS,
    context: curveContext,
    onEdit: () => { clearFieldError(field.path); hooks.edited(); hooks.refreshStudyFields(); },
  });
  return curve.element;
}

/** The form's number at `path` as typed, else `fallback`. */
function typedNumber(path: string, unit: string, fallback?: number): number | undefined {
  const text = inputFor(path)?.value.trim() ?? '';
  return text === '' ? fallback : readSi(text, unit);
}

/** What the C(v) plot marks: Vin + VR and the rating and breakdown voltage, when the form has them. */
function curveContext() {
  const vin = typedNumber('supply.voltage', 'V'), ratio = typedNumber('transformer.turnsRatio', ''), vo = typedNumber('output.voltage', 'V'), vf = typedNumber('output.diodeDrop', 'V', 0);
  const plateau = vin !== undefined && ratio !== undefined && vo !== undefined && vf !== undefined ? vin + ratio * (vo + vf) : undefined;
  return { plateau, rating: typedNumber('switch.voltageRating', 'V'), avalanche: typedNumber('switch.avalancheVoltage', 'V') };
}

function makeField(field: FormField): HTMLElement {
  const wrap = el('div', { class: 'field', dataset: { field: field.path, ...(field.when ? { when: field.when } : {}) } });
  const id = fieldId(field.path);
  const label = el('label', { for: id, text: field.label, title: field.help });
  if (!field.text && !field.choices) label.append(spokenUnit(field.unit));
  if (field.fallback !== undefined || field.absent !== undefined) label.append(' ', el('span', { class: 'optional', text: 'optional' }));
  const entry = el('div', { class: field.text ? 'entry entry-text' : 'entry' });
  const input = field.choices ? makeChoices(field.choices, field.fallback ?? '') : el('input', { type: 'text' });
  input.id = id;
  input.name = field.path;
  input.dataset.path = field.path;
  input.spellcheck = false;
  input.setAttribute('aria-describedby', `${id}-error`);
  if (input instanceof HTMLInputElement) {
    if (field.fallback !== undefined) input.placeholder = field.fallback === 'supply' ? 'default: supply' : `default ${field.fallback}`;
    if (field.absent !== undefined) input.placeholder = field.absent;
  }
  entry.append(input);
  if (!field.text && !field.choices) {
    // The label already says it in words; read once, not twice.
    entry.append(el('span', { class: 'unit', 'aria-hidden': 'true', text: field.unit || '—', title: field.unit ? undefined : 'a plain number, no unit' }));
  }
  const error = el('div', { class: 'field-error', id: `${id}-error`, dataset: { for: field.path } });
  error.hidden = true;
  wrap.append(label, entry, error);
  return wrap;
}

function makeChoices(choices: readonly string[], fallback: string): HTMLSelectElement {
  return el('select', {}, el('option', { value: '', text: `default (${fallback})` }), ...choices.map((c) => el('option', { value: c, text: c })));
}

/** Sets a select to a value from a file; an unknown one is kept as an option so it is not lost. */
export function setChoice(select: HTMLSelectElement, value: string): void {
  select.querySelector('option[data-foreign]')?.remove();
  if (value !== '' && ![...select.options].some((o) => o.value === value)) {
    select.append(el('option', { value, dataset: { foreign: '' }, text: `${value} (from the file)` }));
  }
  select.value = value;
}

function makeControlChoice(): HTMLElement {
  const wrap = el('div', { class: 'choice', role: 'radiogroup', 'aria-label': 'What ends the on-time' }, el('span', { class: 'choice-title', text: 'On-time ends by' }));
  for (const [value, text, id] of [['peak-current', 'peak current', 'control-peak'], ['fixed-duty', 'fixed duty', 'control-duty']] as const) {
    const radio = el('input', { type: 'radio', name: 'control', value, id });
    radio.addEventListener('change', () => { syncControl(); hooks.edited(); });
    wrap.append(el('label', {}, radio, ` ${text}`));
  }
  return wrap;
}

export function syncControl(): void {
  const kind = controlKind();
  for (const field of $all('.field[data-when]', form)) field.hidden = field.dataset.when !== kind;
  hooks.refreshStudyFields();
}

export function syncBlocks(): void {
  for (const box of $all<HTMLInputElement>('input[data-block]', form)) {
    const set = box.closest('fieldset');
    if (!set) continue;
    // A disabled fieldset keeps its first legend (the checkbox) usable and the values kept.
    set.disabled = !box.checked;
    set.classList.toggle('off', set.disabled);
  }
  hooks.refreshStudyFields();
}

export function clearFieldError(path: string): void {
  const box = form.querySelector<HTMLElement>(`.field-error[data-for="${CSS.escape(path)}"]`);
  if (box) { box.replaceChildren(); box.hidden = true; }
  inputFor(path)?.removeAttribute('aria-invalid');
}

export function clearFieldErrors(): void {
  // Only the boxes in use: rewriting every field's box restyled the whole form at each run.
  for (const box of $all('.field-error', form)) if (!box.hidden || box.firstChild) { box.replaceChildren(); box.hidden = true; }
  // Curve points share one box per row, so their inputs are not found by the box's path.
  for (const input of $all('[aria-invalid]', form)) input.removeAttribute('aria-invalid');
}

/** The form is built inside #params; the checkbox of an optional block by its key. */
export function blockBox(key: string): HTMLInputElement { return $<HTMLInputElement>(`#use-${key}`); }
