// The flyclamp page: a form over the scenario file, a run against /api/simulate, two plots and
// a table; below them a design panel (/api/design) and a study panel (/api/sweep).
// Plain ES module, no build step; Plotly comes from /vendor/plotly.min.js as a global.

import { createCurveEditor } from './curve-editor.js';
import { el } from './dom.js';
import { parseSi, UNIT_SPELLINGS } from './si-parse.js';
import { createCapturePanel } from './capture-panel.js';

const Plotly = /** @type {any} */ (window).Plotly;

/**
 * The scenario file's fields, in the file's grouping. `path` is the scenario path the server names
 * in its issues, so one list drives the inputs, the saved file and where an error is shown.
 * `fallback` is the server's default for an optional field (shown as the placeholder).
 */
const GROUPS = [
  { key: 'supply', title: 'Supply', fields: [
    { path: 'supply.voltage', label: 'Input voltage (top of the range)', unit: 'V' },
  ] },
  { key: 'transformer', title: 'Transformer', fields: [
    { path: 'transformer.magnetizingInductance', label: 'Magnetizing inductance, primary', unit: 'H' },
    { path: 'transformer.leakageInductance', label: 'Leakage inductance, primary side', unit: 'H' },
    { path: 'transformer.turnsRatio', label: 'Turns ratio Np : Ns', unit: '' },
    { path: 'transformer.primaryResistance', label: 'Primary winding resistance', unit: 'Ω', fallback: '0' },
    { path: 'transformer.windingCapacitance', label: 'Winding capacitance across the primary', unit: 'F', fallback: '0' },
  ] },
  { key: 'output', title: 'Output', fields: [
    { path: 'output.voltage', label: 'Regulated output voltage', unit: 'V' },
    { path: 'output.diodeDrop', label: 'Output rectifier forward drop', unit: 'V', fallback: '0' },
    { path: 'output.power', label: 'Load power, instead of a peak current', unit: 'W' },
    { path: 'output.efficiency', label: 'Share of the stored energy reaching the load', unit: '0–1', fallback: '0.85' },
  ] },
  { key: 'switch', title: 'Switch', fields: [
    { path: 'switch.frequency', label: 'Switching frequency', unit: 'Hz' },
    { control: true },
    { path: 'switch.peakCurrent', label: 'Primary current at turn-off', unit: 'A', when: 'peak-current' },
    { path: 'switch.maxDutyCycle', label: 'Maximum duty cycle', unit: '0–1', fallback: '0.9', when: 'peak-current' },
    { path: 'switch.peakCurrentLimit', label: 'Controller current limit (overload corner of a design)', unit: 'A', when: 'peak-current' },
    { path: 'switch.dutyCycle', label: 'Duty cycle', unit: '0–1', when: 'fixed-duty' },
    { path: 'switch.drainCapacitance', label: 'Drain–source capacitance', unit: 'F', curve: true },
    { path: 'switch.onResistance', label: 'On-resistance', unit: 'Ω' },
    { path: 'switch.bodyDiodeDrop', label: 'Body diode forward drop', unit: 'V', fallback: '0.7' },
    { path: 'switch.voltageRating', label: 'Rated drain–source voltage', unit: 'V' },
    { heading: 'Real parts (optional)' },
    { path: 'switch.avalancheVoltage', label: 'Breakdown (avalanche) voltage', unit: 'V', absent: 'none: no avalanche' },
    { path: 'switch.turnOffDelay', label: 'Delay from current limit to switch opening', unit: 's', fallback: '0' },
    { path: 'switch.currentFallTime', label: 'Drain current fall time at turn-off', unit: 's', fallback: '0' },
  ] },
  { key: 'clamp', title: 'Fit an RCD clamp', optionalBlock: true, note: 'diode from the drain into C ∥ R, returned to the input rail', fields: [
    { path: 'clamp.resistance', label: 'Clamp resistor', unit: 'Ω' },
    { path: 'clamp.capacitance', label: 'Clamp capacitor', unit: 'F' },
    { path: 'clamp.diodeDrop', label: 'Clamp diode forward drop', unit: 'V', fallback: '1.0' },
    { heading: 'Real parts (optional)' },
    { path: 'clamp.loopInductance', label: 'Stray inductance of the clamp loop', unit: 'H', fallback: '0' },
    { path: 'clamp.loopResistance', label: 'Clamp loop resistance (ESR, traces)', unit: 'Ω', fallback: '0' },
    { path: 'clamp.diodeCapacitance', label: 'Clamp diode junction capacitance', unit: 'F', fallback: '0' },
    { path: 'clamp.diodeRecoveryTime', label: 'Clamp diode reverse recovery time trr', unit: 's', absent: 'none: ideal diode' },
    { path: 'clamp.diodeTransitTimeRatio', label: 'Recovery model transit-time ratio TM/τ', unit: '', fallback: '0.1' },
    { path: 'clamp.diodeForwardRecoveryVoltage', label: 'Forward recovery peak voltage VFP (with tfr)', unit: 'V', absent: 'none' },
    { path: 'clamp.diodeForwardRecoveryTime', label: 'Forward recovery time tfr (with VFP)', unit: 's', absent: 'none' },
    { path: 'clamp.diodeForwardRecoveryRate', label: 'di/dt of the VFP and tfr test', unit: 'A/s', fallback: '1e8' },
  ] },
  { key: 'damper', title: 'Fit an RC damper', optionalBlock: true, note: 'series R and C from the drain to ground', fields: [
    { path: 'damper.resistance', label: 'Damper resistor', unit: 'Ω' },
    { path: 'damper.capacitance', label: 'Damper capacitor', unit: 'F' },
  ] },
  { key: 'design', title: 'Design targets', collapsible: true,
    note: 'for sizing parts with flyclamp design; this simulation does not use them, the saved file keeps them', fields: [
    { path: 'design.inputVoltageMinimum', label: 'Input range, lowest', unit: 'V', fallback: 'supply' },
    { path: 'design.inputVoltageMaximum', label: 'Input range, highest', unit: 'V', fallback: 'supply' },
    { path: 'design.leakageTolerance', label: 'Leakage inductance spread (0.2 = ±20 %)', unit: '', fallback: '0.2' },
    { path: 'design.drainDerating', label: 'Allowed peak drain, fraction of rating', unit: '0–1', fallback: '0.8' },
    { path: 'design.clampRippleMinimum', label: 'Clamp ripple, lowest (fraction)', unit: '0–1', fallback: '0.05' },
    { path: 'design.clampRippleMaximum', label: 'Clamp ripple, highest (fraction)', unit: '0–1', fallback: '0.1' },
    { path: 'design.resistorSeries', label: 'Resistor values from', choices: ['E12', 'E24', 'E96'], fallback: 'E24' },
    { path: 'design.capacitorSeries', label: 'Capacitor values from', choices: ['E12', 'E24', 'E96'], fallback: 'E12' },
    { path: 'design.ambientTemperature', label: 'Ambient temperature', unit: '°C', fallback: '50' },
    { path: 'design.damperCapacitanceRatio', label: 'Damper capacitor, times drain capacitance', unit: '×', fallback: '4' },
    { path: 'design.voltageAllowance', label: 'Allowance kept below the derated limit, in volts or a percentage of the rating', unit: 'V', fallback: '3%' },
    { path: 'design.lossBudget', label: 'Clamp and damper loss budget, in watts or a percentage of the output', unit: 'W', fallback: '10%' },
    { path: 'design.resistorTolerance', label: 'Clamp resistor tolerance (0.05 = ±5 %)', unit: '', fallback: '0.05' },
    { path: 'design.capacitorTolerance', label: 'Clamp capacitor tolerance (0.1 = ±10 %)', unit: '', fallback: '0.10' },
    { path: 'design.peakCurrentTolerance', label: 'Current-sense threshold tolerance', unit: '', fallback: '0.07' },
    { path: 'design.drainCapacitanceTolerance', label: 'Drain capacitance spread', unit: '', fallback: '0.10' },
    { heading: 'Ring measured on a sample (optional, all three)' },
    { path: 'design.measuredRing.frequency', label: 'Ring frequency as measured', unit: 'Hz' },
    { path: 'design.measuredRing.frequencyWithAddedCapacitor', label: 'Ring with a capacitor added across drain–source', unit: 'Hz' },
    { path: 'design.measuredRing.addedCapacitance', label: 'That added capacitor', unit: 'F' },
  ] },
  { key: 'simulation', title: 'Solver settings', collapsible: true, fields: [
    { path: 'simulation.relativeTolerance', label: 'Relative tolerance', unit: '', fallback: '1e-7' },
    { path: 'simulation.settleTolerance', label: 'Settled when a cycle changes less than', unit: '', fallback: '1e-5' },
    { path: 'simulation.maxCycles', label: 'Cycle limit', unit: '', fallback: '2000' },
    { path: 'simulation.recordedCycles', label: 'Settled cycles recorded', unit: '', fallback: '3' },
    { path: 'simulation.samplesPerCycle', label: 'Waveform samples per cycle', unit: '', fallback: '2000' },
  ] },
];

const VARIANTS = ['bare', 'clamp', 'damped'];
const COLOURS = { bare: '#c4522a', clamp: '#3b4fa8', damped: '#13897a' };
const RATING_COLOUR = '#9b1b30';
const DERATED_COLOUR = '#a87000';
const AVALANCHE_COLOUR = '#4a3b52';
const US = 1e6;

const $ = (sel) => /** @type {HTMLElement} */ (document.querySelector(sel));
const form = /** @type {HTMLFormElement} */ ($('#params'));
const runButton = /** @type {HTMLButtonElement} */ ($('#run'));
const select = /** @type {HTMLSelectElement} */ ($('#scenario-select'));
const fileInput = /** @type {HTMLInputElement} */ ($('#file-input'));
const zoomTurnOff = /** @type {HTMLButtonElement} */ ($('#zoom-turnoff'));
const zoomWhole = /** @type {HTMLButtonElement} */ ($('#zoom-whole'));
const drainPlot = $('#drain-plot');
const clampPlot = $('#clamp-plot');

const SWITCH_FIELDS = GROUPS.find((g) => g.key === 'switch').fields;
/** Every path the form carries; anything else in a loaded file is reported once on load. */
const KNOWN_PATHS = new Set(['name', ...GROUPS.flatMap((g) => g.fields.filter((f) => f.path).map((f) => f.path))]);

const state = {
  /** Increases with every request so that a late answer to an older one is dropped. */
  sequence: 0,
  abort: /** @type {AbortController | null} */ (null),
  runCount: 0,
  /** The last successful whole-cycle run: what the plots, the table and the zoom refer to. */
  last: /** @type {null | { scenario: object, result: any, label: string, avalanche?: number }} */ (null),
  sourceLabel: '',
  editedSinceRun: false,
  /** Whether the shown results are older than the last attempt (which failed). */
  stale: false,
  statusText: '',
  /** Name of the opened file without .json, for the saved copy's name. */
  fileBase: '',
  /** The last successful design: the scenario sent and the answer. */
  design: /** @type {null | { scenario: any, data: any }} */ (null),
  /** The last successful study: the request, the answer and the form's values it referred to. */
  study: /** @type {null | { request: any, data: any, nominals: Record<string, number | undefined>, seconds: string }} */ (null),
};

// ---------- building the form ----------

function fieldId(path) { return `f-${path.replace(/\./g, '-')}`; }

function buildForm() {
  form.append(makeField({ path: 'name', label: 'Design name', unit: '', text: true }));
  for (const group of GROUPS) {
    const set = document.createElement('fieldset');
    set.className = 'group';
    set.dataset.group = group.key;
    let body = set;
    if (group.collapsible) {
      // Solver settings rarely change; folded away, they still open when an error names one.
      const details = document.createElement('details');
      details.className = 'solver';
      const summary = document.createElement('summary');
      summary.textContent = `${group.title} (optional)`;
      details.append(summary);
      if (group.note) {
        const note = document.createElement('p');
        note.className = 'group-note';
        note.textContent = group.note;
        details.append(note);
      }
      set.append(details);
      body = details;
    } else {
      const legend = document.createElement('legend');
      if (group.optionalBlock) {
        const label = document.createElement('label');
        label.className = 'toggle';
        const box = document.createElement('input');
        box.type = 'checkbox';
        box.id = `use-${group.key}`;
        box.dataset.block = group.key;
        box.addEventListener('change', () => { syncBlocks(); markEdited(); });
        label.append(box, ` ${group.title}`);
        legend.append(label);
      } else {
        legend.textContent = group.title;
      }
      set.append(legend);
      if (group.note) {
        const note = document.createElement('p');
        note.className = 'group-note';
        note.textContent = group.note;
        set.append(note);
      }
    }
    for (const field of group.fields) {
      body.append(field.control ? makeControlChoice() : field.heading ? makeHeading(field.heading) : field.curve ? makeCurveField(field) : makeField(field));
    }
    form.append(set);
  }
  form.addEventListener('input', (event) => {
    const target = /** @type {HTMLInputElement} */ (event.target);
    if (target.dataset.path) clearFieldError(target.dataset.path);
    markEdited();
    updateStudyPreview();
    // The C(v) plot marks Vin + VR and reaches the rating; both come from other fields.
    curveEditor?.redraw();
  });
  syncBlocks();
  syncControl();
}

function makeHeading(text) {
  const h = document.createElement('p');
  h.className = 'subhead';
  h.textContent = text;
  return h;
}

/** Units in words, so a screen reader announces "in farads" rather than a bare letter. */
const UNIT_WORDS = {
  V: 'volts', A: 'amperes', H: 'henries', F: 'farads', Hz: 'hertz', s: 'seconds', W: 'watts', 'Ω': 'ohms',
  'A/s': 'amperes per second', '°C': 'degrees Celsius',
};
const RATIO_WORDS = { '': 'a plain number', '0–1': 'a fraction from 0 to 1', '×': 'a multiple' };

/** The unit as part of the label's accessible name; the visible unit after the input is hidden from it. */
function spokenUnit(unit) {
  const span = document.createElement('span');
  span.className = 'sr-only';
  span.textContent = UNIT_WORDS[unit] ? `, in ${UNIT_WORDS[unit]}` : `, ${RATIO_WORDS[unit] ?? unit}`;
  return span;
}

let curveEditor = /** @type {null | ReturnType<typeof createCurveEditor>} */ (null);

function makeCurveField(field) {
  curveEditor = createCurveEditor({
    path: field.path, label: field.label, Plotly, parseSi,
    formatForForm: siForForm, unitWords: UNIT_WORDS,
    plotLayout: BASE_LAYOUT, axis: AXIS,
    context: curveContext,
    onEdit: () => { clearFieldError(field.path); markEdited(); refreshStudyFields(); },
  });
  return curveEditor.element;
}

/** What the C(v) plot marks: Vin + VR and the rating and breakdown voltage, when the form has them. */
function curveContext() {
  const n = (path, fallback) => { const v = formNumber(path); return v === undefined ? fallback : v; };
  const vin = n('supply.voltage'), ratio = n('transformer.turnsRatio'), vo = n('output.voltage'), vf = n('output.diodeDrop', 0);
  const plateau = [vin, ratio, vo, vf].every(Number.isFinite) ? vin + ratio * (vo + vf) : undefined;
  return { plateau, rating: n('switch.voltageRating'), avalanche: n('switch.avalancheVoltage') };
}

function makeField(field) {
  const wrap = document.createElement('div');
  wrap.className = 'field';
  wrap.dataset.field = field.path;
  if (field.when) wrap.dataset.when = field.when;
  const id = fieldId(field.path);
  const label = document.createElement('label');
  label.htmlFor = id;
  label.textContent = field.label;
  if (!field.text && !field.choices) label.append(spokenUnit(field.unit));
  if (field.fallback !== undefined || field.absent !== undefined) {
    const opt = document.createElement('span');
    opt.className = 'optional';
    opt.textContent = 'optional';
    label.append(' ', opt);
  }
  const entry = document.createElement('div');
  entry.className = field.text ? 'entry entry-text' : 'entry';
  const input = field.choices ? makeChoices(field) : document.createElement('input');
  if (!field.choices) input.type = 'text';
  input.id = id;
  input.name = field.path;
  input.dataset.path = field.path;
  input.spellcheck = false;
  input.setAttribute('aria-describedby', `${id}-error`);
  if (field.fallback !== undefined && !field.choices) {
    input.placeholder = field.fallback === 'supply' ? 'default: supply' : `default ${field.fallback}`;
  }
  if (field.absent !== undefined) input.placeholder = field.absent;
  entry.append(input);
  if (!field.text && !field.choices) {
    const unit = document.createElement('span');
    unit.className = 'unit';
    unit.textContent = field.unit || '—';
    // The label already says it in words; read once, not twice.
    unit.setAttribute('aria-hidden', 'true');
    if (!field.unit) unit.title = 'a plain number, no unit';
    entry.append(unit);
  }
  const error = document.createElement('div');
  error.className = 'field-error';
  error.id = `${id}-error`;
  error.dataset.for = field.path;
  error.hidden = true;
  wrap.append(label, entry, error);
  return wrap;
}

function makeChoices(field) {
  const sel = document.createElement('select');
  const none = document.createElement('option');
  none.value = '';
  none.textContent = `default (${field.fallback})`;
  sel.append(none);
  for (const c of field.choices) {
    const option = document.createElement('option');
    option.value = c;
    option.textContent = c;
    sel.append(option);
  }
  return sel;
}

/** Sets a select to a value from a file; an unknown one is kept as an option so it is not lost. */
function setChoice(sel, value) {
  sel.querySelector('option[data-foreign]')?.remove();
  if (value !== '' && ![...sel.options].some((o) => o.value === value)) {
    const option = document.createElement('option');
    option.value = value;
    option.dataset.foreign = '';
    option.textContent = `${value} (from the file)`;
    sel.append(option);
  }
  sel.value = value;
}

function makeControlChoice() {
  const wrap = document.createElement('div');
  wrap.className = 'choice';
  wrap.setAttribute('role', 'radiogroup');
  wrap.setAttribute('aria-label', 'What ends the on-time');
  const title = document.createElement('span');
  title.className = 'choice-title';
  title.textContent = 'On-time ends by';
  wrap.append(title);
  for (const [value, text] of [['peak-current', 'peak current'], ['fixed-duty', 'fixed duty']]) {
    const label = document.createElement('label');
    const radio = document.createElement('input');
    radio.type = 'radio';
    radio.name = 'control';
    radio.value = value;
    radio.id = value === 'peak-current' ? 'control-peak' : 'control-duty';
    radio.addEventListener('change', () => { syncControl(); markEdited(); });
    label.append(radio, ` ${text}`);
    wrap.append(label);
  }
  return wrap;
}

function controlKind() {
  const chosen = /** @type {HTMLInputElement | null} */ (form.querySelector('input[name="control"]:checked'));
  return chosen ? chosen.value : 'peak-current';
}

function syncControl() {
  const kind = controlKind();
  for (const el of form.querySelectorAll('.field[data-when]')) {
    /** @type {HTMLElement} */ (el).hidden = /** @type {HTMLElement} */ (el).dataset.when !== kind;
  }
  refreshStudyFields();
}

function syncBlocks() {
  for (const box of form.querySelectorAll('input[data-block]')) {
    const set = /** @type {HTMLFieldSetElement} */ (box.closest('fieldset'));
    // A disabled fieldset keeps its first legend (the checkbox) usable and the values kept.
    set.disabled = !(/** @type {HTMLInputElement} */ (box).checked);
    set.classList.toggle('off', set.disabled);
  }
  refreshStudyFields();
}

function inputFor(path) { return /** @type {HTMLInputElement | null} */ (form.querySelector(`[data-path="${path}"]`)); }

// ---------- scenario object <-> form ----------

function getPath(obj, path) {
  return path.split('.').reduce((o, k) => (o !== null && typeof o === 'object' ? o[k] : undefined), obj);
}

function asText(value) {
  if (value === undefined || value === null) return '';
  if (typeof value === 'string') return value;
  if (typeof value === 'number') return String(value);
  return JSON.stringify(value);
}

/** Puts a raw scenario (as in the file) into the form; returns what the form could not carry. */
function fillForm(raw) {
  const notes = [];
  if (raw === null || typeof raw !== 'object' || Array.isArray(raw)) {
    return ['the file does not hold a scenario object'];
  }
  inputFor('name').value = asText(raw.name);
  for (const group of GROUPS) {
    for (const field of group.fields) {
      if (!field.path) continue;
      if (field.curve) { curveEditor.fill(getPath(raw, field.path)); continue; }
      const text = asText(getPath(raw, field.path));
      if (field.choices) setChoice(inputFor(field.path), text);
      else inputFor(field.path).value = text;
    }
    if (group.optionalBlock) {
      /** @type {HTMLInputElement} */ ($(`#use-${group.key}`)).checked = raw[group.key] !== undefined;
    }
  }
  const sw = raw.switch ?? {};
  const hasDuty = sw.dutyCycle !== undefined;
  const hasPeak = sw.peakCurrent !== undefined;
  /** @type {HTMLInputElement} */ ($(hasDuty && !hasPeak ? '#control-duty' : '#control-peak')).checked = true;
  if (hasDuty && hasPeak) notes.push('the file gives both switch.peakCurrent and switch.dutyCycle; the form uses peak-current control, switch to fixed duty if that was meant');
  const unknown = [];
  const walk = (obj, prefix) => {
    for (const [key, value] of Object.entries(obj)) {
      const path = prefix ? `${prefix}.${key}` : key;
      if (KNOWN_PATHS.has(path)) continue;
      const isBlock = [...KNOWN_PATHS].some((known) => known.startsWith(`${path}.`));
      if (isBlock && value !== null && typeof value === 'object' && !Array.isArray(value)) walk(value, path);
      else unknown.push(path);
    }
  };
  walk(raw, '');
  if (unknown.length > 0) notes.push(`fields the scenario format does not have were left out: ${unknown.join(', ')}`);
  syncBlocks();
  syncControl();
  clearErrors();
  return notes;
}

/** A plain decimal number, written to a saved file as a JSON number like the bundled files. */
const PLAIN_NUMBER = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;

/**
 * The scenario as the form holds it. For the server the text goes as typed (it parses SI
 * prefixes and names the field when it cannot); empty fields are left out so that the server
 * applies its default or says the field is required.
 */
function readForm({ forFile = false } = {}) {
  const value = (text) => (forFile && PLAIN_NUMBER.test(text.trim()) ? Number(text.trim()) : forFile ? text.trim() : text);
  const scenario = { name: forFile ? inputFor('name').value.trim() : inputFor('name').value };
  const kind = controlKind();
  for (const group of GROUPS) {
    if (group.optionalBlock && !(/** @type {HTMLInputElement} */ ($(`#use-${group.key}`)).checked)) continue;
    const block = {};
    for (const field of group.fields) {
      if (!field.path || (field.when && field.when !== kind)) continue;
      if (field.curve) {
        const curve = curveEditor.read(value);
        if (curve !== undefined) block[field.path.split('.')[1]] = curve;
        continue;
      }
      const text = inputFor(field.path).value;
      if (text.trim() === '') continue;
      // Nested blocks (design.measuredRing) appear only when one of their fields is filled in.
      const keys = field.path.split('.').slice(1);
      let target = block;
      for (const k of keys.slice(0, -1)) target = target[k] ??= {};
      target[keys[keys.length - 1]] = field.choices ? text : value(text);
    }
    if (group.collapsible && Object.keys(block).length === 0) continue;
    scenario[group.key] = block;
  }
  return scenario;
}

// ---------- errors ----------

function clearFieldError(path) {
  const box = form.querySelector(`.field-error[data-for="${path}"]`);
  if (box) { box.textContent = ''; /** @type {HTMLElement} */ (box).hidden = true; }
  inputFor(path)?.removeAttribute('aria-invalid');
}

function clearFieldErrors() {
  for (const box of form.querySelectorAll('.field-error')) clearFieldError(/** @type {HTMLElement} */ (box).dataset.for);
  // Curve points share one box per row, so their inputs are not found by the box's path.
  for (const input of form.querySelectorAll('[aria-invalid]')) input.removeAttribute('aria-invalid');
}

function clearErrors() {
  clearFieldErrors();
  showGeneral([]);
}

/** Shows lines in the general area; `tone` 'note' is for load remarks that are not failures. */
function showGeneral(lines, tone = 'error') { showMessages($('#general-error'), lines, tone); }

/** Lines (texts or {path, message}) in a message area: the general one or a panel's own. */
function showMessages(area, lines, tone = 'error') {
  area.replaceChildren();
  area.hidden = lines.length === 0;
  area.dataset.tone = tone;
  for (const line of lines) {
    const p = document.createElement('p');
    if (typeof line === 'string') p.textContent = line;
    else {
      const code = document.createElement('code');
      code.textContent = line.path;
      p.append(code, ` ${line.message}`);
    }
    area.append(p);
  }
}

/**
 * Puts each issue beside the input its path names; the rest, or a summary line, go to `showRest`
 * (the general area for a simulation, a panel's own area for a design or a study).
 */
function showIssues(issues, showRest = showGeneral) {
  const rest = [];
  const kind = controlKind();
  for (const issue of issues) {
    let path = issue.path;
    // "Exactly one of peak current and duty cycle" is filed under switch.peakCurrent even when
    // fixed duty is chosen and that input is hidden; show it where the engineer is looking.
    const controlField = SWITCH_FIELDS.find((f) => f.path === path && f.when);
    if (controlField && controlField.when !== kind) path = kind === 'fixed-duty' ? 'switch.dutyCycle' : 'switch.peakCurrent';
    const curve = curveEditor?.target(path);
    const box = curve ? curve.box : form.querySelector(`.field-error[data-for="${CSS.escape(path)}"]`);
    if (!box) { rest.push(issue); continue; }
    const p = document.createElement('p');
    p.textContent = issue.message;
    box.append(p);
    /** @type {HTMLElement} */ (box).hidden = false;
    (curve ? curve.input : inputFor(path))?.setAttribute('aria-invalid', 'true');
    const details = box.closest('details');
    if (details) details.open = true;
  }
  const first = form.querySelector('input[aria-invalid="true"]');
  if (first) /** @type {HTMLElement} */ (first).scrollIntoView({ block: 'center', behavior: 'smooth' });
  if (rest.length > 0) showRest(rest);
  else {
    const named = [...new Set(issues.map((i) => formField(i.path)?.label ?? curvePointLabel(i.path) ?? i.path))];
    showRest([`The server could not use the design: ${issues.length === 1 ? 'one field needs' : `${issues.length} fields need`} attention (marked in the form: ${named.join('; ')}).`]);
  }
}

/** "Drain–source capacitance, point 3" for an issue path inside the curve. */
function curvePointLabel(path) {
  const m = /^(.*?)\[(\d+)\]/.exec(path);
  const field = m && formField(m[1]);
  return field ? `${field.label}, point ${Number(m[2]) + 1}` : undefined;
}

// ---------- running ----------

function setBusy(on, startedAt) {
  document.body.dataset.state = on ? 'busy' : document.body.dataset.state;
  runButton.disabled = on;
  $('#busy').hidden = !on;
  if (on) {
    zoomTurnOff.disabled = true;
    zoomWhole.disabled = true;
    const tick = () => { $('#busy-time').textContent = `${((performance.now() - startedAt) / 1000).toFixed(1)} s`; };
    tick();
    // A request replaced mid-flight never reaches its own "off", so its timer is stopped here.
    window.clearInterval(setBusy.timer);
    // 50 ms keeps the counter visibly alive; the brief asks for at least every 100 ms.
    setBusy.timer = window.setInterval(tick, 50);
  } else {
    window.clearInterval(setBusy.timer);
    syncViewButtons();
  }
}
setBusy.timer = 0;

/** Plot columns from the plot's width: about two per pixel keeps every crest without bloating. */
function columnsForPlot() {
  const width = drainPlot.clientWidth || 900;
  return Math.max(200, Math.min(4000, Math.round(width * 2)));
}

/**
 * One request. Without `window` it is a whole-cycle run of the form; with it, a re-run of the last
 * successful scenario at full resolution inside the window (the server re-simulates; the metrics
 * come back the same).
 */
async function simulate(window_) {
  const scenario = window_ ? state.last.scenario : readForm();
  const body = { scenario, columns: columnsForPlot() };
  if (window_) body.window = window_;
  state.abort?.abort();
  const abort = new AbortController();
  state.abort = abort;
  const mine = ++state.sequence;
  const startedAt = performance.now();
  setBusy(true, startedAt);
  if (!window_) clearErrors();
  let outcome = 'failed';
  try {
    let response;
    try {
      response = await fetch('/api/simulate', {
        method: 'POST', headers: { 'content-type': 'application/json' },
        body: JSON.stringify(body), signal: abort.signal,
      });
    } catch (error) {
      if (abort.signal.aborted) return;
      throw new Error('could not reach the flyclamp server; is it still running?');
    }
    const text = await response.text();
    if (mine !== state.sequence) return;
    let data;
    try { data = JSON.parse(text); } catch { data = null; }
    const seconds = ((performance.now() - startedAt) / 1000).toFixed(2);
    if (response.ok && data && data.ok) {
      outcome = 'ok';
      if (window_) {
        drawDrain(data, window_);
      } else {
        const avalanche = parseSi(String(scenario.switch?.avalancheVoltage ?? ''), ['V']);
        state.last = { scenario, result: data, label: state.sourceLabel, avalanche };
        state.editedSinceRun = false;
        drawAll(data);
      }
      state.stale = false;
      $('.results').classList.remove('stale');
      setStatus(`${window_ ? 'Turn-off detail' : 'Simulated'} in ${seconds} s: ${data.report.scenario}`);
    } else if (response.status === 400 && data && Array.isArray(data.issues)) {
      outcome = 'invalid';
      showIssues(data.issues);
      setStatus(`Not simulated: the design has ${data.issues.length === 1 ? 'a problem' : `${data.issues.length} problems`}.`);
    } else {
      const reason = (data && typeof data.error === 'string' ? data.error : `the server answered ${response.status} ${response.statusText}`).replace(/\.$/, '');
      const hint = response.status === 413 ? ' A scenario is normally a few kilobytes; check what was loaded.'
        : response.status === 504 ? ' Fewer cycles (solver settings) or a looser tolerance may help.' : '';
      showGeneral([`${reason.charAt(0).toUpperCase()}${reason.slice(1)}.${hint}`]);
      setStatus(`Failed after ${seconds} s.`);
    }
    if (outcome !== 'ok' && state.last) setResultsStale(true);
  } catch (error) {
    showGeneral([/** @type {Error} */ (error).message]);
    setStatus('Failed.');
    if (state.last) setResultsStale(true);
  } finally {
    if (mine === state.sequence) {
      state.abort = null;
      setBusy(false, 0);
      document.body.dataset.state = outcome === 'ok' ? 'done' : 'error';
      document.body.dataset.lastOutcome = outcome;
      state.runCount += 1;
      document.body.dataset.runCount = String(state.runCount);
    }
  }
}

function setStatus(text) {
  state.statusText = text;
  renderStatus();
}

function renderStatus() {
  let text = state.statusText;
  if (state.stale) text += ' The plots and the table still show the last successful run.';
  else if (state.editedSinceRun && state.last) text += ' · The form has changed since: Simulate (or Enter) to update.';
  $('#status').textContent = text;
}

function markEdited() {
  if (!state.last || state.editedSinceRun) return;
  state.editedSinceRun = true;
  renderStatus();
}

function setResultsStale(stale) {
  state.stale = stale;
  $('.results').classList.toggle('stale', stale);
  renderStatus();
}

// ---------- plots ----------

const AXIS = { gridcolor: '#e8e1d2', zerolinecolor: '#cfc6b3', linecolor: '#b9ae98', tickcolor: '#b9ae98', ticks: 'outside', mirror: false };
const BASE_LAYOUT = {
  paper_bgcolor: '#fffdf8', plot_bgcolor: '#fffdf8',
  font: { family: '"Segoe UI", "Noto Sans", "DejaVu Sans", sans-serif', size: 12, color: '#2a2f33' },
  hovermode: 'closest', hoverlabel: { bgcolor: '#fffdf8', bordercolor: '#b9ae98', font: { color: '#2a2f33' } },
};
/**
 * Nothing of a design may leave the machine: no send-to-cloud, chart-studio or link controls, only
 * the local image export, named after the scenario and the plot (plotConfig).
 */
const PLOT_CONFIG = {
  responsive: true, displaylogo: false, showLink: false, showSendToCloud: false, showEditInChartStudio: false,
  modeBarButtonsToRemove: ['select2d', 'lasso2d', 'autoScale2d', 'sendDataToCloud'],
};
/** The plot's config with its image export named "<scenario> – <what>". */
function plotConfig(what) {
  const name = (inputFor('name')?.value || 'flyclamp').replace(/[\\/:*?"<>|]+/g, ' ').replace(/\s+/g, ' ').trim();
  return { ...PLOT_CONFIG, toImageButtonOptions: { filename: `${name} - ${what}`, format: 'png' } };
}

function variantLabel(v, report) {
  if (v === 'bare') return 'bare · no clamp';
  if (v === 'clamp') return 'clamp · RCD clamp';
  const withClamp = report.variants.damped && report.variants.damped.clampVoltageMean !== undefined;
  return withClamp ? 'damped · clamp + RC damper' : 'damped · RC damper only';
}

function presentVariants(result) { return VARIANTS.filter((v) => result.traces[v] && result.report.variants[v]); }

function drawAll(result) {
  drawDrain(result, null);
  drawClamp(result);
  fillTable(result.report);
}

function fmtNumber(value, digits = 4) { return Number(value.toPrecision(digits)).toString(); }

/** What the drain plot shows, so the capture panel can draw it again with its trace. */
let drawnDrain = /** @type {null | { result: any, window_: any }} */ (null);

function drawDrain(result, window_) {
  const { report } = result;
  const x0 = window_ ? window_.startSeconds * US : 0;
  const x1 = window_ ? window_.endSeconds * US : result.recordedSeconds * US;
  const data = presentVariants(result).map((v) => ({
    type: 'scatter', mode: 'lines', name: variantLabel(v, report), meta: `variant:${v}`,
    x: result.traces[v].drainVoltage.timeSeconds.map((t) => t * US),
    y: result.traces[v].drainVoltage.values,
    line: { color: COLOURS[v], width: v === 'bare' ? 1.3 : 1.7 },
    hovertemplate: `%{y:.1f} V at %{x:.3f} µs<extra>${v}</extra>`,
  }));
  // An opened scope capture follows the variants (capture-panel.js places it at their turn-off).
  data.push(...(capturePanel?.drainTraces(result) ?? []));
  drawnDrain = { result, window_ };
  const level = (y, name, meta, colour, dash, width) => ({
    type: 'scatter', mode: 'lines', name, meta, x: [x0, x1], y: [y, y], showlegend: false, hoverinfo: 'skip',
    line: { color: colour, dash, width },
  });
  const plateau = report.supplyVoltage + report.reflectedVoltage;
  data.push(
    level(report.voltageRating, `rating ${fmtNumber(report.voltageRating)} V`, 'limit:rating', RATING_COLOUR, 'dash', 1.6),
    level(report.deratedLimit, `derated limit ${fmtNumber(report.deratedLimit)} V`, 'limit:derated', DERATED_COLOUR, 'dashdot', 1.4),
    level(plateau, `Vin + VR ${fmtNumber(plateau)} V`, 'ref:plateau', '#8c8372', 'dot', 1),
  );
  // Where the transistor breaks down and holds the drain (README, switch.avalancheVoltage).
  const avalanche = state.last?.avalanche;
  const hasAvalanche = Number.isFinite(avalanche) && avalanche > 0;
  if (hasAvalanche) data.push(level(avalanche, `avalanche ${fmtNumber(avalanche)} V`, 'limit:avalanche', AVALANCHE_COLOUR, 'longdash', 1.4));
  const tag = (y, text, colour, shift) => ({
    x: 1, xref: 'paper', xanchor: 'right', y, yref: 'y', yanchor: shift > 0 ? 'bottom' : 'top', yshift: shift,
    text, showarrow: false, font: { color: colour, size: 12 }, bgcolor: 'rgba(255,253,248,0.85)',
  });
  const layout = {
    ...BASE_LAYOUT,
    margin: { l: 62, r: 14, t: 34, b: 48 },
    legend: { orientation: 'h', x: 0, y: 1.02, yanchor: 'bottom', font: { size: 12.5 } },
    xaxis: { ...AXIS, title: { text: window_ ? 'time from the start of the recorded cycles (µs) — full resolution' : 'time over the recorded settled cycles (µs)' }, range: [x0, x1] },
    yaxis: { ...AXIS, title: { text: 'drain–source voltage (V)' }, rangemode: 'tozero' },
    annotations: [
      tag(report.voltageRating, `rating ${fmtNumber(report.voltageRating)} V`, RATING_COLOUR, 2),
      tag(report.deratedLimit, `derated limit ${fmtNumber(report.deratedLimit)} V (${fmtNumber(100 * report.deratedLimit / report.voltageRating, 3)} %)`, DERATED_COLOUR, 2),
      tag(plateau, `Vin + VR ${fmtNumber(plateau)} V`, '#6f6757', -2),
      ...(hasAvalanche ? [tag(avalanche, `avalanche ${fmtNumber(avalanche)} V: the drain is held here`, AVALANCHE_COLOUR, 2)] : []),
    ],
  };
  Plotly.react(drainPlot, data, layout, plotConfig('drain voltage'));
  drainPlot.dataset.view = window_ ? 'turn-off' : 'whole';
  $('#view-label').textContent = window_
    ? `${fmtNumber(x0, 3)}–${fmtNumber(x1, 3)} µs around the first turn-off`
    : `${result.report.variants.bare ? (result.recordedSeconds / result.periodSeconds).toFixed(0) : ''} settled cycles at ${fmtSi(1 / result.periodSeconds, 'Hz', 3)}`;
  syncViewButtons();
}

function drawClamp(result) {
  const { report } = result;
  const withClamp = VARIANTS.filter((v) => result.traces[v]?.clampVoltage && report.variants[v]?.clampVoltageMean !== undefined);
  $('#clamp-empty').hidden = withClamp.length > 0;
  clampPlot.hidden = withClamp.length === 0;
  if (withClamp.length === 0) { Plotly.purge(clampPlot); return; }
  const x1 = result.recordedSeconds * US;
  const data = withClamp.map((v) => ({
    type: 'scatter', mode: 'lines', name: variantLabel(v, report), meta: `variant:${v}`,
    x: result.traces[v].clampVoltage.timeSeconds.map((t) => t * US),
    y: result.traces[v].clampVoltage.values,
    line: { color: COLOURS[v], width: 1.7 },
    hovertemplate: `%{y:.2f} V at %{x:.3f} µs<extra>${v}</extra>`,
  }));
  const shapes = withClamp.map((v) => ({
    type: 'line', xref: 'x', yref: 'y', x0: 0, x1, y0: report.variants[v].clampVoltageMean, y1: report.variants[v].clampVoltageMean,
    line: { color: COLOURS[v], width: 1, dash: 'dot' },
  }));
  const annotations = withClamp.map((v, i) => {
    const m = report.variants[v];
    return {
      x: 0.005, xref: 'paper', xanchor: 'left', y: 0.98 - i * 0.11, yref: 'paper', yanchor: 'top', showarrow: false,
      align: 'left', bgcolor: 'rgba(255,253,248,0.9)', bordercolor: COLOURS[v], borderwidth: 1, borderpad: 3,
      font: { color: COLOURS[v], size: 12.5 }, meta: `clamp-note:${v}`,
      text: `<b>${v}</b>: mean ${fmtSi(m.clampVoltageMean, 'V', 4)} · ripple ${fmtSi(m.clampVoltageRipple, 'V', 3)} p-p`,
    };
  });
  const layout = {
    ...BASE_LAYOUT,
    margin: { l: 62, r: 14, t: 12, b: 48 },
    showlegend: false, shapes, annotations,
    xaxis: { ...AXIS, title: { text: 'time over the recorded settled cycles (µs)' }, range: [0, x1] },
    // Head-room above the traces keeps the two notes off the waveforms.
    yaxis: { ...AXIS, title: { text: 'clamp capacitor above rail (V)' }, range: clampRange(data, withClamp.length) },
  };
  Plotly.react(clampPlot, data, layout, plotConfig('clamp capacitor voltage'));
}

function clampRange(data, notes) {
  let lo = Infinity, hi = -Infinity;
  for (const d of data) for (const y of d.y) { if (y < lo) lo = y; if (y > hi) hi = y; }
  const span = Math.max(hi - lo, 1e-3 * Math.abs(hi), 1e-6);
  return [lo - 0.08 * span, hi + (0.12 + 0.16 * notes) * span];
}

// ---------- zoom ----------

function syncViewButtons() {
  const busy = runButton.disabled;
  const have = Boolean(state.last) && state.last.result.traces.bare?.turnOffSeconds.length > 0;
  zoomTurnOff.disabled = busy || !have || drainPlot.dataset.view === 'turn-off';
  zoomWhole.disabled = busy || !state.last || drainPlot.dataset.view !== 'turn-off';
}

/**
 * From 0.2 µs before the earliest first turn-off to five periods of the slowest ring after the
 * latest one: the spike, the clamp interval and the ring's decay, at the recorder's resolution.
 */
function turnOffWindow(result) {
  const variants = presentVariants(result);
  const firsts = variants.map((v) => result.traces[v].turnOffSeconds[0]).filter((t) => Number.isFinite(t));
  const rings = variants.map((v) => result.report.variants[v].ringFrequency).filter((f) => typeof f === 'number' && f > 0);
  const period = result.periodSeconds;
  const after = rings.length > 0 ? 5 / Math.min(...rings) : 0.15 * period;
  const first = Math.min(...firsts);
  const start = Math.max(0, first - 0.2e-6);
  const end = Math.min(result.recordedSeconds, Math.max(...firsts) + Math.min(Math.max(after, 0.3e-6), 0.9 * period));
  return { startSeconds: start, endSeconds: end };
}

zoomTurnOff.addEventListener('click', () => {
  if (!state.last) return;
  void simulate(turnOffWindow(state.last.result));
});
zoomWhole.addEventListener('click', () => {
  if (!state.last) return;
  drawDrain(state.last.result, null);
});

// ---------- table ----------

function fmtSi(value, unit, digits = 4) {
  if (!Number.isFinite(value)) return '—';
  if (value === 0) return `0 ${unit}`;
  const prefixes = [[1e9, 'G'], [1e6, 'M'], [1e3, 'k'], [1, ''], [1e-3, 'm'], [1e-6, 'µ'], [1e-9, 'n'], [1e-12, 'p']];
  const magnitude = Math.abs(value);
  const [scale, prefix] = prefixes.find(([s]) => magnitude >= s * 0.9995) ?? [1e-12, 'p'];
  return `${fmtNumber(value / scale, digits)} ${prefix}${unit}`.replace('-', '−');
}

function fmtVolts(value) { return `${fmtNumber(value, 4)} V`.replace('-', '−'); }
function fmtMargin(value) { return `${value >= 0 ? '+' : '−'}${fmtNumber(Math.abs(value), 4)} V`; }

/**
 * Columns for parts the design may not have: shown when some variant reports the metric
 * ("clamp") or a non-zero value of it ("non-zero"), so an ideal design keeps its narrow table.
 */
function syncOptionalColumns(report) {
  const present = Object.values(report.variants).filter(Boolean);
  const shown = new Set();
  for (const th of document.querySelectorAll('#metrics thead th[data-shown]')) {
    const h = /** @type {HTMLElement} */ (th);
    const metric = h.dataset.metric;
    const visible = h.dataset.shown === 'clamp'
      ? present.some((m) => m[metric] !== undefined && m[metric] !== null)
      : present.some((m) => Number.isFinite(m[metric]) && m[metric] !== 0);
    h.hidden = !visible;
    if (visible) shown.add(metric);
  }
  return shown;
}

function fillTable(report) {
  const body = /** @type {HTMLTableSectionElement} */ ($('#metrics tbody'));
  body.replaceChildren();
  const optional = syncOptionalColumns(report);
  const wanted = (metric) => !$(`#metrics thead th[data-metric="${metric}"][data-shown]`) || optional.has(metric);
  const columns = document.querySelectorAll('#metrics thead th:not([hidden])').length;
  for (const v of VARIANTS) {
    const m = report.variants[v];
    const row = document.createElement('tr');
    row.dataset.variant = v;
    const head = document.createElement('th');
    head.scope = 'row';
    const swatch = document.createElement('span');
    swatch.className = 'swatch';
    swatch.style.background = COLOURS[v];
    const name = document.createElement('span');
    name.className = 'vname';
    name.textContent = v;
    const desc = document.createElement('span');
    desc.className = 'vdesc';
    desc.textContent = m ? variantLabel(v, report).split(' · ')[1] : '';
    head.append(swatch, name, desc);
    row.append(head);
    if (!m) {
      row.className = 'absent';
      const td = document.createElement('td');
      td.colSpan = columns - 1;
      td.textContent = v === 'clamp' ? 'no clamp in this design' : 'no damper in this design';
      row.append(td);
      body.append(row);
      continue;
    }
    const overRating = m.peakDrainVoltage > report.voltageRating;
    const overDerated = m.peakDrainVoltage > report.deratedLimit;
    const cell = (metric, value, text, flag) => {
      const td = document.createElement('td');
      td.dataset.metric = metric;
      if (value === undefined || value === null) {
        td.textContent = '—';
        td.className = 'na';
        td.title = metric === 'ringFrequency' ? 'no ring after turn-off strong enough to time (damped within about a period)' : 'not in this variant';
      } else {
        td.dataset.value = String(value);
        td.textContent = text;
        if (flag) {
          td.classList.add(flag === 'rating' ? 'over-rating' : 'over-derated');
          td.title = flag === 'rating' ? 'over the transistor rating' : 'over the derated limit';
          // A margin's minus sign already says "over"; only the peak carries the word.
          if (metric !== 'peakDrainVoltage') { row.append(td); return; }
          const badge = document.createElement('span');
          badge.className = `flag flag-${flag}`;
          badge.textContent = flag === 'rating' ? 'over rating' : 'over derated';
          td.append(' ', badge);
        }
      }
      row.append(td);
    };
    cell('peakDrainVoltage', m.peakDrainVoltage, fmtVolts(m.peakDrainVoltage), overRating ? 'rating' : overDerated ? 'derated' : null);
    cell('marginToRating', m.marginToRating, fmtMargin(m.marginToRating), m.marginToRating < 0 ? 'rating' : null);
    cell('marginToDeratedLimit', m.marginToDeratedLimit, fmtMargin(m.marginToDeratedLimit), m.marginToDeratedLimit < 0 ? 'derated' : null);
    cell('clampVoltageMean', m.clampVoltageMean, fmtSi(m.clampVoltageMean, 'V'));
    cell('clampVoltageRipple', m.clampVoltageRipple, fmtSi(m.clampVoltageRipple, 'V', 3));
    cell('clampResistorPower', m.clampResistorPower, fmtSi(m.clampResistorPower, 'W', 3));
    cell('damperResistorPower', m.damperResistorPower, fmtSi(m.damperResistorPower, 'W', 3));
    cell('clampDiodePeakCurrent', m.clampDiodePeakCurrent, fmtSi(m.clampDiodePeakCurrent, 'A', 3));
    if (wanted('peakAboveClamp')) cell('peakAboveClamp', m.peakAboveClamp, fmtSi(m.peakAboveClamp, 'V', 3));
    if (wanted('clampDiodePower')) cell('clampDiodePower', m.clampDiodePower, fmtSi(m.clampDiodePower, 'W', 3));
    if (wanted('clampDiodeReverseCharge')) cell('clampDiodeReverseCharge', m.clampDiodeReverseCharge, fmtSi(m.clampDiodeReverseCharge, 'C', 3));
    cell('turnOffCurrent', m.turnOffCurrent, fmtSi(m.turnOffCurrent, 'A', 4));
    if (wanted('turnOffLossPower')) cell('turnOffLossPower', m.turnOffLossPower, fmtSi(m.turnOffLossPower, 'W', 3));
    if (wanted('avalancheEnergyPerCycle')) {
      cell('avalancheEnergyPerCycle', m.avalancheEnergyPerCycle, fmtSi(m.avalancheEnergyPerCycle, 'J', 3));
      const power = document.createElement('span');
      power.className = 'sub';
      power.dataset.metric = 'avalanchePower';
      power.dataset.value = String(m.avalanchePower);
      power.textContent = `${fmtSi(m.avalanchePower, 'W', 3)} mean`;
      /** @type {HTMLElement} */ (row.lastElementChild).append(power);
    }
    cell('ringFrequency', m.ringFrequency, fmtSi(m.ringFrequency, 'Hz', 4));
    const steady = m.settled ? 'settled' : m.orbit;
    cell('settled', m.settled, steady, null);
    const steadyCell = /** @type {HTMLElement} */ (row.lastElementChild);
    if (!m.settled) steadyCell.classList.add('unsettled');
    steadyCell.dataset.orbit = m.orbit;
    const conduction = document.createElement('span');
    conduction.className = 'sub';
    conduction.textContent = m.conduction;
    conduction.title = m.conduction === 'DCM' ? 'the output diode stops before the next turn-on' : 'the output diode still conducts at the next turn-on';
    steadyCell.append(conduction);
    cell('cycles', m.cycles, String(m.cycles), null);
    body.append(row);
  }
  const plateau = report.supplyVoltage + report.reflectedVoltage;
  const line = $('#plateau');
  line.textContent = `off-state plateau Vin + VR = ${fmtNumber(report.supplyVoltage)} + ${fmtNumber(report.reflectedVoltage)} = ${fmtNumber(plateau)} V · rating ${fmtNumber(report.voltageRating)} V · derated ${fmtNumber(report.deratedLimit)} V`;
  // The server computes this warning but does not send it; the report has what is needed.
  line.classList.toggle('warn', report.voltageRating <= plateau);
  if (report.voltageRating <= plateau) line.textContent += ' — the rating is not above Vin + VR: no clamp can hold the drain under it';
  fillCapacitanceEquivalents(report, plateau);
}

/** The curve as the two constants a datasheet quotes, so a measured part can be compared. */
function fillCapacitanceEquivalents(report, plateau) {
  const holder = $('#coss-equivalents');
  const er = report.drainCapacitanceEnergyEquivalent, tr = report.drainCapacitanceChargeEquivalent;
  holder.hidden = !(Number.isFinite(er) && Number.isFinite(tr));
  if (holder.hidden) return;
  const figure = (metric, value, name) => el('b', { dataset: { metric, value: String(value) }, text: `${name} ${fmtSi(value, 'F', 4)}` });
  holder.replaceChildren(
    `Transistor drain capacitance over 0…Vin + VR (${fmtNumber(plateau)} V) as datasheet constants: `,
    figure('drainCapacitanceEnergyEquivalent', er, 'Co(er)'), ' stores the same energy, ',
    figure('drainCapacitanceChargeEquivalent', tr, 'Co(tr)'), ' takes the same charge; the winding capacitance is not included.',
  );
}

// ---------- scenarios: bundled, file, save ----------

async function loadBundled(id, { run = true } = {}) {
  const response = await fetch(`/api/scenarios/${encodeURIComponent(id)}`);
  if (!response.ok) {
    let message = `no bundled scenario "${id}"`;
    try { message = (await response.json()).error ?? message; } catch { /* keep the plain message */ }
    throw new Error(message);
  }
  const raw = await response.json();
  const notes = fillForm(raw);
  state.sourceLabel = id;
  state.fileBase = '';
  $('#scenario-source').textContent = `Bundled scenario ${id}.json — edit freely; the file on the server is not changed.`;
  dropFileOption();
  select.value = id;
  const url = new URL(window.location.href);
  url.searchParams.set('scenario', id);
  history.replaceState(null, '', url);
  if (notes.length > 0) showGeneral(notes, 'note');
  if (run) await simulate(null);
}

function dropFileOption() { select.querySelector('option[data-file]')?.remove(); }

async function loadFile(file) {
  const text = await file.text();
  let raw;
  try { raw = JSON.parse(text); } catch (error) {
    showGeneral([`${file.name} is not valid JSON: ${/** @type {Error} */ (error).message}`]);
    return;
  }
  const notes = fillForm(raw);
  dropFileOption();
  const option = document.createElement('option');
  option.dataset.file = '';
  option.value = '';
  option.textContent = `file: ${file.name}`;
  select.prepend(option);
  select.value = '';
  state.sourceLabel = file.name;
  state.fileBase = file.name.replace(/\.json$/i, '');
  $('#scenario-source').textContent = `Opened from ${file.name}.`;
  const url = new URL(window.location.href);
  url.searchParams.delete('scenario');
  history.replaceState(null, '', url);
  await simulate(null);
  if (notes.length > 0 && document.body.dataset.lastOutcome === 'ok') showGeneral(notes, 'note');
}

function saveFile() {
  const scenario = readForm({ forFile: true });
  const blob = new Blob([`${JSON.stringify(scenario, null, 2)}\n`], { type: 'application/json' });
  const base = (select.value || state.fileBase || scenario.name || 'scenario').toString().toLowerCase()
    .replace(/[^a-z0-9]+/g, '-').replace(/^-+|-+$/g, '').slice(0, 60) || 'scenario';
  const link = document.createElement('a');
  link.href = URL.createObjectURL(blob);
  link.download = `${base}${select.value ? '-edited' : ''}.json`;
  document.body.append(link);
  link.click();
  link.remove();
  setTimeout(() => URL.revokeObjectURL(link.href), 10_000);
}

// ---------- panels: shared ----------

const designPlot = $('#design-plot');
const sweepPlot = $('#sweep-plot');
let panelsReady = false;

const SI_SCALES = [[1e9, 'G'], [1e6, 'M'], [1e3, 'k'], [1, ''], [1e-3, 'm'], [1e-6, 'µ'], [1e-9, 'n'], [1e-12, 'p'], [1e-15, 'f']];
const SI_UNITS = Object.keys(UNIT_SPELLINGS);

/** A value as an engineer types it into the form: "43k", "3.9n", "330p", "560". */
function siForForm(value) {
  if (value === 0 || !Number.isFinite(value)) return String(value);
  const [scale, prefix] = SI_SCALES.find(([s]) => Math.abs(value) >= s * 0.9995) ?? [1e-15, 'f'];
  return `${Number((value / scale).toPrecision(12))}${prefix === 'µ' ? 'u' : prefix}`;
}

/** The scale and prefix that put the largest magnitude of `values` between 1 and 1000. */
function scaleFor(values, unit) {
  if (!SI_UNITS.includes(unit)) return { scale: 1, label: unit && unit !== '—' ? unit : '' };
  const top = Math.max(...values.map(Math.abs).filter(Number.isFinite), 0);
  const [scale, prefix] = top === 0 ? [1, ''] : SI_SCALES.find(([s]) => top >= s * 0.9995) ?? [1e-15, 'f'];
  return { scale, label: `${prefix}${unit}` };
}

function formField(path) {
  for (const g of GROUPS) for (const f of g.fields) if (f.path === path) return f;
  return undefined;
}

/** The form's current value of a numeric field (its default when empty), or undefined. */
function formNumber(path) {
  const field = formField(path);
  if (field?.curve) return curveEditor.nominal();
  const input = inputFor(path);
  if (!field || !input) return undefined;
  const text = input.value.trim();
  if (text === '') return field.fallback !== undefined ? parseSi(field.fallback, []) : undefined;
  return parseSi(text, SI_UNITS.includes(field.unit) ? [field.unit] : []);
}

function unitOf(path) {
  const u = formField(path)?.unit ?? '';
  return SI_UNITS.includes(u) ? u : '';
}

/** A field's value with its unit for people (plain numbers for ratios). */
function fmtField(path, value) {
  const unit = unitOf(path);
  return unit ? fmtSi(value, unit, 4) : fmtNumber(value, 4);
}


function cap(text) { return `${text.charAt(0).toUpperCase()}${text.slice(1)}`; }

/** Busy state of one panel: its button, the pulse with elapsed time, and data-* for tests. */
function panelRunner(prefix) {
  const panel = $(`#${prefix}-panel`);
  const button = /** @type {HTMLButtonElement} */ ($(`#${prefix}-run`));
  const busy = $(`#${prefix}-busy`);
  const time = $(`#${prefix}-busy-time`);
  let timer = 0;
  let count = 0;
  return {
    panel,
    get busy() { return button.disabled; },
    start() {
      const startedAt = performance.now();
      panel.dataset.state = 'busy';
      button.disabled = true;
      busy.hidden = false;
      const tick = () => { time.textContent = `${((performance.now() - startedAt) / 1000).toFixed(1)} s`; };
      tick();
      window.clearInterval(timer);
      timer = window.setInterval(tick, 50);
      return { seconds: () => ((performance.now() - startedAt) / 1000).toFixed(2) };
    },
    finish(outcome) {
      window.clearInterval(timer);
      busy.hidden = true;
      button.disabled = false;
      panel.dataset.state = outcome === 'ok' ? 'done' : 'error';
      panel.dataset.lastOutcome = outcome;
      count += 1;
      panel.dataset.runCount = String(count);
    },
  };
}

async function postJson(url, body) {
  let response;
  try {
    response = await fetch(url, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify(body) });
  } catch {
    throw new Error('could not reach the flyclamp server; is it still running?');
  }
  const text = await response.text();
  let data = null;
  try { data = JSON.parse(text); } catch { /* a proxy's HTML page, say: reported by status below */ }
  return { response, data };
}

function failureLine(response, data, hint504) {
  const reason = (data && typeof data.error === 'string' ? data.error : `the server answered ${response.status} ${response.statusText}`).replace(/\.$/, '');
  const hint = response.status === 504 ? hint504
    : response.status === 503 ? ' Other runs are in progress; try again in a moment.' : '';
  return `${cap(reason)}.${hint}`;
}

function flagBadge(kind, text) { return el('span', { class: `flag flag-${kind}`, text }); }

function verdictBadge(pass) { return el('span', { class: `verdict ${pass ? 'pass' : 'fail'}`, text: pass ? 'PASS' : 'FAIL' }); }

/** A numeric table cell, right-aligned, with the raw value for tests and copying. */
function numCell(value, text, extra = {}) {
  if (value === undefined || value === null || !Number.isFinite(value)) return el('td', { ...extra, class: 'na', text: '—' });
  return el('td', { ...extra, dataset: { ...(extra.dataset ?? {}), value: String(value) }, text });
}

function peakCell(peak, rating, derated, extra = {}) {
  // A corner without the bare run (the design runs it at the worst case only) shows a dash.
  if (typeof peak !== 'number' || !Number.isFinite(peak)) return numCell(undefined, '—', extra);
  const td = numCell(peak, fmtVolts(peak), extra);
  if (peak > rating) { td.classList.add('over-rating'); td.append(' ', flagBadge('rating', 'over rating')); }
  else if (peak > derated) { td.classList.add('over-derated'); td.append(' ', flagBadge('derated', 'over derated')); }
  return td;
}

function marginCell(margin, extra = {}) {
  const td = numCell(margin, fmtMargin(margin), extra);
  if (Number.isFinite(margin) && margin < 0) td.classList.add('over-derated');
  return td;
}

function variantHead(v, label) {
  const th = el('th', { scope: 'row' }, el('span', { class: 'swatch' }), el('span', { class: 'vname', text: v }));
  /** @type {HTMLElement} */ (th.firstChild).style.background = COLOURS[v];
  if (label) th.append(el('span', { class: 'vdesc', text: label }));
  return th;
}

function level(x0, x1, y, name, meta, colour, dash, width) {
  return {
    type: 'scatter', mode: 'lines', name, meta, x: [x0, x1], y: [y, y], showlegend: false, hoverinfo: 'skip',
    line: { color: colour, dash, width },
  };
}

function levelTag(y, text, colour, shift) {
  return {
    x: 1, xref: 'paper', xanchor: 'right', y, yref: 'y', yanchor: shift > 0 ? 'bottom' : 'top', yshift: shift,
    text, showarrow: false, font: { color: colour, size: 12 }, bgcolor: 'rgba(255,253,248,0.85)',
  };
}

// ---------- design panel ----------

let design = /** @type {null | ReturnType<typeof panelRunner>} */ (null);

const DESIGN_LABELS = { bare: 'bare · no clamp', clamp: 'clamp · the designed RCD clamp', damped: 'damped · clamp + the designed RC damper' };

async function runDesign() {
  if (!design || design.busy) return;
  const scenario = readForm();
  const run = design.start();
  const area = $('#design-error');
  clearFieldErrors();
  showMessages(area, []);
  $('#design-status').textContent = '';
  let outcome = 'failed';
  try {
    const { response, data } = await postJson('/api/design', { scenario });
    const seconds = run.seconds();
    if (response.ok && data && data.ok) {
      outcome = 'ok';
      state.design = { scenario, data };
      design.panel.classList.remove('stale');
      $('#design-result').hidden = false;
      drawDesign(data);
      $('#design-status').textContent = `Designed and verified in ${seconds} s: ${data.design.scenario}.`;
    } else if (response.status === 400 && data && Array.isArray(data.issues)) {
      outcome = 'invalid';
      showIssues(data.issues, (lines) => showMessages(area, lines));
      $('#design-status').textContent = `Not designed: the scenario has ${data.issues.length === 1 ? 'a problem' : `${data.issues.length} problems`}.`;
    } else {
      showMessages(area, [failureLine(response, data, ' Fewer cycles (solver settings) or a looser tolerance may help.')]);
      $('#design-status').textContent = `Not designed (${seconds} s).`;
    }
  } catch (error) {
    showMessages(area, [/** @type {Error} */ (error).message]);
    $('#design-status').textContent = 'Not designed.';
  } finally {
    if (outcome !== 'ok' && state.design) {
      design.panel.classList.add('stale');
      $('#design-status').textContent += ' The results below are from the last successful design.';
    }
    design.finish(outcome);
  }
}

function drawDesign(data) {
  const d = data.design;
  const hand = d.hand;
  const wc = d.verification.worstCase;
  const bare = wc.variants.bare;
  const rating = Number((bare.peakDrainVoltage + bare.marginToRating).toPrecision(10));
  const derated = hand.deratedLimit;

  const failed = d.corners.filter((c) => !c.pass)
    .map((c) => `at “${c.name}”: ${cornerSettled(c) ? 'over the derated limit less the allowance' : 'did not settle'}`);
  if (!d.losses.pass) failed.push(`clamp and damper losses over the budget (${fmtNumber(100 * d.losses.share, 3)} % of the output)`);
  const verdict = $('#design-verdict');
  verdict.replaceChildren(verdictBadge(d.pass), ` ${d.pass ? `every corner within the derated limit less ${fmtSi(d.allowance, 'V', 3)}, losses within the budget` : failed.join('; ')}`);
  verdict.className = `verdict-text ${d.pass ? 'pass' : 'fail'}`;
  verdict.dataset.pass = String(d.pass);
  $('#design-limit').textContent = `derated limit ${fmtVolts(derated)} = ${fmtNumber(100 * hand.targets.drainDerating, 3)} % of the ${fmtVolts(rating)} rating · worst case: ${fmtVolts(wc.conditions.supplyVoltage)} in, leakage ${fmtSi(wc.conditions.leakageInductance, 'H')} (+${fmtNumber(100 * hand.targets.leakageTolerance, 3)} %), ${fmtSi(wc.conditions.peakCurrent, 'A')} at turn-off`;

  // The chosen parts.
  const part = (path, label, value, unit, digits = 3) => [
    el('dt', { text: label }),
    el('dd', { dataset: { part: path, value: String(value) }, text: fmtSi(value, unit, digits) }),
  ];
  $('#design-parts').replaceChildren(
    el('div', { class: 'part-block', dataset: { block: 'clamp' } },
      el('h4', {}, el('span', { class: 'swatch' }), 'RCD clamp'),
      el('dl', {},
        ...part('clamp.resistance', 'Resistor', d.clamp.resistance, 'Ω'),
        ...part('clamp.capacitance', 'Capacitor', d.clamp.capacitance, 'F'),
        ...part('clamp.diodeDrop', 'Diode drop', d.clamp.diodeDrop, 'V'))),
    el('div', { class: 'part-block', dataset: { block: 'damper' } },
      el('h4', {}, el('span', { class: 'swatch' }), 'RC damper'),
      el('dl', {},
        ...part('damper.resistance', 'Resistor', d.damper.resistance, 'Ω'),
        ...part('damper.capacitance', 'Capacitor', d.damper.capacitance, 'F'))),
  );
  /** @type {HTMLElement} */ ($('#design-parts [data-block="clamp"] .swatch')).style.background = COLOURS.clamp;
  /** @type {HTMLElement} */ ($('#design-parts [data-block="damper"] .swatch')).style.background = COLOURS.damped;
  $('#design-use-note').textContent = 'Loads these parts into the form and switches the clamp and the damper on; Simulate then runs them at the scenario’s own conditions.';

  // How the parts were chosen.
  const t = hand.targets;
  const steps = [
    el('li', {}, `Formula at the worst case: R = ${fmtSi(hand.resistanceExact, 'Ω', 4)}; the ${t.resistorSeries} value at or below it is `,
      el('b', { text: fmtSi(hand.resistance, 'Ω', 3) }), `, with C = ${fmtSi(hand.capacitance, 'F', 3)} (${t.capacitorSeries}, at or above ${fmtSi(hand.capacitanceExact, 'F', 3)} for at most ${fmtNumber(100 * t.clampRippleMaximum, 3)} % ripple).`),
    ...d.adjustments.map((a) => el('li', { dataset: { resistance: String(a.resistance) } },
      el('b', { text: fmtSi(a.resistance, 'Ω', 3) }), `: simulated worst-case peak ${fmtVolts(a.worstCasePeak)} against ${fmtVolts(derated)}. `,
      el('span', { class: 'muted', text: cap(a.reason) + '.' }))),
  ];
  if (d.adjustments.length === 0) steps.push(el('li', { class: 'muted', text: 'No step: the formula’s value holds the simulated worst case under the limit, and one standard step up does not.' }));
  steps.push(el('li', { class: 'chosen' }, 'Chosen clamp: ', el('b', { text: `${fmtSi(d.clamp.resistance, 'Ω', 3)} ∥ ${fmtSi(d.clamp.capacitance, 'F', 3)}` }),
    `. Damper: Rs = √(Llk/Coss) = ${fmtSi(hand.damper.resistanceExact, 'Ω', 4)} → `, el('b', { text: fmtSi(d.damper.resistance, 'Ω', 3) }),
    `, Cs = ${fmtNumber(t.damperCapacitanceRatio, 3)} × Coss = ${fmtSi(hand.damper.capacitanceExact, 'F', 3)} → `, el('b', { text: fmtSi(d.damper.capacitance, 'F', 3) }),
    ` (nearest ${t.resistorSeries} / ${t.capacitorSeries}).`));
  $('#design-adjustments').replaceChildren(...steps);

  // Verification per corner.
  const vbody = /** @type {HTMLElement} */ ($('#design-verification tbody'));
  // Every corner the design was verified at; the worst case and nominal keep their keys.
  const cornerRows = d.corners.map((c, i) => ({
    key: i === 0 ? 'worstCase' : c.name === 'nominal' ? 'nominal' : `corner-${i}`,
    label: i === 0 ? `worst case (${c.name})` : c.name,
    conditions: { supplyVoltage: c.inputVoltage, leakageInductance: c.leakageInductance, peakCurrent: c.peakCurrent },
    variants: c.variants, pass: c.pass, margin: hand.deratedLimit - d.allowance - c.peakDrainVoltage,
  }));
  vbody.replaceChildren(...cornerRows.map((c) => {
    const key = c.key;
    const v = c.variants;
    const settled = cornerSettled(c);
    const verdictCell = el('td', { class: 'verdict-cell', dataset: { metric: 'verdict' } }, verdictBadge(c.pass));
    if (!settled) {
      const which = ['clamp', 'damped'].filter((name) => v[name] && !v[name].settled);
      verdictCell.append(el('span', { class: 'sub', text: `${which.join(', ')} not settled` }));
    }
    const row = el('tr', { dataset: { corner: key, pass: String(c.pass), settled: String(settled) } },
      el('th', { scope: 'row', text: c.label }),
      numCell(c.conditions.supplyVoltage, fmtVolts(c.conditions.supplyVoltage)),
      numCell(c.conditions.leakageInductance, fmtSi(c.conditions.leakageInductance, 'H')),
      numCell(c.conditions.peakCurrent, fmtSi(c.conditions.peakCurrent, 'A')),
      peakCell(v.bare?.peakDrainVoltage, rating, derated, { dataset: { metric: 'bare' } }),
      peakCell(v.clamp?.peakDrainVoltage, rating, derated, { dataset: { metric: 'clamp' } }),
      peakCell(v.damped?.peakDrainVoltage, rating, derated, { dataset: { metric: 'damped' } }),
      numCell(v.clamp?.clampVoltageMean, fmtSi(v.clamp?.clampVoltageMean, 'V')),
      numCell(v.clamp?.clampVoltageRipple, fmtSi(v.clamp?.clampVoltageRipple, 'V', 3)),
      numCell(v.clamp?.clampResistorPower, fmtSi(v.clamp?.clampResistorPower, 'W', 3)),
      numCell(v.damped?.damperResistorPower, fmtSi(v.damped?.damperResistorPower, 'W', 3)),
      marginCell(c.margin, { dataset: { metric: 'margin' } }),
      verdictCell,
    );
    return row;
  }));

  // The allowance, the corner that sets the peak, and the loss verdict.
  let lossLine = document.getElementById('design-losses');
  if (!lossLine) {
    lossLine = el('p', { id: 'design-losses', class: 'design-losses' });
    $('#design-verification').after(lossLine);
  }
  const l = d.losses;
  lossLine.replaceChildren(
    `Every corner (${d.corners.map((c) => c.name).join('; ')}) is held ${fmtSi(d.allowance, 'V', 3)} below the derated limit for what the model leaves out; the peak is set at “${d.limitingCorner}”. `,
    `Clamp and damper losses at “${l.corner}”: ${fmtSi(l.clamp, 'W', 3)} + ${fmtSi(l.damper, 'W', 3)} = ${fmtSi(l.total, 'W', 3)}, ${fmtNumber(100 * l.share, 3)} % of the ${fmtSi(l.outputPower, 'W', 3)} output; budget ${l.budget === null ? 'none' : fmtSi(l.budget, 'W', 3)} `,
    verdictBadge(l.pass),
  );

  // Part stresses.
  const sbody = /** @type {HTMLElement} */ ($('#design-stresses tbody'));
  sbody.replaceChildren(...d.stresses.map((p) => {
    const value = p.unit === 'V' ? `Vf ${fmtSi(p.value, 'V', 3)}` : fmtSi(p.value, p.unit, 3);
    const rated = p.suggestedRating !== undefined
      ? el('td', { dataset: { value: String(p.suggestedRating) } }, `${fmtVolts(p.suggestedRating)}`,
        el('span', { class: 'sub', text: `${fmtNumber(100 * p.voltageMargin, 2)} % margin` }))
      : el('td', { class: 'na', text: '—' });
    let arrangement = el('td', { class: 'na', text: '—' });
    if (p.arrangement && p.arrangement.ok) {
      const a = p.arrangement;
      arrangement = el('td', { class: 'left' },
        `${a.count} × ${a.caseName}${a.count > 1 && p.preferredPerResistor ? ` in series, ${fmtSi(p.preferredPerResistor.value, 'Ω', 3)} each` : ''}`,
        el('span', { class: 'sub', text: `${fmtSi(a.powerPerResistor, 'W', 2)} and ${fmtSi(a.voltagePerResistor, 'V', 3)} each; allowed ${fmtSi(a.allowedPower, 'W', 2)}, ${fmtSi(a.allowedVoltage, 'V', 3)}` }));
      if (a.count > 1 && p.preferredPerResistor) arrangement.append(el('span', { class: 'sub', text: `nearest preferred value per part: ${fmtSi(p.preferredPerResistor.total, 'Ω', 3)} in all` }));
      if (a.hotSpot) arrangement.append(' ', el('span', { class: 'flag flag-derated', text: 'hot spot', title: 'more than 0.1 W in one chip resistor: mind the copper and its neighbours' }));
    } else if (p.arrangement) {
      arrangement = el('td', { class: 'left over-derated', text: p.arrangement.reason });
    }
    return el('tr', { dataset: { part: p.part } },
      el('th', { scope: 'row', text: p.part }),
      el('td', { dataset: { value: String(p.value) }, text: value }),
      numCell(p.workingVoltage, fmtVolts(p.workingVoltage)),
      numCell(p.power, fmtSi(p.power, 'W', 3)),
      numCell(p.peakCurrent, fmtSi(p.peakCurrent, 'A', 3)),
      rated,
      arrangement,
      el('td', { class: 'note', text: p.note ?? '' }),
    );
  }));

  // Notes, warnings and the standing cautions: visible, not folded.
  const notes = [...d.notes.map((n) => ({ text: n, kind: 'note' }))];
  for (const w of data.warnings ?? []) notes.push({ text: `${w.path}: ${w.message}`, kind: 'warning' });
  if (hand.extracted) {
    notes.push({ kind: 'note', text: `The design used the drain capacitance ${fmtSi(hand.extracted.drainCapacitance, 'F', 3)} and leakage inductance ${fmtSi(hand.extracted.leakageInductance, 'H', 3)} extracted from the measured ring (Z0 = ${fmtSi(hand.extracted.characteristicImpedance, 'Ω', 3)}); the form still holds the scenario’s own values, which the main simulation and the studies use.` });
  }
  notes.push({ kind: 'caution', text: 'Verified at two corners only (worst case and nominal), with the parts at their nominal values. Diode recovery and parasitics outside the scenario are not modelled: measure the drain on the bench, with a probe rated for it, before relying on the margin.' });
  $('#design-notes').replaceChildren(...notes.map((n) => el('li', { class: n.kind, text: n.text })));

  // Worked equations (folded).
  const ebody = /** @type {HTMLElement} */ ($('#design-equations tbody'));
  ebody.replaceChildren(...hand.equations.map((e) => el('tr', {},
    el('th', { scope: 'row', text: e.quantity }),
    el('td', { class: 'left formula', text: e.formula }),
    numCell(e.value, e.unit ? fmtSi(e.value, e.unit, 4) : fmtNumber(e.value, 4)),
    el('td', { class: 'note', text: e.source }),
  )));
  /** @type {HTMLElement} */ ($('#design-equations-fold summary')).textContent = `Worked equations and their sources (${hand.equations.length})`;

  drawDesignPlot(data, false);
}

/** A corner is judged only on settled runs of the clamp and the clamp with damper. */
function cornerSettled(c) { return ['clamp', 'damped'].every((name) => !c.variants[name] || c.variants[name].settled); }

/**
 * The first turn-off in the worst-case traces: where the bare drain first rises through half its
 * plateau (the recording starts at a turn-on, while the drain may still be high from the last ring).
 */
function designTurnOffWindow(data) {
  const d = data.design;
  const tr = data.worstCaseTraces.bare ?? data.worstCaseTraces.clamp;
  if (!tr) return null;
  const half = 0.5 * (d.verification.worstCase.conditions.supplyVoltage + d.hand.reflectedVoltage);
  const i = tr.values.findIndex((v, k) => k > 0 && v > half && tr.values[k - 1] <= half);
  if (i < 0) return null;
  const t = tr.timeSeconds[i];
  const rings = ['bare', 'clamp'].map((v) => d.verification.worstCase.variants[v]?.ringFrequency).filter((f) => typeof f === 'number' && f > 0);
  const after = Math.max(rings.length ? 5 / Math.min(...rings) : 0, 1e-6);
  const end = tr.timeSeconds[tr.timeSeconds.length - 1];
  return [Math.max(0, t - 0.3e-6) * US, Math.min(end, t + after) * US];
}

function drawDesignPlot(data, zoomed) {
  const d = data.design;
  const wc = d.verification.worstCase;
  const bare = wc.variants.bare;
  const rating = Number((bare.peakDrainVoltage + bare.marginToRating).toPrecision(10));
  const derated = d.hand.deratedLimit;
  const plateau = wc.conditions.supplyVoltage + d.hand.reflectedVoltage;
  const present = VARIANTS.filter((v) => data.worstCaseTraces[v]);
  const end = Math.max(...present.map((v) => { const ts = data.worstCaseTraces[v].timeSeconds; return ts[ts.length - 1]; })) * US;
  const traces = present.map((v) => ({
    type: 'scatter', mode: 'lines', meta: `variant:${v}`,
    name: `${DESIGN_LABELS[v]} — peak ${fmtVolts(wc.variants[v].peakDrainVoltage)}`,
    x: data.worstCaseTraces[v].timeSeconds.map((t) => t * US),
    y: data.worstCaseTraces[v].values,
    line: { color: COLOURS[v], width: v === 'bare' ? 1.3 : 1.7 },
    hovertemplate: `%{y:.1f} V at %{x:.3f} µs<extra>${v}</extra>`,
  }));
  traces.push(
    level(0, end, rating, `rating ${fmtNumber(rating)} V`, 'limit:rating', RATING_COLOUR, 'dash', 1.6),
    level(0, end, derated, `derated limit ${fmtNumber(derated)} V`, 'limit:derated', DERATED_COLOUR, 'dashdot', 1.4),
    level(0, end, plateau, `Vin + VR ${fmtNumber(plateau)} V`, 'ref:plateau', '#8c8372', 'dot', 1),
  );
  // The worst case breaks down at the same voltage as the scenario: the bare trace flattens there.
  const avalanche = parseSi(String(state.design?.scenario.switch?.avalancheVoltage ?? ''), ['V']);
  const hasAvalanche = Number.isFinite(avalanche) && avalanche > 0;
  if (hasAvalanche) traces.push(level(0, end, avalanche, `avalanche ${fmtNumber(avalanche)} V`, 'limit:avalanche', AVALANCHE_COLOUR, 'longdash', 1.4));
  const window_ = zoomed ? designTurnOffWindow(data) : null;
  const layout = {
    ...BASE_LAYOUT,
    margin: { l: 62, r: 14, t: 34, b: 48 },
    legend: { orientation: 'h', x: 0, y: 1.02, yanchor: 'bottom', font: { size: 12.5 } },
    xaxis: { ...AXIS, title: { text: window_ ? 'time from the start of the recorded cycles (µs) — display resolution' : 'time over the recorded settled cycles at the worst case (µs)' }, range: window_ ?? [0, end] },
    yaxis: { ...AXIS, title: { text: 'drain–source voltage (V)' }, rangemode: 'tozero' },
    annotations: [
      levelTag(rating, `rating ${fmtNumber(rating)} V`, RATING_COLOUR, 2),
      levelTag(derated, `derated limit ${fmtNumber(derated)} V`, DERATED_COLOUR, 2),
      levelTag(plateau, `Vin,max + VR ${fmtNumber(plateau)} V`, '#6f6757', -2),
      ...(hasAvalanche ? [levelTag(avalanche, `avalanche ${fmtNumber(avalanche)} V`, AVALANCHE_COLOUR, 2)] : []),
    ],
  };
  Plotly.react(designPlot, traces, layout, plotConfig('design worst case'));
  designPlot.dataset.view = window_ ? 'turn-off' : 'whole';
  /** @type {HTMLButtonElement} */ ($('#design-zoom-turnoff')).disabled = Boolean(window_) || !designTurnOffWindow(data);
  /** @type {HTMLButtonElement} */ ($('#design-zoom-whole')).disabled = !window_;
}

function useDesignParts() {
  if (!state.design) return;
  const { clamp, damper } = state.design.data.design;
  const values = {
    'clamp.resistance': siForForm(clamp.resistance),
    'clamp.capacitance': siForForm(clamp.capacitance),
    'clamp.diodeDrop': String(Number(clamp.diodeDrop.toPrecision(12))),
    'damper.resistance': siForForm(damper.resistance),
    'damper.capacitance': siForForm(damper.capacitance),
  };
  /** @type {HTMLInputElement} */ ($('#use-clamp')).checked = true;
  /** @type {HTMLInputElement} */ ($('#use-damper')).checked = true;
  syncBlocks();
  for (const [path, text] of Object.entries(values)) {
    const input = inputFor(path);
    input.value = text;
    clearFieldError(path);
    const field = /** @type {HTMLElement} */ (input.closest('.field'));
    field.classList.remove('loaded');
    void field.offsetWidth; // restart the highlight
    field.classList.add('loaded');
  }
  markEdited();
  updateStudyPreview();
  $('#design-use-note').textContent = `In the form: clamp ${fmtSi(clamp.resistance, 'Ω', 3)} ∥ ${fmtSi(clamp.capacitance, 'F', 3)}, diode ${fmtSi(clamp.diodeDrop, 'V', 3)}; damper ${fmtSi(damper.resistance, 'Ω', 3)} + ${fmtSi(damper.capacitance, 'F', 3)}. Simulate (or Enter in the form) to run them at the scenario’s conditions.`;
  $('#design-use-note').classList.add('done');
}

// ---------- study panel ----------

let study = /** @type {null | ReturnType<typeof panelRunner>} */ (null);
const STUDY_GROUPS = { supply: 'Supply', transformer: 'Transformer', output: 'Output', switch: 'Switch', clamp: 'RCD clamp', damper: 'RC damper' };
const DEFAULT_STUDY_FIELD = 'transformer.leakageInductance';
const MAX_STUDY_POINTS = 200;

/** The numeric fields a study can vary: those of the blocks the form sends, for its control mode. */
function studyFields() {
  const kind = controlKind();
  const out = [];
  for (const group of GROUPS) {
    if (!(group.key in STUDY_GROUPS)) continue;
    if (group.optionalBlock && !(/** @type {HTMLInputElement | null} */ (document.getElementById(`use-${group.key}`))?.checked)) continue;
    for (const f of group.fields) {
      if (!f.path || f.choices || (f.when && f.when !== kind)) continue;
      // A curve is varied as a whole (the server scales every point); the value read is C at 0 V.
      const label = f.curve && curveEditor?.mode() === 'curve' ? `${f.label}, whole curve (value at 0 V)` : f.label;
      out.push({ group: STUDY_GROUPS[group.key], path: f.path, label, unit: f.unit });
    }
  }
  return out;
}

function fillFieldSelect(sel, fields, fallback) {
  const wanted = sel.value || fallback;
  sel.replaceChildren();
  const groups = new Map();
  for (const f of fields) {
    if (!groups.has(f.group)) { const og = el('optgroup', { label: f.group }); groups.set(f.group, og); sel.append(og); }
    groups.get(f.group).append(el('option', { value: f.path, title: f.path, text: `${f.label}${f.unit && f.unit !== '0–1' ? ` (${f.unit})` : ''}` }));
  }
  sel.value = fields.some((f) => f.path === wanted) ? wanted : fields.some((f) => f.path === fallback) ? fallback : (fields[0]?.path ?? '');
}

function refreshStudyFields() {
  if (!panelsReady) return;
  const fields = studyFields();
  fillFieldSelect(/** @type {HTMLSelectElement} */ ($('#sweep-field')), fields, DEFAULT_STUDY_FIELD);
  for (const sel of document.querySelectorAll('#mc-tolerances .tol-field')) fillFieldSelect(/** @type {HTMLSelectElement} */ (sel), fields, DEFAULT_STUDY_FIELD);
  updateStudyPreview();
}

function studyKind() { return /** @type {HTMLInputElement} */ ($('#study-mc')).checked ? 'monte-carlo' : 'grid'; }

const PERCENT = /^([+-]?\d+(?:\.\d+)?|[+-]?\.\d+)%$/;

/** One end of a range as the server will read it: a percentage of `nominal`, or an SI value. */
function resolveEnd(text, nominal) {
  const t = text.trim();
  const pct = PERCENT.exec(t);
  if (pct) return nominal === undefined ? undefined : nominal * (1 + Number(pct[1]) / 100);
  return parseSi(t, SI_UNITS);
}

function addToleranceLine(path = DEFAULT_STUDY_FIELD, percent = '20', distribution = 'uniform') {
  const holder = $('#mc-tolerances');
  const n = holder.children.length;
  const sel = el('select', { class: 'tol-field', 'aria-label': 'Field with a tolerance' });
  const x = el('input', { type: 'text', class: 'tol-x', value: percent, spellcheck: 'false', 'aria-label': 'Tolerance, ± percent' });
  const dist = el('select', { class: 'tol-dist', 'aria-label': 'Distribution' },
    el('option', { value: 'uniform', text: 'uniform' }), el('option', { value: 'normal', text: 'normal, ±X % = 3σ' }));
  /** @type {HTMLSelectElement} */ (dist).value = distribution;
  const remove = el('button', { type: 'button', class: 'quiet tol-remove', title: 'Remove this tolerance', 'aria-label': 'Remove this tolerance', text: '×' });
  const error = el('div', { class: 'field-error', hidden: '' });
  const line = el('div', { class: 'tol-line', dataset: { line: String(n) } },
    el('div', { class: 'tol-inputs' }, sel, el('span', { class: 'pm', text: '±' }), x, el('span', { class: 'unit', text: '%' }), dist, remove), error);
  remove.addEventListener('click', () => { line.remove(); syncToleranceButtons(); });
  holder.append(line);
  fillFieldSelect(/** @type {HTMLSelectElement} */ (sel), studyFields(), path);
  /** @type {HTMLSelectElement} */ (sel).value = path;
  syncToleranceButtons();
}

function syncToleranceButtons() {
  const lines = document.querySelectorAll('#mc-tolerances .tol-line');
  for (const b of document.querySelectorAll('#mc-tolerances .tol-remove')) /** @type {HTMLButtonElement} */ (b).disabled = lines.length <= 1;
}

function toleranceSpec(line) {
  const path = /** @type {HTMLSelectElement} */ (line.querySelector('.tol-field')).value;
  const x = /** @type {HTMLInputElement} */ (line.querySelector('.tol-x')).value.trim().replace(/^(?:±|\+-|\+\/-)\s*/, '').replace(/\s*%$/, '');
  const dist = /** @type {HTMLSelectElement} */ (line.querySelector('.tol-dist')).value;
  return { path, x, text: `${path}=±${x}%:${dist}` };
}

function syncStudyMode() {
  const mc = studyKind() === 'monte-carlo';
  $('#study-grid-inputs').hidden = mc;
  $('#study-mc-inputs').hidden = !mc;
  updateStudyPreview();
}

function updateStudyPreview() {
  if (!panelsReady) return;
  const preview = $('#sweep-preview');
  preview.classList.remove('warn');
  preview.textContent = '';
  const path = /** @type {HTMLSelectElement} */ ($('#sweep-field')).value;
  if (!path) { preview.textContent = 'No numeric field to vary in this scenario.'; return; }
  const nominal = formNumber(path);
  const from = resolveEnd(/** @type {HTMLInputElement} */ ($('#sweep-from')).value, nominal);
  const to = resolveEnd(/** @type {HTMLInputElement} */ ($('#sweep-to')).value, nominal);
  const stepsText = /** @type {HTMLInputElement} */ ($('#sweep-steps')).value.trim();
  const steps = /^\d+$/.test(stepsText) ? Number(stepsText) : NaN;
  if (from === undefined || to === undefined || !Number.isFinite(steps)) {
    preview.textContent = nominal === undefined ? '' : `value in the form: ${fmtField(path, nominal)}`;
    return;
  }
  const spacing = steps > 1 ? Math.abs(to - from) / (steps - 1) : 0;
  let text = `${fmtField(path, from)} to ${fmtField(path, to)}, ${steps} point${steps === 1 ? '' : 's'}${steps > 1 ? ` ${fmtField(path, spacing)} apart` : ''}`;
  if (nominal !== undefined) text += ` · value in the form ${fmtField(path, nominal)}`;
  const cautions = [];
  if (nominal !== undefined && nominal > 0) {
    for (const [which, v] of [['From', from], ['To', to]]) {
      if (!(v > 0)) cautions.push(`${which} is not above zero: those points will fail`);
      else if (v / nominal > 10 || v / nominal < 0.1) cautions.push(`${which} is ${fmtNumber(v / nominal, 3)} × the value in the form: is a % sign or a prefix missing?`);
    }
  }
  if (steps > MAX_STUDY_POINTS) cautions.push(`at most ${MAX_STUDY_POINTS} points`);
  if (cautions.length > 0) { text += ` — ${cautions.join('; ')}`; preview.classList.add('warn'); }
  preview.textContent = text;
}

function clearStudyErrors() {
  for (const box of document.querySelectorAll('#sweep-panel .field-error')) {
    box.replaceChildren();
    /** @type {HTMLElement} */ (box).hidden = true;
  }
  for (const input of document.querySelectorAll('#sweep-panel [aria-invalid]')) input.removeAttribute('aria-invalid');
  showMessages($('#sweep-error'), []);
}

function showStudyError(box, message, inputs = []) {
  box.append(el('p', { text: message }));
  box.hidden = false;
  for (const input of inputs) input?.setAttribute('aria-invalid', 'true');
}

/** The request body from the panel, or the problems the page can see before asking. */
function buildStudyRequest(scenario) {
  const problems = [];
  if (studyKind() === 'grid') {
    const field = /** @type {HTMLSelectElement} */ ($('#sweep-field'));
    const from = /** @type {HTMLInputElement} */ ($('#sweep-from'));
    const to = /** @type {HTMLInputElement} */ ($('#sweep-to'));
    const steps = /** @type {HTMLInputElement} */ ($('#sweep-steps'));
    const box = $('#sweep-vary-error');
    if (!field.value) problems.push([box, 'expected a field to vary; this scenario has none', [field]]);
    for (const [name, input] of [['From', from], ['To', to]]) {
      const text = input.value.trim();
      if (text === '') problems.push([box, `${name}: expected a percentage of the value in the form (e.g. -20%) or a value with an SI prefix (e.g. 20u)`, [input]]);
      else if (/\.\.|[:=\s]/.test(text.replace(/\s+(?=[a-zA-Zµμ%Ω])/g, ''))) problems.push([box, `${name}: expected one value, found "${text}" (From and To go in their own boxes)`, [input]]);
    }
    const n = steps.value.trim();
    if (!/^\d+$/.test(n) || Number(n) < 1 || Number(n) > MAX_STUDY_POINTS) problems.push([box, `Steps: expected a whole number of points from 2 to ${MAX_STUDY_POINTS}, found "${n}"`, [steps]]);
    const spec = `${field.value}=${from.value.trim()}..${to.value.trim()}:${n}`;
    return { problems, body: { scenario, vary: [spec] }, label: spec, count: Number(n), path: field.value };
  }
  const samples = /** @type {HTMLInputElement} */ ($('#mc-samples'));
  const seed = /** @type {HTMLInputElement} */ ($('#mc-seed'));
  const asNumber = (text) => (/^[+-]?\d+$/.test(text.trim()) ? Number(text.trim()) : text.trim());
  const lines = [...document.querySelectorAll('#mc-tolerances .tol-line')];
  const specs = lines.map((line) => {
    const s = toleranceSpec(line);
    if (s.x === '') problems.push([line.querySelector('.field-error'), 'expected the tolerance in percent, e.g. 20 for ±20 %', [line.querySelector('.tol-x')]]);
    return s.text;
  });
  if (lines.length === 0) problems.push([$('#mc-tolerance-error'), 'expected at least one tolerance', []]);
  return {
    problems,
    body: { scenario, samples: asNumber(samples.value), tolerance: specs, seed: asNumber(seed.value) },
    label: `${samples.value.trim()} samples, seed ${seed.value.trim()}: ${specs.join(', ')}`,
    count: Number(samples.value) || 0,
  };
}

/** A server complaint about the request (body.vary, body.tolerance, …) beside the input it is about. */
function placeStudyIssue(issue) {
  const message = issue.message;
  if (issue.path === 'body.vary') {
    const inputs = /expected FROM/.test(message) ? [$('#sweep-from')] : /expected TO/.test(message) ? [$('#sweep-to')]
      : /STEPS|at most \d+ points/.test(message) ? [$('#sweep-steps')] : /no field/.test(message) ? [$('#sweep-field')] : [];
    showStudyError($('#sweep-vary-error'), message, inputs);
    return true;
  }
  if (issue.path === 'body.samples') { showStudyError($('#mc-samples-error'), message, [$('#mc-samples')]); return true; }
  if (issue.path === 'body.seed') { showStudyError($('#mc-seed-error'), message, [$('#mc-seed')]); return true; }
  if (issue.path === 'body.tolerance') {
    const line = [...document.querySelectorAll('#mc-tolerances .tol-line')].find((l) => message.includes(`"${toleranceSpec(l).text}"`));
    if (line) showStudyError(line.querySelector('.field-error'), message, [line.querySelector('.tol-x'), line.querySelector('.tol-field')]);
    else showStudyError($('#mc-tolerance-error'), message, []);
    return true;
  }
  return false;
}

async function runStudy() {
  if (!study || study.busy) return;
  clearStudyErrors();
  const scenario = readForm();
  const request = buildStudyRequest(scenario);
  if (request.problems.length > 0) {
    for (const [box, message, inputs] of request.problems) showStudyError(box, message, inputs);
    $('#sweep-status').textContent = 'Not run: see the marked input.';
    study.panel.dataset.lastOutcome = 'invalid';
    return;
  }
  // The nominal values the percentages referred to, for labelling the answer.
  const nominals = {};
  for (const f of studyFields()) nominals[f.path] = formNumber(f.path);
  $('#sweep-busy-points').textContent = request.count > 0 ? `${request.count} point${request.count === 1 ? '' : 's'}` : '';
  $('#sweep-status').textContent = '';
  const run = study.start();
  const area = $('#sweep-error');
  clearFieldErrors();
  let outcome = 'failed';
  try {
    const { response, data } = await postJson('/api/sweep', request.body);
    const seconds = run.seconds();
    if (response.ok && data && Array.isArray(data.points)) {
      outcome = 'ok';
      state.study = { request, data, nominals, seconds };
      study.panel.classList.remove('stale');
      $('#sweep-result').hidden = false;
      drawStudy(state.study);
      const failed = data.points.filter((p) => p.failure).length;
      $('#sweep-status').textContent = `${data.points.length} point${data.points.length === 1 ? '' : 's'} in ${seconds} s${failed ? `, ${failed} without a result` : ''}.`;
    } else if (response.status === 400 && data && Array.isArray(data.issues)) {
      outcome = 'invalid';
      const scenarioIssues = data.issues.filter((i) => !placeStudyIssue(i));
      if (scenarioIssues.length > 0) showIssues(scenarioIssues, (lines) => showMessages(area, lines));
      $('#sweep-status').textContent = scenarioIssues.length > 0 ? 'Not run: the scenario has a problem (marked in the form).' : 'Not run: see the marked input.';
    } else {
      showMessages(area, [failureLine(response, data, ' Fewer points, fewer cycles (solver settings) or a looser tolerance may help.')]);
      $('#sweep-status').textContent = `Not run (${seconds} s).`;
    }
  } catch (error) {
    showMessages(area, [/** @type {Error} */ (error).message]);
    $('#sweep-status').textContent = 'Not run.';
  } finally {
    if (outcome !== 'ok' && state.study) {
      study.panel.classList.add('stale');
      $('#sweep-status').textContent += ' The results below are from the last successful study.';
    }
    study.finish(outcome);
  }
}

function studyVariantLabel(v, points) {
  const first = points.find((p) => p.variants && p.variants[v]);
  return first ? variantLabel(v, { variants: first.variants }) : v;
}

/** Rating and derated limit at a point, from its own margins (they follow a varied rating). */
function limitsAt(point, data) {
  const m = point.variants && Object.values(point.variants).find(Boolean);
  if (!m) return { rating: data.voltageRating, derated: data.deratedLimit };
  return { rating: m.peakDrainVoltage + m.marginToRating, derated: m.peakDrainVoltage + m.marginToDeratedLimit };
}

function describeValues(values, nominals) {
  return Object.entries(values).map(([path, v]) => {
    const n = nominals[path];
    const rel = n ? ` (${v >= n ? '+' : '−'}${fmtNumber(Math.abs(100 * (v / n - 1)), 3)} %)` : '';
    return `${path} = ${fmtField(path, v)}${rel}`;
  }).join(', ');
}

function drawStudy(s) {
  const { data, request, nominals } = s;
  const points = data.points;
  const present = VARIANTS.filter((v) => points.some((p) => p.variants && p.variants[v]));
  const paths = Object.keys(points[0]?.values ?? {});
  const mc = data.kind === 'monte-carlo';
  const summary = $('#sweep-summary');
  summary.replaceChildren(
    mc ? `Monte Carlo, ${points.length} samples` : `${data.kind === 'corners' ? 'Corners' : 'Range'} of ${points.length} points`,
    ' · request ', el('code', { text: request.label }),
    paths.includes('switch.voltageRating') ? ' · the rating and the derated limit follow the varied rating'
      : ` · rating ${fmtVolts(data.voltageRating)}, derated limit ${fmtVolts(data.deratedLimit)}`,
    ' · fields not listed stay at the values in the form',
  );

  // The derated limit of a study is the server's default fraction; say so when the form asks for another.
  const caution = $('#sweep-caution');
  const derating = formNumber('design.drainDerating');
  const used = data.deratedLimit / data.voltageRating;
  if (derating !== undefined && Math.abs(derating - used) > 1e-9) {
    caution.hidden = false;
    caution.textContent = `The study’s derated limit is ${fmtNumber(100 * used, 3)} % of the rating (${fmtVolts(data.deratedLimit)}): studies do not apply the design target of ${fmtNumber(100 * derating, 3)} % (${fmtVolts(derating * data.voltageRating)}). Margins and “over the limit” figures below are against ${fmtVolts(data.deratedLimit)}.`;
  } else caution.hidden = true;

  if (mc) drawStudyHistogram(data, present, points);
  else drawStudyGrid(data, present, points, paths[0], nominals);

  // Worst point per variant.
  const wbody = /** @type {HTMLElement} */ ($('#sweep-worst tbody'));
  wbody.replaceChildren(...present.filter((v) => data.worst[v]).map((v) => {
    const w = data.worst[v];
    const { rating, derated } = limitsAt(points[w.index], data);
    return el('tr', { dataset: { variant: v, index: String(w.index) } },
      variantHead(v, studyVariantLabel(v, points).split(' · ')[1]),
      peakCell(w.peakDrainVoltage, rating, derated, { dataset: { metric: 'peakDrainVoltage' } }),
      marginCell(w.marginToRating),
      marginCell(w.marginToDeratedLimit),
      el('td', { text: `${w.index + 1} of ${points.length}` }),
      el('td', { class: 'left note', text: describeValues(w.values, nominals) }),
    );
  }));

  // Monte Carlo spread.
  $('#sweep-stats-wrap').hidden = !mc;
  if (mc) {
    const tbody = /** @type {HTMLElement} */ ($('#sweep-stats tbody'));
    tbody.replaceChildren(...present.filter((v) => data.monteCarlo?.[v]).map((v) => {
      const m = data.monteCarlo[v];
      const over = Math.round(m.fractionOverDeratedLimit * m.samples);
      const overCell = el('td', { dataset: { value: String(m.fractionOverDeratedLimit), metric: 'fractionOverDeratedLimit' } },
        `${fmtNumber(100 * m.fractionOverDeratedLimit, 3)} %`, el('span', { class: 'sub', text: `${over} of ${m.samples}` }));
      if (m.fractionOverDeratedLimit > 0) overCell.classList.add('over-derated');
      const p = m.percentiles;
      const pc = (value, key) => peakCell(value, data.voltageRating, data.deratedLimit, { dataset: { metric: key } });
      return el('tr', { dataset: { variant: v } },
        variantHead(v, studyVariantLabel(v, points).split(' · ')[1]),
        el('td', { text: String(m.samples) }), overCell,
        pc(p.p5, 'p5'), pc(p.p50, 'p50'), pc(p.p95, 'p95'), pc(p.p99, 'p99'), pc(p.max, 'max'));
    }));
  }

  // Points without a result, and points that did not settle.
  const items = [];
  for (const p of points) {
    if (p.failure) items.push(el('li', { class: 'warning', dataset: { index: String(p.index) } }, el('b', { text: `point ${p.index + 1}` }), ` (${describeValues(p.values, nominals)}): ${p.failure}`));
    else {
      const unsettled = Object.entries(p.variants ?? {}).filter(([, m]) => m && !m.settled).map(([v, m]) => `${v} ${m.orbit}`);
      if (unsettled.length) items.push(el('li', { class: 'note', dataset: { index: String(p.index) } }, el('b', { text: `point ${p.index + 1}` }), ` (${describeValues(p.values, nominals)}): not settled — ${unsettled.join(', ')}; its peak is over the cycles run`));
    }
  }
  $('#sweep-failures').hidden = items.length === 0;
  $('#sweep-failures ul').replaceChildren(...items);

  // Every point (folded).
  const table = $('#sweep-points');
  table.querySelector('thead').replaceChildren(el('tr', {},
    el('th', { scope: 'col', text: '#' }),
    ...paths.map((path) => el('th', { scope: 'col', class: 'path' }, el('code', { text: path }))),
    ...present.map((v) => el('th', { scope: 'col' }, 'Peak', el('span', { class: 'u', text: v }))),
  ));
  table.querySelector('tbody').replaceChildren(...points.map((p) => {
    const { rating, derated } = limitsAt(p, data);
    return el('tr', { dataset: { index: String(p.index) } },
      el('th', { scope: 'row', text: String(p.index + 1) }),
      ...paths.map((path) => numCell(p.values[path], fmtField(path, p.values[path]))),
      ...present.map((v) => (p.failure ? el('td', { class: 'na', text: 'failed', title: p.failure })
        : peakCell(p.variants?.[v]?.peakDrainVoltage, rating, derated, { dataset: { variant: v } }))),
    );
  }));
  /** @type {HTMLElement} */ ($('#sweep-points-fold summary')).textContent = `Every point (${points.length})`;
}

function drawStudyGrid(data, present, points, path, nominals) {
  const values = points.map((p) => p.values[path]);
  const { scale, label } = scaleFor(values, unitOf(path));
  const x = values.map((v) => v / scale);
  const field = formField(path);
  const traces = present.map((v) => ({
    type: 'scatter', mode: 'lines+markers', meta: `variant:${v}`, name: studyVariantLabel(v, points),
    x, y: points.map((p) => p.variants?.[v]?.peakDrainVoltage ?? null),
    customdata: points.map((p) => p.index + 1),
    line: { color: COLOURS[v], width: 1.8 }, marker: { color: COLOURS[v], size: 7 },
    hovertemplate: `%{y:.1f} V at %{x:.4g} ${label}<extra>${v} · point %{customdata}</extra>`,
  }));
  const lims = points.map((p) => limitsAt(p, data));
  const flat = lims.every((l) => Math.abs(l.rating - lims[0].rating) < 1e-9);
  const xs = [Math.min(...x), Math.max(...x)];
  if (flat) {
    traces.push(
      level(xs[0], xs[1], data.voltageRating, `rating ${fmtNumber(data.voltageRating)} V`, 'limit:rating', RATING_COLOUR, 'dash', 1.6),
      level(xs[0], xs[1], data.deratedLimit, `derated limit ${fmtNumber(data.deratedLimit)} V`, 'limit:derated', DERATED_COLOUR, 'dashdot', 1.4),
    );
  } else {
    // The rating itself is varied: its lines follow the points.
    const line = (key, name, meta, colour, dash, width) => ({ type: 'scatter', mode: 'lines', name, meta, x, y: lims.map((l) => l[key]), showlegend: false, hoverinfo: 'skip', line: { color: colour, dash, width } });
    traces.push(line('rating', 'rating', 'limit:rating', RATING_COLOUR, 'dash', 1.6), line('derated', 'derated limit', 'limit:derated', DERATED_COLOUR, 'dashdot', 1.4));
  }
  const nominal = nominals[path];
  const shapes = nominal !== undefined && nominal / scale >= xs[0] && nominal / scale <= xs[1] ? [{
    type: 'line', xref: 'x', yref: 'paper', x0: nominal / scale, x1: nominal / scale, y0: 0, y1: 1, line: { color: '#8c8372', width: 1, dash: 'dot' },
  }] : [];
  const last = lims[lims.length - 1];
  const annotations = flat ? [
    levelTag(data.voltageRating, `rating ${fmtNumber(data.voltageRating)} V`, RATING_COLOUR, 2),
    levelTag(data.deratedLimit, `derated limit ${fmtNumber(data.deratedLimit)} V`, DERATED_COLOUR, 2),
  ] : [
    { ...levelTag(last.rating, 'rating', RATING_COLOUR, 2), x: x[x.length - 1], xref: 'x' },
    { ...levelTag(last.derated, 'derated limit', DERATED_COLOUR, 2), x: x[x.length - 1], xref: 'x' },
  ];
  if (shapes.length) annotations.push({ x: nominal / scale, xref: 'x', y: 0, yref: 'paper', yanchor: 'bottom', xanchor: 'left', text: ' value in the form', showarrow: false, font: { color: '#6f6757', size: 11.5 } });
  const layout = {
    ...BASE_LAYOUT,
    margin: { l: 62, r: 14, t: 34, b: 52 },
    legend: { orientation: 'h', x: 0, y: 1.02, yanchor: 'bottom', font: { size: 12.5 } },
    xaxis: { ...AXIS, title: { text: `${field ? field.label.toLowerCase() : path}${label ? ` (${label})` : ''}` }, zeroline: false },
    yaxis: { ...AXIS, title: { text: 'settled peak drain–source voltage (V)' } },
    shapes, annotations,
  };
  sweepPlot.dataset.kind = 'grid';
  Plotly.react(sweepPlot, traces, layout, plotConfig('study'));
}

function drawStudyHistogram(data, present, points) {
  const traces = present.map((v) => {
    const peaks = points.map((p) => p.variants?.[v]?.peakDrainVoltage).filter((y) => Number.isFinite(y));
    return {
      type: 'histogram', meta: `variant:${v}`, name: studyVariantLabel(v, points), x: peaks,
      nbinsx: Math.max(8, Math.min(40, Math.round(2 * Math.sqrt(peaks.length)))),
      marker: { color: COLOURS[v], line: { color: COLOURS[v], width: 1 } }, opacity: 0.6,
      hovertemplate: `%{y} samples at %{x} V<extra>${v}</extra>`,
    };
  });
  const vline = (x, colour, dash) => ({ type: 'line', xref: 'x', yref: 'paper', x0: x, x1: x, y0: 0, y1: 1, line: { color: colour, dash, width: 1.6 } });
  // Written up along its line, so the label does not sit on the bars beside it.
  const tag = (x, text, colour, anchor) => ({ x, xref: 'x', y: 1, yref: 'paper', yanchor: 'top', xanchor: anchor, textangle: -90, text, showarrow: false, font: { color: colour, size: 12 }, bgcolor: 'rgba(255,253,248,0.85)' });
  const layout = {
    ...BASE_LAYOUT,
    barmode: 'overlay',
    margin: { l: 62, r: 14, t: 34, b: 52 },
    legend: { orientation: 'h', x: 0, y: 1.02, yanchor: 'bottom', font: { size: 12.5 } },
    xaxis: { ...AXIS, title: { text: 'settled peak drain–source voltage (V)' } },
    yaxis: { ...AXIS, title: { text: 'samples' } },
    shapes: [vline(data.deratedLimit, DERATED_COLOUR, 'dashdot'), vline(data.voltageRating, RATING_COLOUR, 'dash')],
    annotations: [
      tag(data.deratedLimit, `derated limit ${fmtNumber(data.deratedLimit)} V `, DERATED_COLOUR, 'right'),
      tag(data.voltageRating, ` rating ${fmtNumber(data.voltageRating)} V`, RATING_COLOUR, 'left'),
    ],
  };
  sweepPlot.dataset.kind = 'monte-carlo';
  Plotly.react(sweepPlot, traces, layout, plotConfig('study'));
}

function initPanels() {
  design = panelRunner('design');
  study = panelRunner('sweep');
  $('#design-run').addEventListener('click', () => { void runDesign(); });
  $('#design-use').addEventListener('click', useDesignParts);
  $('#design-zoom-turnoff').addEventListener('click', () => { if (state.design) drawDesignPlot(state.design.data, true); });
  $('#design-zoom-whole').addEventListener('click', () => { if (state.design) drawDesignPlot(state.design.data, false); });
  $('#sweep-run').addEventListener('click', () => { void runStudy(); });
  for (const r of document.querySelectorAll('input[name="study-kind"]')) r.addEventListener('change', syncStudyMode);
  $('#mc-add').addEventListener('click', () => addToleranceLine('clamp.resistance', '5', 'normal'));
  const panel = $('#sweep-panel');
  panel.addEventListener('input', (event) => {
    const target = /** @type {HTMLElement} */ (event.target);
    target.removeAttribute('aria-invalid');
    updateStudyPreview();
  });
  panel.addEventListener('change', () => updateStudyPreview());
  panel.addEventListener('keydown', (event) => {
    const target = /** @type {HTMLElement} */ (event.target);
    if (event.key === 'Enter' && target.tagName === 'INPUT') { event.preventDefault(); void runStudy(); }
  });
  panelsReady = true;
  refreshStudyFields();
  addToleranceLine(DEFAULT_STUDY_FIELD, '20', 'uniform');
  syncStudyMode();
}

// ---------- wiring ----------

form.addEventListener('submit', (event) => {
  event.preventDefault();
  if (!runButton.disabled) void simulate(null);
});
select.addEventListener('change', () => {
  if (!select.value) return;
  loadBundled(select.value).catch((error) => showGeneral([error.message]));
});
$('#open-file').addEventListener('click', () => fileInput.click());
fileInput.addEventListener('change', () => {
  const file = fileInput.files?.[0];
  fileInput.value = '';
  if (file) loadFile(file).catch((error) => showGeneral([`could not read ${file.name}: ${error.message}`]));
});
$('#save-file').addEventListener('click', saveFile);

// Plotly's own `responsive` follows only the window; the columns also change width when the
// layout reflows (narrow screens, the table growing), so each plot follows its own box.
const resizer = new ResizeObserver((entries) => {
  for (const entry of entries) {
    const el = /** @type {any} */ (entry.target);
    if (el.data && el.offsetParent !== null) Plotly.Plots.resize(el);
  }
});

let capturePanel = /** @type {null | ReturnType<typeof createCapturePanel>} */ (null);

/** A value written into the form by a panel: the field's error cleared, the field highlighted. */
function setFormField(path, text) {
  const input = inputFor(path);
  input.value = text;
  highlightLoaded(path, input);
}

function highlightLoaded(path, input) {
  clearFieldError(path);
  const field = /** @type {HTMLElement | null} */ (input?.closest('.field'));
  if (field) {
    field.classList.remove('loaded');
    void field.offsetWidth; // restart the highlight
    field.classList.add('loaded');
  }
  markEdited();
  updateStudyPreview();
}

async function start() {
  buildForm();
  initPanels();
  capturePanel = createCapturePanel({
    readForm, formNumber, fmtSi, siForForm, parseSi, postJson,
    setField: setFormField,
    setDrainCapacitance: (raw) => {
      curveEditor.fill(raw);
      highlightLoaded('switch.drainCapacitance', inputFor('switch.drainCapacitance'));
      refreshStudyFields();
    },
    redrawDrain: () => { if (drawnDrain) drawDrain(drawnDrain.result, drawnDrain.window_); },
  });
  resizer.observe(drainPlot);
  resizer.observe(clampPlot);
  resizer.observe(designPlot);
  resizer.observe(sweepPlot);
  if (curveEditor) resizer.observe(curveEditor.plot);
  if (!Plotly) {
    showGeneral(['The plotting library did not load (/vendor/plotly.min.js); reload the page.']);
    return;
  }
  let list = [];
  try {
    const response = await fetch('/api/scenarios');
    list = (await response.json()).scenarios ?? [];
  } catch {
    showGeneral(['could not reach the flyclamp server to list the bundled scenarios']);
  }
  for (const { id, name } of list) {
    const option = document.createElement('option');
    option.value = id;
    option.textContent = name;
    select.append(option);
  }
  document.body.dataset.state = 'idle';
  const wanted = new URL(window.location.href).searchParams.get('scenario');
  const fallback = list.some((s) => s.id === 'bias-48v') ? 'bias-48v' : list[0]?.id;
  const id = wanted && list.some((s) => s.id === wanted) ? wanted : fallback;
  if (!id) return;
  await loadBundled(id);
  if (wanted && wanted !== id) showGeneral([`There is no bundled scenario "${wanted}"; showing ${id} instead.`], 'note');
}

void start();
