// The study panel: a range over one field, or Monte Carlo within tolerances, run by /api/sweep on
// the form's scenario. Its inputs, the preview of the points, the request and its errors.

import { $, $all, el, input } from './dom.js';
import { failureLine, issuesOf, postJson, Unreachable, type ApiIssue, type SweepAnswer } from './api.js';
import { fmtNumber, readSi } from './format.js';
import { GROUPS, isField } from './fields.js';
import { blockOn, clearFieldErrors, controlKind, curveEditor } from './form.js';
import { fmtField, formNumber, readForm, unitOf } from './form-values.js';
import { showIssues, showMessages } from './issues.js';
import { panelRunner, type Outcome, type PanelRunner } from './panel-common.js';
import { drawStudy } from './study-results.js';
import { state, type StudyRequest } from './state.js';

const STUDY_GROUPS: Readonly<Record<string, string>> = { supply: 'Supply', transformer: 'Transformer', output: 'Output', switch: 'Switch', clamp: 'RCD clamp', damper: 'RC damper' };
const DEFAULT_STUDY_FIELD = 'transformer.leakageInductance';
const MAX_STUDY_POINTS = 200;

let runner: PanelRunner | null = null;
/** Seconds one simulation of the form took (all its variants): a study point costs about that. */
let secondsPerPoint: number | undefined;

export function noteSimulationTime(seconds: number): void { secondsPerPoint = seconds; updateStudyPreview(); }

interface StudyField { group: string; path: string; label: string; unit: string }

/** The numeric fields a study can vary: those of the blocks the form sends, for its control mode. */
export function studyFields(): StudyField[] {
  const kind = controlKind();
  const out: StudyField[] = [];
  for (const group of GROUPS) {
    const groupName = STUDY_GROUPS[group.key];
    if (!groupName || (group.optionalBlock && !blockOn(group.key))) continue;
    for (const f of group.fields.filter(isField)) {
      if (f.choices || (f.when && f.when !== kind)) continue;
      // A curve is varied as a whole (the server scales every point); the value read is C at 0 V.
      const label = f.curve && curveEditor().mode() === 'curve' ? `${f.label}, whole curve (value at 0 V)` : f.label;
      out.push({ group: groupName, path: f.path, label, unit: f.unit });
    }
  }
  return out;
}

function fillFieldSelect(select: HTMLSelectElement, fields: readonly StudyField[], fallback: string): void {
  const wanted = select.value || fallback;
  select.replaceChildren();
  const groups = new Map<string, HTMLOptGroupElement>();
  for (const f of fields) {
    let og = groups.get(f.group);
    if (!og) { og = el('optgroup', { label: f.group }); groups.set(f.group, og); select.append(og); }
    og.append(el('option', { value: f.path, title: f.path, text: `${f.label}${f.unit && f.unit !== '0–1' ? ` (${f.unit})` : ''}` }));
  }
  select.value = fields.some((f) => f.path === wanted) ? wanted : fields.some((f) => f.path === fallback) ? fallback : (fields[0]?.path ?? '');
}

let ready = false;

export function refreshStudyFields(): void {
  if (!ready) return;
  const fields = studyFields();
  fillFieldSelect($<HTMLSelectElement>('#sweep-field'), fields, DEFAULT_STUDY_FIELD);
  for (const select of $all<HTMLSelectElement>('#mc-tolerances .tol-field')) fillFieldSelect(select, fields, DEFAULT_STUDY_FIELD);
  updateStudyPreview();
}

function studyKind(): 'grid' | 'monte-carlo' { return input('#study-mc').checked ? 'monte-carlo' : 'grid'; }

const PERCENT = /^([+-]?\d+(?:\.\d+)?|[+-]?\.\d+)%$/;

/** One end of a range as the server will read it: a percentage of `nominal`, or an SI value. */
function resolveEnd(text: string, nominal: number | undefined, unit: string): number | undefined {
  const t = text.trim();
  const pct = PERCENT.exec(t);
  if (pct) return nominal === undefined ? undefined : nominal * (1 + Number(pct[1]) / 100);
  return readSi(t, unit);
}


function addToleranceLine(path = DEFAULT_STUDY_FIELD, percent = '20', distribution = 'uniform'): void {
  const holder = $('#mc-tolerances');
  const select = el('select', { class: 'tol-field', 'aria-label': 'Field with a tolerance' });
  const x = el('input', { type: 'text', class: 'tol-x', value: percent, spellcheck: 'false', 'aria-label': 'Tolerance, ± percent' });
  const dist = el('select', { class: 'tol-dist', 'aria-label': 'Distribution' },
    el('option', { value: 'uniform', text: 'uniform' }), el('option', { value: 'normal', text: 'normal, ±X % = 3σ' }));
  dist.value = distribution;
  const remove = el('button', { type: 'button', class: 'quiet tol-remove', title: 'Remove this tolerance', 'aria-label': 'Remove this tolerance', text: '×' });
  const error = el('div', { class: 'field-error', hidden: '' });
  const line = el('div', { class: 'tol-line', dataset: { line: String(holder.children.length) } },
    el('div', { class: 'tol-inputs' }, select, el('span', { class: 'pm', text: '±' }), x, el('span', { class: 'unit', text: '%' }), dist, remove), error);
  remove.addEventListener('click', () => { line.remove(); syncToleranceButtons(); });
  holder.append(line);
  fillFieldSelect(select, studyFields(), path);
  select.value = path;
  syncToleranceButtons();
}

function syncToleranceButtons(): void {
  const lines = $all('#mc-tolerances .tol-line');
  for (const b of $all<HTMLButtonElement>('#mc-tolerances .tol-remove')) b.disabled = lines.length <= 1;
}

function toleranceSpec(line: HTMLElement): { x: string; text: string } {
  const path = $<HTMLSelectElement>('.tol-field', line).value;
  const x = $<HTMLInputElement>('.tol-x', line).value.trim().replace(/^(?:±|\+-|\+\/-)\s*/, '').replace(/\s*%$/, '');
  return { x, text: `${path}=±${x}%:${$<HTMLSelectElement>('.tol-dist', line).value}` };
}

function syncStudyMode(): void {
  const mc = studyKind() === 'monte-carlo';
  $('#study-grid-inputs').hidden = mc;
  $('#study-mc-inputs').hidden = !mc;
  updateStudyPreview();
}

export function updateStudyPreview(): void {
  if (!ready) return;
  const preview = $('#sweep-preview');
  preview.classList.remove('warn');
  preview.textContent = '';
  const path = $<HTMLSelectElement>('#sweep-field').value;
  if (!path) { preview.textContent = 'No numeric field to vary in this scenario.'; return; }
  const nominal = formNumber(path);
  const unit = unitOf(path);
  const from = resolveEnd(input('#sweep-from').value, nominal, unit);
  const to = resolveEnd(input('#sweep-to').value, nominal, unit);
  const stepsText = input('#sweep-steps').value.trim();
  const steps = /^\d+$/.test(stepsText) ? Number(stepsText) : NaN;
  if (from === undefined || to === undefined || !Number.isFinite(steps)) {
    preview.textContent = nominal === undefined ? '' : `value in the form: ${fmtField(path, nominal)}`;
    return;
  }
  const spacing = steps > 1 ? Math.abs(to - from) / (steps - 1) : 0;
  let text = `${fmtField(path, from)} to ${fmtField(path, to)}, ${steps} point${steps === 1 ? '' : 's'}${steps > 1 ? ` ${fmtField(path, spacing)} apart` : ''}`;
  if (nominal !== undefined) text += ` · value in the form ${fmtField(path, nominal)}`;
  if (secondsPerPoint !== undefined) text += ` · about ${fmtNumber(secondsPerPoint, 2)} s of a processor core per point (the last simulation of the form)`;
  const cautions: string[] = [];
  if (nominal !== undefined && nominal > 0) {
    for (const [which, v] of [['From', from], ['To', to]] as const) {
      if (!(v > 0)) cautions.push(`${which} is not above zero: those points will fail`);
      else if (v / nominal > 10 || v / nominal < 0.1) cautions.push(`${which} is ${fmtNumber(v / nominal, 3)} × the value in the form: is a % sign or a prefix missing?`);
    }
  }
  if (steps > MAX_STUDY_POINTS) cautions.push(`at most ${MAX_STUDY_POINTS} points`);
  if (cautions.length > 0) { text += ` — ${cautions.join('; ')}`; preview.classList.add('warn'); }
  preview.textContent = text;
}

function clearStudyErrors(): void {
  for (const box of $all('#sweep-panel .field-error')) { box.replaceChildren(); box.hidden = true; }
  for (const marked of $all('#sweep-panel [aria-invalid]')) marked.removeAttribute('aria-invalid');
  showMessages($('#sweep-error'), []);
}

type Problem = [HTMLElement, string, Array<HTMLElement | null>];

function showStudyError(box: HTMLElement, message: string, inputs: Array<HTMLElement | null> = []): void {
  box.append(el('p', { text: message }));
  box.hidden = false;
  for (const i of inputs) i?.setAttribute('aria-invalid', 'true');
}

/** The request body from the panel, or the problems the page can see before asking. */
function buildStudyRequest(scenario: Record<string, unknown>): StudyRequest & { problems: Problem[] } {
  const problems: Problem[] = [];
  if (studyKind() === 'grid') {
    const field = $<HTMLSelectElement>('#sweep-field'), from = input('#sweep-from'), to = input('#sweep-to'), steps = input('#sweep-steps');
    const box = $('#sweep-vary-error');
    if (!field.value) problems.push([box, 'expected a field to vary; this scenario has none', [field]]);
    for (const [name, i] of [['From', from], ['To', to]] as const) {
      const text = i.value.trim();
      if (text === '') problems.push([box, `${name}: expected a percentage of the value in the form (e.g. -20%) or a value with an SI prefix (e.g. 20u)`, [i]]);
      else if (/\.\.|[:=\s]/.test(text.replace(/\s+(?=[a-zA-Zµμ%Ω])/g, ''))) problems.push([box, `${name}: expected one value, found "${text}" (From and To go in their own boxes)`, [i]]);
    }
    const n = steps.value.trim();
    if (!/^\d+$/.test(n) || Number(n) < 1 || Number(n) > MAX_STUDY_POINTS) problems.push([box, `Steps: expected a whole number of points from 2 to ${MAX_STUDY_POINTS}, found "${n}"`, [steps]]);
    const spec = `${field.value}=${from.value.trim()}..${to.value.trim()}:${n}`;
    return { problems, body: { scenario, vary: [spec] }, label: spec, count: Number(n), path: field.value };
  }
  const samples = input('#mc-samples'), seed = input('#mc-seed');
  const asNumber = (text: string): number | string => (/^[+-]?\d+$/.test(text.trim()) ? Number(text.trim()) : text.trim());
  const lines = $all('#mc-tolerances .tol-line');
  const specs = lines.map((line) => {
    const s = toleranceSpec(line);
    if (s.x === '') problems.push([$('.field-error', line), 'expected the tolerance in percent, e.g. 20 for ±20 %', [line.querySelector('.tol-x')]]);
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
function placeStudyIssue(issue: ApiIssue): boolean {
  const message = issue.message;
  if (issue.path === 'body.vary') {
    const which = /expected FROM/.test(message) ? '#sweep-from' : /expected TO/.test(message) ? '#sweep-to'
      : /STEPS|at most \d+ points/.test(message) ? '#sweep-steps' : /no field/.test(message) ? '#sweep-field' : '';
    showStudyError($('#sweep-vary-error'), message, which ? [$(which)] : []);
    return true;
  }
  if (issue.path === 'body.samples') { showStudyError($('#mc-samples-error'), message, [$('#mc-samples')]); return true; }
  if (issue.path === 'body.seed') { showStudyError($('#mc-seed-error'), message, [$('#mc-seed')]); return true; }
  if (issue.path === 'body.tolerance') {
    const line = $all('#mc-tolerances .tol-line').find((l) => message.includes(`"${toleranceSpec(l).text}"`));
    if (line) showStudyError($('.field-error', line), message, [line.querySelector('.tol-x'), line.querySelector('.tol-field')]);
    else showStudyError($('#mc-tolerance-error'), message);
    return true;
  }
  return false;
}

async function runStudy(): Promise<void> {
  if (!runner || runner.busy) return;
  clearStudyErrors();
  const scenario = readForm();
  const { problems, ...request } = buildStudyRequest(scenario);
  const status = $('#sweep-status');
  if (problems.length > 0) {
    for (const [box, message, inputs] of problems) showStudyError(box, message, inputs);
    status.textContent = 'Not run: see the marked input.';
    runner.panel.dataset.lastOutcome = 'invalid';
    $<HTMLElement>('#sweep-panel [aria-invalid="true"]')?.focus();
    return;
  }
  // The nominal values the percentages referred to, for labelling the answer.
  const nominals: Record<string, number | undefined> = {};
  for (const f of studyFields()) nominals[f.path] = formNumber(f.path);
  $('#sweep-busy-points').textContent = request.count > 0 ? `${request.count} point${request.count === 1 ? '' : 's'}` : '';
  status.textContent = '';
  const run = runner.start();
  const area = $('#sweep-error');
  clearFieldErrors();
  let outcome: Outcome = 'failed';
  try {
    const answer = await postJson<SweepAnswer>('/api/sweep', request.body);
    const seconds = run.seconds();
    const issues = issuesOf(answer);
    if (answer.ok && Array.isArray(answer.ok.points)) {
      const data = answer.ok;
      state.study = { request, data, nominals, seconds };
      $('#sweep-result').hidden = false;
      drawStudy(state.study);
      runner.panel.classList.remove('stale');
      outcome = 'ok';
      const failed = data.points.filter((p) => p.failure).length;
      status.textContent = `${data.points.length} point${data.points.length === 1 ? '' : 's'} in ${seconds} s${failed ? `, ${failed} without a result` : ''}${data.interrupted ? ` (${data.interrupted})` : ''}.`;
    } else if (issues) {
      outcome = 'invalid';
      const scenarioIssues = issues.filter((i) => !placeStudyIssue(i));
      if (scenarioIssues.length > 0) showIssues(scenarioIssues, (lines) => showMessages(area, lines), true);
      else $<HTMLElement>('#sweep-panel [aria-invalid="true"]')?.focus();
      status.textContent = scenarioIssues.length > 0 ? 'Not run: the scenario has a problem (marked in the form).' : 'Not run: see the marked input.';
    } else {
      showMessages(area, [failureLine(answer, ' Fewer points, fewer cycles (solver settings) or a looser tolerance may help.')]);
      status.textContent = `Not run (${seconds} s).`;
    }
  } catch (error) {
    if (!(error instanceof Unreachable)) console.error(error);
    showMessages(area, [error instanceof Unreachable ? error.message : `The page could not show the study: ${(error as Error).message}.`]);
    status.textContent = 'Not run.';
  } finally {
    if (outcome !== 'ok' && state.study) {
      runner.panel.classList.add('stale');
      status.textContent += ' The results below are from the last successful study.';
    }
    runner.finish(outcome);
  }
}

export function initStudyPanel(): void {
  runner = panelRunner('sweep');
  $('#sweep-run').addEventListener('click', () => { void runStudy(); });
  for (const r of $all('input[name="study-kind"]')) r.addEventListener('change', syncStudyMode);
  $('#mc-add').addEventListener('click', () => addToleranceLine('clamp.resistance', '5', 'normal'));
  const panel = $('#sweep-panel');
  panel.addEventListener('input', (event) => {
    (event.target as HTMLElement).removeAttribute('aria-invalid');
    updateStudyPreview();
  });
  panel.addEventListener('change', () => updateStudyPreview());
  panel.addEventListener('keydown', (event) => {
    if (event.key === 'Enter' && (event.target as HTMLElement).tagName === 'INPUT') { event.preventDefault(); void runStudy(); }
  });
  ready = true;
  refreshStudyFields();
  addToleranceLine(DEFAULT_STUDY_FIELD, '20', 'uniform');
  syncStudyMode();
}
