// The scope-capture panel: a CSV exported by an oscilloscope is read in this browser (FileReader)
// and sent only to this flyclamp server, which reads it with the same reader as `flyclamp fit`
// and answers it reduced for display with t = 0 at a turn-off edge. The page draws it on the drain
// plot, its edge placed where the simulated drain rises through the same level, so "zoom to a
// turn-off" overlays the two. "Fit to the capture" posts the form's scenario with it to /api/fit;
// "Use these" writes the fitted values into the form (a Coss curve has every point scaled).

import { $, button, el, flashLoaded, input } from './dom.js';
import { postJson, Unreachable, type Answer, type CaptureAnswer, type FitAnswer, type RawScenario, type SimulateAnswer } from './api.js';
import { fmtSi, readSi, siForForm } from './format.js';
import { clearFieldError, curveEditor, inputFor } from './form.js';
import { formNumber, readForm } from './form-values.js';
import { hooks } from './state.js';
import { VARIANTS, US } from './plot-style.js';
import type { PlotSpec } from './plotly.js';

const CAPTURE_COLOUR = '#1b1b1b';
const FITTED_COLOUR = '#c2571a';
const FITTED_ROWS = [
  { path: 'transformer.leakageInductance', label: 'Leakage inductance', unit: 'H' },
  { path: 'switch.drainCapacitance', label: 'Drain–source capacitance', unit: 'F' },
  { path: 'transformer.primaryResistance', label: 'Winding resistance', unit: 'Ω' },
];
const SCALE_KEY = 'switch.drainCapacitanceScale';

const capture = {
  /** The opened file: its name and text (kept here; it goes nowhere but this server). */
  file: null as null | { name: string; text: string },
  /** The server's reading of it: the reduced trace, the midpoint level, the column and the ring. */
  view: null as CaptureAnswer | null,
  /** The last fit and the scenario it started from. */
  fit: null as null | { data: FitAnswer; scenario: RawScenario },
  /** Increases with every request, so a late answer to an older one is dropped. */
  sequence: 0,
  count: 0,
  timer: 0,
};

function columnValue(): string | number | undefined {
  const text = input('#capture-column').value.trim();
  if (text === '') return undefined;
  return /^\d+$/.test(text) ? Number(text) : text;
}

function showError(lines: readonly string[]): void {
  const box = $('#capture-error');
  box.replaceChildren(...lines.map((line) => el('p', { text: line })));
  box.hidden = lines.length === 0;
  input('#capture-column').toggleAttribute('aria-invalid', lines.some((l) => l.startsWith('Column:')));
}

/** The server's answer as lines for the box beside the controls: its field issues, else its error. */
function problemLines(answer: Answer<unknown>): string[] {
  const label: Record<string, string> = { 'body.capture': 'Capture', 'body.column': 'Column' };
  const issues = answer.error?.issues;
  if (issues && issues.length > 0) return issues.map((i) => `${label[i.path] ?? i.path}: ${i.message}`);
  const reason = answer.error?.error ?? `the server answered ${answer.response.status} ${answer.response.statusText}`;
  return [`${reason.charAt(0).toUpperCase()}${reason.slice(1)}`];
}

function setBusy(on: boolean, what: string): void {
  const panel = $('#capture-panel');
  const startedAt = performance.now();
  window.clearInterval(capture.timer);
  $('#capture-busy').hidden = !on;
  button('#capture-fit').disabled = on || !capture.view;
  button('#capture-open').disabled = on;
  if (on) panel.dataset.state = 'busy';
  if (!on) return;
  $('#capture-busy-what').textContent = what;
  const tick = (): void => { $('#capture-busy-time').textContent = `${((performance.now() - startedAt) / 1000).toFixed(1)} s`; };
  tick();
  capture.timer = window.setInterval(tick, 100);
}

function finish(outcome: string): void {
  const panel = $('#capture-panel');
  setBusy(false, '');
  panel.dataset.state = outcome === 'ok' ? 'done' : 'error';
  panel.dataset.lastOutcome = outcome;
  capture.count += 1;
  panel.dataset.runCount = String(capture.count);
}

function failed(error: unknown): void {
  if (!(error instanceof Unreachable)) console.error(error);
  showError([error instanceof Unreachable ? error.message : `The page failed: ${(error as Error).message}`]);
}

/** Sends the opened text to the server to be read and measured; draws it when it can be. */
async function readOnServer(): Promise<void> {
  if (!capture.file) return;
  const mine = ++capture.sequence;
  setBusy(true, 'reading');
  let outcome = 'failed';
  const status = $('#capture-status');
  try {
    const column = columnValue();
    const answer = await postJson<CaptureAnswer>('/api/capture', { capture: capture.file.text, ...(column !== undefined ? { column } : {}) });
    if (mine !== capture.sequence) return;
    if (answer.ok?.ok) {
      outcome = 'ok';
      const data = answer.ok;
      capture.view = data;
      capture.fit = null;
      $('#capture-result').hidden = true;
      showError([]);
      const ring = 'frequency' in data.ring
        ? `ring ${fmtSi(data.ring.frequency, 'Hz', 4)}, decay ${fmtSi(data.ring.decay, '/s', 3)}`
        : `no ring measured: ${data.ring.problem}`;
      status.textContent = `${capture.file.name}: column “${data.columnName}”, ${data.captureSamples.toLocaleString('en')} samples; ${ring}. Drawn on the drain plot with its first turn-off on the simulated one.`;
    } else {
      capture.view = null;
      showError(problemLines(answer));
      status.textContent = `${capture.file.name} could not be read.`;
    }
    hooks.redrawDrain();
  } catch (error) {
    failed(error);
  } finally {
    if (mine === capture.sequence) finish(outcome);
  }
}

async function runFit(): Promise<void> {
  if (!capture.file || !capture.view) return;
  const mine = ++capture.sequence;
  const scenario = readForm();
  setBusy(true, 'fitting');
  const startedAt = performance.now();
  let outcome = 'failed';
  const status = $('#capture-status');
  try {
    const column = columnValue();
    const answer = await postJson<FitAnswer>('/api/fit', { scenario, capture: capture.file.text, ...(column !== undefined ? { column } : {}) });
    if (mine !== capture.sequence) return;
    const seconds = ((performance.now() - startedAt) / 1000).toFixed(1);
    if (answer.ok?.fitted) {
      outcome = 'ok';
      capture.fit = { data: answer.ok, scenario };
      showError([]);
      showFit(answer.ok, scenario);
      hooks.redrawDrain();
      status.textContent = `Fitted in ${seconds} s (${answer.ok.variant} variant; the form’s scenario as the start).`;
    } else {
      showError(problemLines(answer));
      status.textContent = `Not fitted (${seconds} s).`;
    }
  } catch (error) {
    failed(error);
  } finally {
    if (mine === capture.sequence) finish(outcome);
  }
}

/** The fitted values beside the ones the fit started from, with one standard deviation. */
function showFit(data: FitAnswer, scenario: RawScenario): void {
  const curve = Array.isArray((scenario.switch as RawScenario | undefined)?.drainCapacitance);
  $('#capture-fit-table tbody').replaceChildren(...FITTED_ROWS.map((row) => {
    const key = row.path === 'switch.drainCapacitance' && curve ? SCALE_KEY : row.path;
    const value = data.fitted[key]!, sigma = data.uncertainty[key]!;
    const tr = el('tr', { dataset: { path: key } }, el('th', { scope: 'row', text: key === SCALE_KEY ? `${row.label} (factor on every point of the curve)` : row.label }));
    if (key === SCALE_KEY) {
      tr.append(el('td', { text: '× 1 (the curve)' }), el('td', { class: 'fitted', dataset: { value: String(value) }, text: `× ${value.toPrecision(4)}` }), el('td', { text: `± ${sigma.toPrecision(2)}` }));
    } else {
      const formValue = formNumber(row.path);
      tr.append(el('td', { text: formValue === undefined ? '—' : fmtSi(formValue, row.unit, 4) }),
        el('td', { class: 'fitted', dataset: { value: String(value) }, text: fmtSi(value, row.unit, 4) }),
        el('td', { text: `± ${fmtSi(sigma, row.unit, 2)}` }));
    }
    return tr;
  }));
  $('#capture-fit-notes').textContent = [
    `Ring ${fmtSi(data.ringFrequency, 'Hz', 4)}, decay α = ${fmtSi(data.ringDecay, '/s', 3)} (τ = ${fmtSi(1 / data.ringDecay, 's', 3)}).`,
    `Residual ${fmtSi(data.residual, 'V', 3)} rms over ${data.captureSamples.toLocaleString('en')} samples read; a residual well above the scope’s noise says the model and the board disagree somewhere.`,
  ].join(' ');
  const note = $('#capture-use-note');
  note.textContent = 'Writes the fitted values into the form; the page then simulates the fitted model.';
  note.classList.remove('done');
  $('#capture-result').hidden = false;
}

function setField(path: string, text: string): void {
  const field = inputFor(path)!;
  field.value = text;
  clearFieldError(path);
  flashLoaded(field.closest<HTMLElement>('.field'));
}

function useFitted(): void {
  if (!capture.fit) return;
  const { data, scenario } = capture.fit;
  const f = data.fitted;
  setField('transformer.leakageInductance', siForForm(f['transformer.leakageInductance']!));
  setField('transformer.primaryResistance', siForForm(f['transformer.primaryResistance']!));
  const sent = (scenario.switch as RawScenario | undefined)?.drainCapacitance;
  const scale = f[SCALE_KEY];
  if (Array.isArray(sent) && scale !== undefined) {
    // The curve the fit started from, every point's capacitance times the fitted factor.
    curveEditor().fill(sent.map(([v, c]: [unknown, unknown]) => [String(v), siForForm((readSi(String(c), 'F') ?? NaN) * scale)]));
  } else if (f['switch.drainCapacitance'] !== undefined) {
    curveEditor().fill(siForForm(f['switch.drainCapacitance']));
  }
  clearFieldError('switch.drainCapacitance');
  flashLoaded(curveEditor().element);
  hooks.refreshStudyFields();
  hooks.edited();
  const note = $('#capture-use-note');
  note.textContent = 'In the form; the page simulates the fitted model.';
  note.classList.add('done');
}

/**
 * The capture as a trace of the drain plot, its t = 0 placed where the first shown simulated drain
 * (bare, else the first variant drawn) rises through the capture's midpoint after its first
 * turn-off; none when no capture is open.
 */
export function captureTraces(simulated: SimulateAnswer): PlotSpec[] {
  const view = capture.view;
  if (!view) return [];
  const variant = VARIANTS.find((v) => (simulated.traces[v]?.turnOffSeconds.length ?? 0) > 0);
  if (!variant) return [];
  const { drainVoltage: d, turnOffSeconds } = simulated.traces[variant]!;
  const first = turnOffSeconds[0]!;
  let at = first;
  for (let k = 1; k < d.values.length; k++) {
    if (d.timeSeconds[k]! < first) continue;
    const v0 = d.values[k - 1]!, v1 = d.values[k]!;
    if (v0 < view.midpointVolts && v1 >= view.midpointVolts) {
      at = d.timeSeconds[k - 1]! + ((view.midpointVolts - v0) / (v1 - v0)) * (d.timeSeconds[k]! - d.timeSeconds[k - 1]!);
      break;
    }
  }
  const traces: PlotSpec[] = [{
    type: 'scatter', mode: 'lines', name: `scope capture (${view.columnName})`, meta: 'capture',
    x: view.capture.timeSeconds.map((t) => (t + at) * US), y: view.capture.values,
    line: { color: CAPTURE_COLOUR, width: 1.2 }, opacity: 0.85,
    hovertemplate: '%{y:.1f} V at %{x:.3f} µs<extra>capture</extra>',
  }];
  // The fitted model on the capture's time axis (with the capture's offset), dotted over it.
  const fitted = capture.fit?.data.simulatedDrain;
  if (fitted && capture.fit) {
    traces.push({
      type: 'scatter', mode: 'lines', name: `fitted model (${capture.fit.data.variant})`, meta: 'capture:fitted',
      x: fitted.timeSeconds.map((t) => (t + at) * US), y: fitted.values,
      line: { color: FITTED_COLOUR, width: 1.4, dash: 'dot' }, opacity: 1,
      hovertemplate: '%{y:.1f} V at %{x:.3f} µs<extra>fitted</extra>',
    });
  }
  return traces;
}

export function initCapturePanel(): void {
  const fileInput = input('#capture-input');
  button('#capture-open').addEventListener('click', () => fileInput.click());
  fileInput.addEventListener('change', () => {
    const file = fileInput.files?.[0];
    fileInput.value = '';
    if (!file) return;
    const reader = new FileReader();
    reader.addEventListener('load', () => {
      capture.file = { name: file.name, text: String(reader.result ?? '') };
      $('#capture-name').textContent = `Open: ${file.name}.`;
      void readOnServer();
    });
    reader.addEventListener('error', () => showError([`Capture: the browser could not read ${file.name}`]));
    reader.readAsText(file);
  });
  // A different column is a different trace: read again.
  input('#capture-column').addEventListener('change', () => { if (capture.file) void readOnServer(); });
  button('#capture-fit').addEventListener('click', () => { void runFit(); });
  button('#capture-use').addEventListener('click', useFitted);
}
