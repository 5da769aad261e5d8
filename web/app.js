// The flyclamp page: a form over the scenario file, a run against /api/simulate, two plots and
// a table. Plain ES module, no build step; Plotly comes from /vendor/plotly.min.js as a global.

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
  ] },
  { key: 'output', title: 'Output', fields: [
    { path: 'output.voltage', label: 'Regulated output voltage', unit: 'V' },
    { path: 'output.diodeDrop', label: 'Output rectifier forward drop', unit: 'V', fallback: '0' },
  ] },
  { key: 'switch', title: 'Switch', fields: [
    { path: 'switch.frequency', label: 'Switching frequency', unit: 'Hz' },
    { control: true },
    { path: 'switch.peakCurrent', label: 'Primary current at turn-off', unit: 'A', when: 'peak-current' },
    { path: 'switch.maxDutyCycle', label: 'Maximum duty cycle', unit: '0–1', fallback: '0.9', when: 'peak-current' },
    { path: 'switch.dutyCycle', label: 'Duty cycle', unit: '0–1', when: 'fixed-duty' },
    { path: 'switch.drainCapacitance', label: 'Drain–source capacitance', unit: 'F' },
    { path: 'switch.onResistance', label: 'On-resistance', unit: 'Ω' },
    { path: 'switch.bodyDiodeDrop', label: 'Body diode forward drop', unit: 'V', fallback: '0.7' },
    { path: 'switch.voltageRating', label: 'Rated drain–source voltage', unit: 'V' },
  ] },
  { key: 'clamp', title: 'Fit an RCD clamp', optionalBlock: true, note: 'diode from the drain into C ∥ R, returned to the input rail', fields: [
    { path: 'clamp.resistance', label: 'Clamp resistor', unit: 'Ω' },
    { path: 'clamp.capacitance', label: 'Clamp capacitor', unit: 'F' },
    { path: 'clamp.diodeDrop', label: 'Clamp diode forward drop', unit: 'V', fallback: '1.0' },
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
  last: /** @type {null | { scenario: object, result: any, label: string }} */ (null),
  sourceLabel: '',
  editedSinceRun: false,
  /** Whether the shown results are older than the last attempt (which failed). */
  stale: false,
  statusText: '',
  /** Name of the opened file without .json, for the saved copy's name. */
  fileBase: '',
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
    for (const field of group.fields) body.append(field.control ? makeControlChoice() : field.heading ? makeHeading(field.heading) : makeField(field));
    form.append(set);
  }
  form.addEventListener('input', (event) => {
    const target = /** @type {HTMLInputElement} */ (event.target);
    if (target.dataset.path) clearFieldError(target.dataset.path);
    markEdited();
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

function makeField(field) {
  const wrap = document.createElement('div');
  wrap.className = 'field';
  wrap.dataset.field = field.path;
  if (field.when) wrap.dataset.when = field.when;
  const id = fieldId(field.path);
  const label = document.createElement('label');
  label.htmlFor = id;
  label.textContent = field.label;
  if (field.fallback !== undefined) {
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
  entry.append(input);
  if (!field.text && !field.choices) {
    const unit = document.createElement('span');
    unit.className = 'unit';
    unit.textContent = field.unit || '—';
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
}

function syncBlocks() {
  for (const box of form.querySelectorAll('input[data-block]')) {
    const set = /** @type {HTMLFieldSetElement} */ (box.closest('fieldset'));
    // A disabled fieldset keeps its first legend (the checkbox) usable and the values kept.
    set.disabled = !(/** @type {HTMLInputElement} */ (box).checked);
    set.classList.toggle('off', set.disabled);
  }
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

function clearErrors() {
  for (const box of form.querySelectorAll('.field-error')) clearFieldError(/** @type {HTMLElement} */ (box).dataset.for);
  showGeneral([]);
}

/** Shows lines in the general area; `tone` 'note' is for load remarks that are not failures. */
function showGeneral(lines, tone = 'error') {
  const area = $('#general-error');
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

/** Puts each issue beside the input its path names; the rest go to the general area. */
function showIssues(issues) {
  const rest = [];
  const kind = controlKind();
  for (const issue of issues) {
    let path = issue.path;
    // "Exactly one of peak current and duty cycle" is filed under switch.peakCurrent even when
    // fixed duty is chosen and that input is hidden; show it where the engineer is looking.
    const controlField = SWITCH_FIELDS.find((f) => f.path === path && f.when);
    if (controlField && controlField.when !== kind) path = kind === 'fixed-duty' ? 'switch.dutyCycle' : 'switch.peakCurrent';
    const box = form.querySelector(`.field-error[data-for="${path}"]`);
    if (!box) { rest.push(issue); continue; }
    const p = document.createElement('p');
    p.textContent = issue.message;
    box.append(p);
    /** @type {HTMLElement} */ (box).hidden = false;
    inputFor(path)?.setAttribute('aria-invalid', 'true');
    const details = box.closest('details');
    if (details) details.open = true;
  }
  const first = form.querySelector('input[aria-invalid="true"]');
  if (first) /** @type {HTMLElement} */ (first).scrollIntoView({ block: 'center', behavior: 'smooth' });
  if (rest.length > 0) showGeneral(rest);
  else showGeneral([`The server could not use the design: ${issues.length === 1 ? 'one field needs' : `${issues.length} fields need`} attention (marked in the form).`]);
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
        state.last = { scenario, result: data, label: state.sourceLabel };
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
const PLOT_CONFIG = { responsive: true, displaylogo: false, modeBarButtonsToRemove: ['select2d', 'lasso2d', 'autoScale2d'] };

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
    ],
  };
  Plotly.react(drainPlot, data, layout, PLOT_CONFIG);
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
  Plotly.react(clampPlot, data, layout, PLOT_CONFIG);
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

function fillTable(report) {
  const body = /** @type {HTMLTableSectionElement} */ ($('#metrics tbody'));
  body.replaceChildren();
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
      td.colSpan = 11;
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

async function start() {
  buildForm();
  resizer.observe(drainPlot);
  resizer.observe(clampPlot);
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
