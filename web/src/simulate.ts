// Runs of /api/simulate: an explicit run (button, Enter), a live one after a valid edit, and a
// zoomed re-run of the last scenario. A newer request cancels the older one (its fetch is aborted,
// so the server stops its work at its next cycle) and an answer that is not the newest is dropped,
// so the plots never go back to an older state of the form. A live run is sent at the keystroke and
// its answer shown once the form has been still for LIVE_PAUSE_MS: the plots change only after a
// pause, as before, but the server works during the pause instead of after it.

import { $, button } from './dom.js';
import { issuesOf, failureLine, postJson, Unreachable, type RawScenario, type SimulateAnswer } from './api.js';
import { readForm, unreadableField } from './form-values.js';
import { clearFieldErrors } from './form.js';
import { showGeneral, showIssues } from './issues.js';
import { readSi } from './format.js';
import { drawResults, drawDrain } from './results.js';
import { syncViewButtons } from './drain-plot.js';
import { hooks, state, type TimeWindow } from './state.js';

/** The pause after the last keystroke before an edit's answer is shown, ms. */
export const LIVE_PAUSE_MS = 300;
/**
 * The busy counter shows once a run has taken this long: a quick re-plot needs none, and its
 * animation cost the browser CPU time that the server's two workers were using (with no GPU).
 */
const BUSY_SHOWN_AFTER_MS = 400;

const run = {
  sequence: 0,
  abort: null as AbortController | null,
  count: 0,
  liveTimer: 0,
  busyTimer: 0,
  busyShowTimer: 0,
  editedSinceRun: false,
  stale: false,
  statusText: '',
  /** Why the last edit did not re-simulate, shown after the status. */
  waiting: '',
};

const runButton = button('#run');

export interface RunOptions {
  /** A zoomed re-run of the last scenario inside this window. */
  window?: TimeWindow;
  /** Send this scenario instead of the form's (an opened file as it is, so the server sees every key). */
  scenario?: RawScenario;
  /** Started by typing: problems are marked but the focus stays where it is. */
  live?: boolean;
  /** performance.now() before which the answer is held (the end of the live pause). */
  showAfter?: number;
}

/**
 * Plot columns: one per device pixel of the plot. Each column sends its minimum and its maximum,
 * so the line drawn through them covers every pixel a full-resolution trace would; more columns
 * only give plotly more points to draw and the answer more bytes.
 */
function columnsForPlot(): number {
  const width = $('#drain-plot').clientWidth || 900;
  return Math.max(200, Math.min(4000, Math.round(width * (window.devicePixelRatio || 1))));
}

function setBusy(on: boolean, startedAt: number): void {
  document.body.dataset.state = on ? 'busy' : document.body.dataset.state ?? 'idle';
  runButton.disabled = on;
  window.clearInterval(run.busyTimer);
  window.clearTimeout(run.busyShowTimer);
  if (!on) { $('#busy').hidden = true; syncViewButtons(); return; }
  button('#zoom-turnoff').disabled = true;
  button('#zoom-whole').disabled = true;
  const tick = (): void => { $('#busy-time').textContent = `${((performance.now() - startedAt) / 1000).toFixed(1)} s`; };
  run.busyShowTimer = window.setTimeout(() => {
    tick();
    $('#busy').hidden = false;
    // 100 ms keeps the counter visibly alive.
    run.busyTimer = window.setInterval(tick, 100);
  }, BUSY_SHOWN_AFTER_MS);
}

/** Stops a waiting live run and the request in flight (a new scenario is being loaded). */
export function cancelRuns(): void {
  window.clearTimeout(run.liveTimer);
  run.abort?.abort();
  run.abort = null;
  run.sequence += 1;
  setBusy(false, 0);
  if (document.body.dataset.state === 'busy') document.body.dataset.state = 'idle';
}

/** One request; see RunOptions. True when its answer was the newest and was shown. */
export async function simulate(options: RunOptions = {}): Promise<boolean> {
  const { window: window_, live = false } = options;
  if (window_ && !state.last) return false;
  window.clearTimeout(run.liveTimer);
  const scenario = options.scenario ?? (window_ && state.last ? state.last.scenario : readForm());
  // An edit of the design shown (or its zoom) starts each variant from the orbit of the last
  // answer: the server only takes it as a starting guess. A newly loaded design starts afresh.
  const startStates = state.last && (window_ || state.last.label === state.sourceLabel) ? state.last.result.startStates : undefined;
  const body = { scenario, columns: columnsForPlot(), ...(window_ ? { window: window_ } : {}), ...(startStates ? { startStates } : {}) };
  run.abort?.abort();
  const abort = new AbortController();
  run.abort = abort;
  const mine = ++run.sequence;
  const startedAt = performance.now();
  setBusy(true, startedAt);
  // A live run's problems are cleared when its answer is shown: the form is still being typed.
  if (!window_ && !live) { clearFieldErrors(); showGeneral([]); }
  let outcome = 'failed';
  try {
    const answer = await postJson<SimulateAnswer>('/api/simulate', body, abort.signal);
    if (mine !== run.sequence) return false;
    const seconds = ((performance.now() - startedAt) / 1000).toFixed(2);
    const held = (options.showAfter ?? 0) - performance.now();
    if (held > 0) {
      await new Promise((ok) => window.setTimeout(ok, held));
      if (mine !== run.sequence) return false;
    }
    if (live) { clearFieldErrors(); showGeneral([]); run.waiting = ''; }
    const issues = issuesOf(answer);
    if (answer.ok?.ok) {
      outcome = 'ok';
      const data = answer.ok;
      if (window_) drawDrain(data, window_);
      else {
        const sw = scenario.switch as Record<string, unknown> | undefined;
        state.last = { scenario, result: data, label: state.sourceLabel, avalanche: readSi(sw?.avalancheVoltage ?? '', 'V') };
        run.editedSinceRun = false;
        run.waiting = '';
        drawResults(data);
        hooks.simulated(Number(seconds));
      }
      setResultsStale(false);
      setStatus(`${window_ ? 'Turn-off detail' : live ? 'Re-simulated' : 'Simulated'} in ${seconds} s: ${data.report.scenario}`);
    } else if (issues) {
      outcome = 'invalid';
      showIssues(issues, (lines) => showGeneral(lines), !live);
      setStatus(`Not simulated: the design has ${issues.length === 1 ? 'a problem' : `${issues.length} problems`}.`);
    } else {
      showGeneral([failureLine(answer, ' Fewer cycles (solver settings) or a looser tolerance may help.')]);
      setStatus(`Failed after ${seconds} s.`);
    }
    if (outcome !== 'ok' && state.last) setResultsStale(true);
    return true;
  } catch (error) {
    if (abort.signal.aborted || mine !== run.sequence) return false;
    showGeneral([error instanceof Unreachable ? error.message : `the page failed: ${(error as Error).message}`]);
    if (!(error instanceof Unreachable)) console.error(error);
    setStatus('Failed.');
    if (state.last) setResultsStale(true);
    return true;
  } finally {
    if (mine === run.sequence) {
      run.abort = null;
      setBusy(false, 0);
      document.body.dataset.state = outcome === 'ok' ? 'done' : 'error';
      document.body.dataset.lastOutcome = outcome;
      run.count += 1;
      document.body.dataset.runCount = String(run.count);
    }
  }
}

function setStatus(text: string): void {
  run.statusText = text;
  renderStatus();
}

function renderStatus(): void {
  let text = run.statusText;
  if (run.stale) text += ' The plots and the table still show the last successful run.';
  else if (run.waiting) text += ` · ${run.waiting}`;
  $('#status').textContent = text;
}

function setResultsStale(stale: boolean): void {
  run.stale = stale;
  $('.results').classList.toggle('stale', stale);
  renderStatus();
}

/** Once the browser is idle (after the answer's plots are painted). */
function afterIdle(work: () => void): void {
  if (typeof window.requestIdleCallback === 'function') window.requestIdleCallback(() => work(), { timeout: 500 });
  else setTimeout(work, 50);
}

/**
 * The form changed. When every field reads as a number the form is sent at once and its answer
 * shown LIVE_PAUSE_MS after this change, unless another change comes first (which sends anew and
 * drops this one): the server's time overlaps the pause (bias-48v: its 0.2–0.4 s answer used to
 * start only after it). `afterPause` runs (the link follows the form) once an answer is shown, or
 * after the pause when a field does not read yet, so that its work delays neither the request nor
 * the plots.
 */
export function scheduleLiveRun(afterPause: () => void): void {
  window.clearTimeout(run.liveTimer);
  run.editedSinceRun = true;
  const unreadable = unreadableField();
  if (unreadable) {
    // The run in flight is for an older state of the form: it must not be shown now.
    if (run.abort) cancelRuns();
    run.liveTimer = window.setTimeout(() => {
      afterPause();
      run.waiting = `Not re-simulated: “${unreadable}” does not read as a number yet.`;
      renderStatus();
    }, LIVE_PAUSE_MS);
    return;
  }
  if (state.last) { run.waiting = 'The form changed: re-simulating.'; renderStatus(); }
  void simulate({ live: true, showAfter: performance.now() + LIVE_PAUSE_MS }).then((shown) => { if (shown) afterIdle(afterPause); });
}
