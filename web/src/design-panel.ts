// The design panel: POST /api/design with the form's scenario; the verdict, the chosen parts, how
// they were chosen and the verification per corner; "Use these parts" writes them into the form.

import { $, el, flashLoaded } from './dom.js';
import { failureLine, issuesOf, postJson, Unreachable, type DesignAnswer } from './api.js';
import { cap, fmtNumber, fmtSi, fmtVolts, siForForm } from './format.js';
import { blockBox, clearFieldError, clearFieldErrors, inputFor, syncBlocks } from './form.js';
import { readForm } from './form-values.js';
import { showIssues, showMessages } from './issues.js';
import { marginCell, numCell, panelRunner, peakCell, verdictBadge, type Outcome, type PanelRunner } from './panel-common.js';
import { COLOURS } from './plot-style.js';
import { drawDesignDetails, drawDesignPlot } from './design-details.js';
import { hooks, state } from './state.js';

type Design = DesignAnswer['design'];
type Corner = Design['corners'][number];

let runner: PanelRunner | null = null;
/** The form fields the last design's issues named: editing one makes that complaint old news. */
let complainedAbout: string[] = [];

const area = (): HTMLElement => $('#design-error');
const status = (text: string): void => { $('#design-status').textContent = text; };

async function runDesign(): Promise<void> {
  if (!runner || runner.busy) return;
  const scenario = readForm();
  const run = runner.start();
  clearFieldErrors();
  showMessages(area(), []);
  complainedAbout = [];
  status('');
  let outcome: Outcome = 'failed';
  try {
    const answer = await postJson<DesignAnswer>('/api/design', { scenario });
    const seconds = run.seconds();
    const issues = issuesOf(answer);
    if (answer.ok?.ok) {
      const data = answer.ok;
      $('#design-result').hidden = false;
      // Drawn before it counts as done: a drawing fault is a failure, not an empty table.
      drawDesign(data, scenario);
      state.design = { scenario, data };
      runner.panel.classList.remove('stale');
      outcome = 'ok';
      status(`Designed and verified in ${seconds} s: ${data.design.scenario}.`);
    } else if (issues) {
      outcome = 'invalid';
      complainedAbout = showIssues(issues, (lines) => showMessages(area(), lines), true);
      status(`Not designed: the scenario has ${issues.length === 1 ? 'a problem' : `${issues.length} problems`}.`);
    } else {
      showMessages(area(), [failureLine(answer, ' Fewer cycles (solver settings) or a looser tolerance may help.')]);
      status(`Not designed (${seconds} s).`);
    }
  } catch (error) {
    const message = error instanceof Unreachable ? error.message : `The page could not show the design: ${(error as Error).message}.`;
    if (!(error instanceof Unreachable)) console.error(error);
    // A half-drawn answer is not shown as a result (an earlier design stays, marked stale).
    if (!state.design) $('#design-result').hidden = true;
    showMessages(area(), [message]);
    status('Not designed.');
  } finally {
    if (outcome !== 'ok' && state.design) {
      runner.panel.classList.add('stale');
      $('#design-status').textContent += ' The results below are from the last successful design.';
    }
    runner.finish(outcome);
  }
}

/**
 * The form changed: a complaint of the last design about a field that is now fixed (or any, once
 * the form simulates cleanly) is taken down, so the panel does not keep an old error.
 */
export function designFormChanged(fixedPath?: string): void {
  if (complainedAbout.length === 0) return;
  complainedAbout = fixedPath ? complainedAbout.filter((p) => p !== fixedPath) : [];
  if (complainedAbout.length > 0) return;
  showMessages(area(), []);
  status(state.design ? 'The form has changed since the design below; run the design again to update it.' : '');
}

/** A corner is judged only on settled runs of the clamp and the clamp with damper. */
export function cornerSettled(c: { variants: Corner['variants'] }): boolean {
  return (['clamp', 'damped'] as const).every((name) => !c.variants[name] || c.variants[name].settled);
}

function drawDesign(data: DesignAnswer, scenario: Record<string, unknown>): void {
  const d = data.design;
  const hand = d.hand;
  const wc = d.verification.worstCase;
  const rating = d.hand.voltageRating;
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
  const part = (path: string, label: string, value: number, unit: string): HTMLElement[] => [
    el('dt', { text: label }), el('dd', { dataset: { part: path, value: String(value) }, text: fmtSi(value, unit, 3) }),
  ];
  const block = (key: 'clamp' | 'damped', name: string, ...parts: HTMLElement[][]): HTMLElement => {
    const swatch = el('span', { class: 'swatch' });
    swatch.style.background = COLOURS[key];
    return el('div', { class: 'part-block', dataset: { block: key === 'damped' ? 'damper' : 'clamp' } }, el('h4', {}, swatch, name), el('dl', {}, ...parts.flat()));
  };
  $('#design-parts').replaceChildren(
    block('clamp', 'RCD clamp', part('clamp.resistance', 'Resistor', d.clamp.resistance, 'Ω'), part('clamp.capacitance', 'Capacitor', d.clamp.capacitance, 'F'), part('clamp.diodeDrop', 'Diode drop', d.clamp.diodeDrop, 'V')),
    d.damperFitted
      ? block('damped', 'RC damper', part('damper.resistance', 'Resistor', d.damper.resistance, 'Ω'), part('damper.capacitance', 'Capacitor', d.damper.capacitance, 'F'))
      : el('div', { class: 'part-block', dataset: { block: 'damper', fitted: 'false' } }, el('h4', { text: 'No RC damper' }),
        el('p', { class: 'muted', text: `The clamp alone passes with less loss. The damper designed for comparison, ${fmtSi(d.damper.resistance, 'Ω', 3)} + ${fmtSi(d.damper.capacitance, 'F', 3)}, is in the “damped” column below.` })),
  );
  const note = $('#design-use-note');
  note.textContent = d.damperFitted
    ? 'Loads these parts into the form and switches the clamp and the damper on; the page then simulates them at the scenario’s own conditions.'
    : 'Loads the clamp into the form and switches it on, and the damper off; the page then simulates them at the scenario’s own conditions.';
  note.classList.remove('done');

  // How the parts were chosen.
  const t = hand.targets;
  const steps = [
    el('li', {}, `Formula at the worst case: R = ${fmtSi(hand.resistanceExact, 'Ω', 4)}; the ${t.resistorSeries} value at or below it is `,
      el('b', { text: fmtSi(hand.resistance, 'Ω', 3) }), `, with C = ${fmtSi(hand.capacitance, 'F', 3)} (${t.capacitorSeries}, at or above ${fmtSi(hand.capacitanceExact, 'F', 3)} for at most ${fmtNumber(100 * t.clampRippleMaximum, 3)} % ripple).`),
    ...d.adjustments.map((a) => el('li', { dataset: { resistance: String(a.resistance) } },
      el('b', { text: fmtSi(a.resistance, 'Ω', 3) }), `: simulated worst-case peak ${fmtVolts(a.worstCasePeak)} against ${fmtVolts(derated)}. `,
      el('span', { class: 'muted', text: `${cap(a.reason)}.` }))),
  ];
  if (d.adjustments.length === 0) steps.push(el('li', { class: 'muted', text: 'No step: the formula’s value holds the simulated worst case under the limit, and one standard step up does not.' }));
  steps.push(el('li', { class: 'chosen' }, 'Chosen clamp: ', el('b', { text: `${fmtSi(d.clamp.resistance, 'Ω', 3)} ∥ ${fmtSi(d.clamp.capacitance, 'F', 3)}` }),
    `. Damper: Rs = √(Llk/Coss) = ${fmtSi(hand.damper.resistanceExact, 'Ω', 4)} → `, el('b', { text: fmtSi(d.damper.resistance, 'Ω', 3) }),
    `, Cs = ${fmtNumber(t.damperCapacitanceRatio, 3)} × Coss = ${fmtSi(hand.damper.capacitanceExact, 'F', 3)} → `, el('b', { text: fmtSi(d.damper.capacitance, 'F', 3) }),
    ` (nearest ${t.resistorSeries} / ${t.capacitorSeries}).`));
  $('#design-adjustments').replaceChildren(...steps);

  // Verification per corner; the worst case and nominal keep their keys.
  $('#design-verification tbody').replaceChildren(...d.corners.map((c, i) => {
    const key = i === 0 ? 'worstCase' : c.name === 'nominal' ? 'nominal' : `corner-${i}`;
    const v = c.variants;
    const settled = cornerSettled(c);
    const verdictCell = el('td', { class: 'verdict-cell', dataset: { metric: 'verdict' } }, verdictBadge(c.pass));
    if (!settled) {
      const which = (['clamp', 'damped'] as const).filter((name) => v[name] && !v[name].settled);
      verdictCell.append(el('span', { class: 'sub', text: `${which.join(', ')} not settled` }));
    }
    return el('tr', { dataset: { corner: key, pass: String(c.pass), settled: String(settled) } },
      el('th', { scope: 'row', text: i === 0 ? `worst case (${c.name})` : c.name }),
      numCell(c.inputVoltage, fmtVolts(c.inputVoltage)),
      numCell(c.leakageInductance, fmtSi(c.leakageInductance, 'H')),
      numCell(c.peakCurrent, fmtSi(c.peakCurrent, 'A')),
      peakCell(v.bare?.peakDrainVoltage, rating, derated, { dataset: { metric: 'bare' } }),
      peakCell(v.clamp?.peakDrainVoltage, rating, derated, { dataset: { metric: 'clamp' } }),
      peakCell(v.damped?.peakDrainVoltage, rating, derated, { dataset: { metric: 'damped' } }),
      numCell(v.clamp?.clampVoltageMean, fmtSi(v.clamp?.clampVoltageMean, 'V')),
      numCell(v.clamp?.clampVoltageRipple, fmtSi(v.clamp?.clampVoltageRipple, 'V', 3)),
      numCell(v.clamp?.clampResistorPower, fmtSi(v.clamp?.clampResistorPower, 'W', 3)),
      numCell(v.damped?.damperResistorPower, fmtSi(v.damped?.damperResistorPower, 'W', 3)),
      marginCell(hand.deratedLimit - d.allowance - c.peakDrainVoltage, { dataset: { metric: 'margin' } }),
      verdictCell,
    );
  }));
  drawDesignDetails(data);
  drawDesignPlot(data, scenario, false);
}

function useDesignParts(): void {
  if (!state.design) return;
  const { clamp, damper, damperFitted } = state.design.data.design;
  const values: Record<string, string> = {
    'clamp.resistance': siForForm(clamp.resistance),
    'clamp.capacitance': siForForm(clamp.capacitance),
    'clamp.diodeDrop': String(Number(clamp.diodeDrop.toPrecision(12))),
    ...(damperFitted ? { 'damper.resistance': siForForm(damper.resistance), 'damper.capacitance': siForForm(damper.capacitance) } : {}),
  };
  blockBox('clamp').checked = true;
  blockBox('damper').checked = damperFitted;
  syncBlocks();
  for (const [path, text] of Object.entries(values)) {
    const input = inputFor(path)!;
    input.value = text;
    clearFieldError(path);
    flashLoaded(input.closest<HTMLElement>('.field'));
  }
  hooks.edited();
  const note = $('#design-use-note');
  const damperText = damperFitted ? `damper ${fmtSi(damper.resistance, 'Ω', 3)} + ${fmtSi(damper.capacitance, 'F', 3)}` : 'no damper';
  note.textContent = `In the form: clamp ${fmtSi(clamp.resistance, 'Ω', 3)} ∥ ${fmtSi(clamp.capacitance, 'F', 3)}, diode ${fmtSi(clamp.diodeDrop, 'V', 3)}; ${damperText}. The page simulates them at the scenario’s conditions.`;
  note.classList.add('done');
}

export function initDesignPanel(): void {
  runner = panelRunner('design');
  $('#design-run').addEventListener('click', () => { void runDesign(); });
  $('#design-use').addEventListener('click', useDesignParts);
  $('#design-zoom-turnoff').addEventListener('click', () => { if (state.design) drawDesignPlot(state.design.data, state.design.scenario, true); });
  $('#design-zoom-whole').addEventListener('click', () => { if (state.design) drawDesignPlot(state.design.data, state.design.scenario, false); });
}
