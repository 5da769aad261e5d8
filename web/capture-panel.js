// The scope-capture panel: a CSV exported by an oscilloscope is read in this browser (FileReader)
// and sent only to this flyclamp server, which reads it with the same reader as `flyclamp fit`
// (one parser, one set of messages) and answers it reduced for display with t = 0 at a turn-off
// edge. The page draws it on the drain plot beside the simulated variants, its edge placed where the
// simulated drain rises through the same level, so "zoom to a turn-off" overlays the two. "Fit to
// the capture" posts the form's scenario with it to /api/fit; "Use these" writes the fitted values
// into the form (a Coss curve has every point scaled).

const US = 1e6;
const CAPTURE_COLOUR = '#1b1b1b';
const FITTED_COLOUR = '#c2571a';

const FITTED_ROWS = [
  { path: 'transformer.leakageInductance', label: 'Leakage inductance', unit: 'H' },
  { path: 'switch.drainCapacitance', label: 'Drain–source capacitance', unit: 'F' },
  { path: 'transformer.primaryResistance', label: 'Winding resistance', unit: 'Ω' },
];
const SCALE_KEY = 'switch.drainCapacitanceScale';

/**
 * `page` is what the panel needs of the page: `readForm()`, `formNumber(path)`, `fmtSi(value, unit, digits)`,
 * `siForForm(value)`, `parseSi(text, units)`, `setField(path, text)`, `setDrainCapacitance(raw)`
 * (a constant or a list of [V, C] points), `redrawDrain()`, `postJson(url, body)`.
 */
export function createCapturePanel(page) {
  const $ = (id) => /** @type {HTMLElement} */ (document.getElementById(id));
  const panel = $('capture-panel');
  const openButton = /** @type {HTMLButtonElement} */ ($('capture-open'));
  const fileInput = /** @type {HTMLInputElement} */ ($('capture-input'));
  const columnInput = /** @type {HTMLInputElement} */ ($('capture-column'));
  const fitButton = /** @type {HTMLButtonElement} */ ($('capture-fit'));
  const useButton = /** @type {HTMLButtonElement} */ ($('capture-use'));
  const errorBox = $('capture-error');
  const status = $('capture-status');
  const busy = $('capture-busy');
  const busyTime = $('capture-busy-time');
  const result = $('capture-result');

  const state = {
    /** The opened file: its name and text (kept here; it goes nowhere but this server). */
    file: /** @type {null | { name: string, text: string }} */ (null),
    /** The server's reading of it: the reduced trace, the midpoint level, the column and the ring. */
    view: /** @type {any} */ (null),
    /** The last fit and the scenario it started from. */
    fit: /** @type {null | { data: any, scenario: any }} */ (null),
    /** Increases with every request, so a late answer to an older one is dropped. */
    sequence: 0,
    count: 0,
  };

  function columnValue() {
    const text = columnInput.value.trim();
    if (text === '') return undefined;
    return /^\d+$/.test(text) ? Number(text) : text;
  }

  function showError(lines) {
    errorBox.replaceChildren(...lines.map((line) => Object.assign(document.createElement('p'), { textContent: line })));
    errorBox.hidden = lines.length === 0;
    columnInput.toggleAttribute('aria-invalid', lines.some((l) => l.startsWith('Column:')));
  }

  /** The server's answer as lines for the box beside the controls: its field issues, else its error. */
  function problemLines(response, data) {
    const label = { 'body.capture': 'Capture', 'body.column': 'Column' };
    if (data && Array.isArray(data.issues) && data.issues.length > 0) {
      return data.issues.map((i) => `${label[i.path] ?? i.path}: ${i.message}`);
    }
    const reason = data && typeof data.error === 'string' ? data.error : `the server answered ${response.status} ${response.statusText}`;
    return [`${reason.charAt(0).toUpperCase()}${reason.slice(1)}`];
  }

  function setBusy(on, what) {
    const startedAt = performance.now();
    window.clearInterval(setBusy.timer);
    busy.hidden = !on;
    fitButton.disabled = on || !state.view;
    openButton.disabled = on;
    panel.dataset.state = on ? 'busy' : panel.dataset.state;
    if (!on) return;
    $('capture-busy-what').textContent = what;
    const tick = () => { busyTime.textContent = `${((performance.now() - startedAt) / 1000).toFixed(1)} s`; };
    tick();
    setBusy.timer = window.setInterval(tick, 100);
  }
  setBusy.timer = 0;

  function finish(outcome) {
    setBusy(false, '');
    panel.dataset.state = outcome === 'ok' ? 'done' : 'error';
    panel.dataset.lastOutcome = outcome;
    state.count += 1;
    panel.dataset.runCount = String(state.count);
  }

  /** Sends the opened text to the server to be read and measured; draws it when it can be. */
  async function readOnServer() {
    if (!state.file) return;
    const mine = ++state.sequence;
    setBusy(true, 'reading');
    let outcome = 'failed';
    try {
      const column = columnValue();
      const { response, data } = await page.postJson('/api/capture', { capture: state.file.text, ...(column !== undefined ? { column } : {}) });
      if (mine !== state.sequence) return;
      if (response.ok && data && data.ok) {
        outcome = 'ok';
        state.view = data;
        state.fit = null;
        result.hidden = true;
        showError([]);
        const ring = data.ring.frequency
          ? `ring ${page.fmtSi(data.ring.frequency, 'Hz', 4)}, decay ${page.fmtSi(data.ring.decay, '/s', 3)}`
          : `no ring measured: ${data.ring.problem}`;
        status.textContent = `${state.file.name}: column “${data.columnName}”, ${data.captureSamples.toLocaleString('en')} samples; ${ring}. Drawn on the drain plot with its first turn-off on the simulated one.`;
      } else {
        state.view = null;
        showError(problemLines(response, data));
        status.textContent = `${state.file.name} could not be read.`;
      }
      page.redrawDrain();
    } catch (error) {
      showError([/** @type {Error} */ (error).message]);
    } finally {
      if (mine === state.sequence) finish(outcome);
    }
  }

  async function runFit() {
    if (!state.file || !state.view) return;
    const mine = ++state.sequence;
    const scenario = page.readForm();
    setBusy(true, 'fitting');
    const startedAt = performance.now();
    let outcome = 'failed';
    try {
      const column = columnValue();
      const { response, data } = await page.postJson('/api/fit', { scenario, capture: state.file.text, ...(column !== undefined ? { column } : {}) });
      if (mine !== state.sequence) return;
      const seconds = ((performance.now() - startedAt) / 1000).toFixed(1);
      if (response.ok && data && data.fitted) {
        outcome = 'ok';
        state.fit = { data, scenario };
        showError([]);
        showFit(data, scenario);
        page.redrawDrain();
        status.textContent = `Fitted in ${seconds} s (${data.variant} variant; the form’s scenario as the start).`;
      } else {
        showError(problemLines(response, data));
        status.textContent = `Not fitted (${seconds} s).`;
      }
    } catch (error) {
      showError([/** @type {Error} */ (error).message]);
    } finally {
      if (mine === state.sequence) finish(outcome);
    }
  }

  /** The fitted values beside the ones the fit started from, with one standard deviation. */
  function showFit(data, scenario) {
    const body = /** @type {HTMLTableSectionElement} */ ($('capture-fit-table').querySelector('tbody'));
    body.replaceChildren();
    const curve = Array.isArray(scenario.switch?.drainCapacitance);
    for (const row of FITTED_ROWS) {
      const key = row.path === 'switch.drainCapacitance' && curve ? SCALE_KEY : row.path;
      const value = data.fitted[key], sigma = data.uncertainty[key];
      const tr = document.createElement('tr');
      tr.dataset.path = key;
      const cell = (text, cls) => { const td = document.createElement('td'); td.textContent = text; if (cls) td.className = cls; tr.append(td); return td; };
      const th = document.createElement('th');
      th.scope = 'row';
      th.textContent = key === SCALE_KEY ? `${row.label} (factor on every point of the curve)` : row.label;
      tr.append(th);
      if (key === SCALE_KEY) {
        cell('× 1 (the curve)');
        cell(`× ${value.toPrecision(4)}`, 'fitted').dataset.value = String(value);
        cell(`± ${sigma.toPrecision(2)}`);
      } else {
        const formValue = page.formNumber(row.path);
        cell(formValue === undefined ? '—' : page.fmtSi(formValue, row.unit, 4));
        cell(page.fmtSi(value, row.unit, 4), 'fitted').dataset.value = String(value);
        cell(`± ${page.fmtSi(sigma, row.unit, 2)}`);
      }
      body.append(tr);
    }
    $('capture-fit-notes').textContent = [
      `Ring ${page.fmtSi(data.ringFrequency, 'Hz', 4)}, decay α = ${page.fmtSi(data.ringDecay, '/s', 3)} (τ = ${page.fmtSi(1 / data.ringDecay, 's', 3)}).`,
      `Residual ${page.fmtSi(data.residual, 'V', 3)} rms over ${data.captureSamples.toLocaleString('en')} samples read; a residual well above the scope’s noise says the model and the board disagree somewhere.`,
    ].join(' ');
    $('capture-use-note').textContent = 'Writes the fitted values into the form; Simulate then runs the fitted model.';
    $('capture-use-note').classList.remove('done');
    result.hidden = false;
  }

  function useFitted() {
    if (!state.fit) return;
    const { data, scenario } = state.fit;
    const f = data.fitted;
    page.setField('transformer.leakageInductance', page.siForForm(f['transformer.leakageInductance']));
    page.setField('transformer.primaryResistance', page.siForForm(f['transformer.primaryResistance']));
    const sent = scenario.switch?.drainCapacitance;
    if (Array.isArray(sent) && f[SCALE_KEY] !== undefined) {
      // The curve the fit started from, every point's capacitance times the fitted factor.
      page.setDrainCapacitance(sent.map(([v, c]) => [String(v), page.siForForm(page.parseSi(String(c), ['F']) * f[SCALE_KEY])]));
    } else if (f['switch.drainCapacitance'] !== undefined) {
      page.setDrainCapacitance(page.siForForm(f['switch.drainCapacitance']));
    }
    $('capture-use-note').textContent = 'In the form. Simulate (or Enter in the form) to run the fitted model.';
    $('capture-use-note').classList.add('done');
  }

  openButton.addEventListener('click', () => fileInput.click());
  fileInput.addEventListener('change', () => {
    const file = fileInput.files?.[0];
    fileInput.value = '';
    if (!file) return;
    const reader = new FileReader();
    reader.addEventListener('load', () => {
      state.file = { name: file.name, text: String(reader.result ?? '') };
      $('capture-name').textContent = `Open: ${file.name}.`;
      void readOnServer();
    });
    reader.addEventListener('error', () => showError([`Capture: the browser could not read ${file.name}`]));
    reader.readAsText(file);
  });
  // A different column is a different trace: read again.
  columnInput.addEventListener('change', () => { if (state.file) void readOnServer(); });
  fitButton.addEventListener('click', () => { void runFit(); });
  useButton.addEventListener('click', useFitted);

  return {
    /**
     * The capture as a trace of the drain plot, its t = 0 placed where the first shown simulated
     * drain (bare, else the first variant drawn) rises through the capture's midpoint after its first
     * turn-off; none when no capture is open or nothing is simulated.
     */
    drainTraces(simulated) {
      if (!state.view || !simulated) return [];
      const variant = ['bare', 'clamp', 'damped'].find((v) => simulated.traces[v]?.turnOffSeconds?.length > 0);
      if (!variant) return [];
      const { drainVoltage: d, turnOffSeconds } = simulated.traces[variant];
      let at = turnOffSeconds[0];
      for (let k = 1; k < d.values.length; k++) {
        if (d.timeSeconds[k] < turnOffSeconds[0]) continue;
        if (d.values[k - 1] < state.view.midpointVolts && d.values[k] >= state.view.midpointVolts) {
          at = d.timeSeconds[k - 1] + ((state.view.midpointVolts - d.values[k - 1]) / (d.values[k] - d.values[k - 1])) * (d.timeSeconds[k] - d.timeSeconds[k - 1]);
          break;
        }
      }
      const traces = [{
        type: 'scatter', mode: 'lines', name: `scope capture (${state.view.columnName})`, meta: 'capture',
        x: state.view.capture.timeSeconds.map((t) => (t + at) * US),
        y: state.view.capture.values,
        line: { color: CAPTURE_COLOUR, width: 1.2 },
        opacity: 0.85,
        hovertemplate: `%{y:.1f} V at %{x:.3f} µs<extra>capture</extra>`,
      }];
      // The fitted model on the capture's time axis (with the capture's offset), dotted over it.
      const fitted = state.fit?.data.simulatedDrain;
      if (fitted) {
        traces.push({
          type: 'scatter', mode: 'lines', name: `fitted model (${state.fit.data.variant})`, meta: 'capture:fitted',
          x: fitted.timeSeconds.map((t) => (t + at) * US),
          y: fitted.values,
          line: { color: FITTED_COLOUR, width: 1.4, dash: 'dot' },
          opacity: 1,
          hovertemplate: `%{y:.1f} V at %{x:.3f} µs<extra>fitted</extra>`,
        });
      }
      return traces;
    },
  };
}
