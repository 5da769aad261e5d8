// Where a problem is shown: beside the input its path names, or in a message area (the general
// one, or a panel's own) with the path in code.

import { $, el } from './dom.js';
import { formField } from './fields.js';
import { controlKind, curveEditor, form, inputFor } from './form.js';
import type { ApiIssue } from './api.js';

export type Line = string | ApiIssue;

/** Lines in a message area; `tone` 'note' is for load remarks that are not failures. */
export function showMessages(area: HTMLElement, lines: readonly Line[], tone: 'error' | 'note' = 'error'): void {
  if (lines.length === 0 && area.hidden && !area.firstChild) return;
  area.replaceChildren(...lines.map((line) => (typeof line === 'string' ? el('p', { text: line }) : el('p', {}, el('code', { text: line.path }), ` ${line.message}`))));
  area.hidden = lines.length === 0;
  area.dataset.tone = tone;
}

export function showGeneral(lines: readonly Line[], tone: 'error' | 'note' = 'error'): void { showMessages($('#general-error'), lines, tone); }

/**
 * Puts each issue beside the input its path names; the rest, or a summary line, go to `showRest`
 * (the general area for a simulation, a panel's own area for a design or a study). With `focus`,
 * the first marked input takes the keyboard focus (an explicit run; never while typing).
 * Returns the paths marked in the form.
 */
export function showIssues(issues: readonly ApiIssue[], showRest: (lines: Line[]) => void, focus: boolean): string[] {
  const rest: ApiIssue[] = [];
  const marked: string[] = [];
  const kind = controlKind();
  for (const issue of issues) {
    let path = issue.path;
    // "Exactly one of peak current and duty cycle" is filed under switch.peakCurrent even when
    // fixed duty is chosen and that input is hidden; show it where the engineer is looking.
    const when = formField(path)?.when;
    if (when && when !== kind) path = kind === 'fixed-duty' ? 'switch.dutyCycle' : 'switch.peakCurrent';
    const curve = curveEditor().target(path);
    const box = curve ? curve.box : form.querySelector<HTMLElement>(`.field-error[data-for="${CSS.escape(path)}"]`);
    if (!box) { rest.push(issue); continue; }
    box.append(el('p', { text: issue.message }));
    box.hidden = false;
    (curve ? curve.input : inputFor(path))?.setAttribute('aria-invalid', 'true');
    const details = box.closest('details');
    if (details) details.open = true;
    marked.push(issue.path);
  }
  const first = form.querySelector<HTMLElement>('[aria-invalid="true"]');
  if (first && focus) {
    first.scrollIntoView({ block: 'center' });
    first.focus({ preventScroll: true });
  }
  if (rest.length > 0) showRest(rest);
  else {
    const named = [...new Set(issues.map((i) => formField(i.path)?.label ?? curvePointLabel(i.path) ?? i.path))];
    showRest([`The server could not use the design: ${issues.length === 1 ? 'one field needs' : `${issues.length} fields need`} attention (marked in the form: ${named.join('; ')}).`]);
  }
  return marked;
}

/** "Drain–source capacitance, point 3" for an issue path inside the curve. */
function curvePointLabel(path: string): string | undefined {
  const m = /^(.*?)\[(\d+)\]/.exec(path);
  const field = m ? formField(m[1]!) : undefined;
  return field && m ? `${field.label}, point ${Number(m[2]) + 1}` : undefined;
}
