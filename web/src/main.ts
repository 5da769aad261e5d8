// The flyclamp page: a form over the scenario file, runs against /api/simulate (by themselves a
// short pause after a valid edit), the drain and clamp plots and the metrics table; below them the
// capture, design and study panels. The edited scenario lives in the address's fragment.

import { $, button, input } from './dom.js';
import { getJson, Unreachable, type ScenarioListAnswer } from './api.js';
import { buildForm, curveEditor, form } from './form.js';
import { showGeneral } from './issues.js';
import { Plotly, type PlotElement } from './plotly.js';
import { drawDrain, initDrainPlot, redrawDrain, turnOffWindow } from './drain-plot.js';
import { scheduleLiveRun, simulate } from './simulate.js';
import { loadBundled, loadFile, openSharedLink, saveFile, updateShareLink } from './scenario-source.js';
import { designFormChanged, initDesignPanel } from './design-panel.js';
import { initStudyPanel, noteSimulationTime, refreshStudyFields, updateStudyPreview } from './study-panel.js';
import { captureTraces, initCapturePanel } from './capture-panel.js';
import { hooks, state } from './state.js';

hooks.edited = () => {
  scheduleLiveRun(() => { void updateShareLink(); });
  updateStudyPreview();
};
hooks.refreshStudyFields = refreshStudyFields;
hooks.drainExtras = captureTraces;
hooks.redrawDrain = redrawDrain;
hooks.simulated = (seconds) => {
  // A clean run answers every complaint the design panel had about the form.
  designFormChanged();
  noteSimulationTime(seconds);
};

function wire(): void {
  form.addEventListener('submit', (event) => {
    event.preventDefault();
    void simulate();
  });
  form.addEventListener('input', (event) => designFormChanged((event.target as HTMLElement).dataset.path));
  const select = $<HTMLSelectElement>('#scenario-select');
  select.addEventListener('change', () => {
    if (select.value) loadBundled(select.value).catch((error: Error) => showGeneral([error.message]));
  });
  const fileInput = input('#file-input');
  button('#open-file').addEventListener('click', () => fileInput.click());
  fileInput.addEventListener('change', () => {
    const file = fileInput.files?.[0];
    fileInput.value = '';
    if (file) loadFile(file).catch((error: Error) => showGeneral([`could not read ${file.name}: ${error.message}`]));
  });
  button('#save-file').addEventListener('click', saveFile);
  button('#zoom-turnoff').addEventListener('click', () => { if (state.last) void simulate({ window: turnOffWindow(state.last.result) }); });
  button('#zoom-whole').addEventListener('click', () => { if (state.last) drawDrain(state.last.result, null); });
}

// Plotly's own `responsive` follows only the window; the columns also change width when the
// layout reflows (narrow screens, the table growing), so each plot follows its own box.
const resizer = new ResizeObserver((entries) => {
  for (const entry of entries) {
    const plot = entry.target as PlotElement;
    if (plot.data && plot.offsetParent !== null) Plotly?.Plots.resize(plot);
  }
});

async function start(): Promise<void> {
  buildForm();
  initStudyPanel();
  initDesignPanel();
  initCapturePanel();
  initDrainPlot();
  wire();
  for (const id of ['#drain-plot', '#clamp-plot', '#design-plot', '#sweep-plot']) resizer.observe($(id));
  resizer.observe(curveEditor().plot);
  if (!Plotly) {
    showGeneral(['The plotting library did not load (/vendor/plotly.min.js); reload the page.']);
    return;
  }
  let list: ScenarioListAnswer['scenarios'] = [];
  try {
    list = (await getJson<ScenarioListAnswer>('/api/scenarios')).ok?.scenarios ?? [];
  } catch (error) {
    showGeneral([error instanceof Unreachable ? 'could not reach the flyclamp server to list the bundled scenarios' : (error as Error).message]);
  }
  const select = $<HTMLSelectElement>('#scenario-select');
  for (const { id, name } of list) select.append(new Option(name, id));
  document.body.dataset.state = 'idle';
  if (await openSharedLink(list)) return;
  const wanted = new URL(window.location.href).searchParams.get('scenario');
  const fallback = list.some((s) => s.id === 'bias-48v') ? 'bias-48v' : list[0]?.id;
  const id = wanted && list.some((s) => s.id === wanted) ? wanted : fallback;
  if (!id) return;
  await loadBundled(id);
  if (wanted && wanted !== id) showGeneral([`There is no bundled scenario "${wanted}"; showing ${id} instead.`], 'note');
}

void start();
