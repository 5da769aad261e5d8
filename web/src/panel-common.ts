// What the design, study and capture panels share: a busy state with elapsed time and data-* for
// tests, and table cells for values, peaks and margins.

import { $, button, el } from './dom.js';
import type { VariantName } from './api.js';
import { fmtMargin, fmtVolts } from './format.js';
import { COLOURS } from './plot-style.js';

export type Outcome = 'ok' | 'invalid' | 'failed';
export type PanelRunner = ReturnType<typeof panelRunner>;

/** Busy state of one panel: its button, the pulse with elapsed time, and data-* for tests. */
export function panelRunner(prefix: string) {
  const panel = $(`#${prefix}-panel`);
  const runButton = button(`#${prefix}-run`);
  const busy = $(`#${prefix}-busy`);
  const time = $(`#${prefix}-busy-time`);
  let timer = 0;
  let count = 0;
  return {
    panel,
    get busy(): boolean { return runButton.disabled; },
    start(): { seconds: () => string } {
      const startedAt = performance.now();
      panel.dataset.state = 'busy';
      runButton.disabled = true;
      busy.hidden = false;
      const tick = (): void => { time.textContent = `${((performance.now() - startedAt) / 1000).toFixed(1)} s`; };
      tick();
      window.clearInterval(timer);
      timer = window.setInterval(tick, 50);
      return { seconds: () => ((performance.now() - startedAt) / 1000).toFixed(2) };
    },
    finish(outcome: Outcome): void {
      window.clearInterval(timer);
      busy.hidden = true;
      runButton.disabled = false;
      panel.dataset.state = outcome === 'ok' ? 'done' : 'error';
      panel.dataset.lastOutcome = outcome;
      count += 1;
      panel.dataset.runCount = String(count);
    },
  };
}

export function flagBadge(kind: string, text: string): HTMLElement { return el('span', { class: `flag flag-${kind}`, text }); }

export function verdictBadge(pass: boolean): HTMLElement { return el('span', { class: `verdict ${pass ? 'pass' : 'fail'}`, text: pass ? 'PASS' : 'FAIL' }); }

type CellProps = { dataset?: Record<string, string> };

/** A numeric table cell, right-aligned, with the raw value for tests and copying. */
export function numCell(value: number | undefined | null, text: string, extra: CellProps = {}): HTMLTableCellElement {
  if (value === undefined || value === null || !Number.isFinite(value)) return el('td', { ...extra, class: 'na', text: '—' });
  return el('td', { dataset: { ...(extra.dataset ?? {}), value: String(value) }, text });
}

export function peakCell(peak: number | undefined | null, rating: number, derated: number, extra: CellProps = {}): HTMLTableCellElement {
  // A corner without the bare run (the design runs it at the worst case only) shows a dash.
  if (typeof peak !== 'number' || !Number.isFinite(peak)) return numCell(undefined, '—', extra);
  const td = numCell(peak, fmtVolts(peak), extra);
  if (peak > rating) { td.classList.add('over-rating'); td.append(' ', flagBadge('rating', 'over rating')); }
  else if (peak > derated) { td.classList.add('over-derated'); td.append(' ', flagBadge('derated', 'over derated')); }
  return td;
}

export function marginCell(margin: number | undefined, extra: CellProps = {}): HTMLTableCellElement {
  const td = numCell(margin, margin === undefined ? '—' : fmtMargin(margin), extra);
  if (margin !== undefined && Number.isFinite(margin) && margin < 0) td.classList.add('over-derated');
  return td;
}

export function variantHead(v: VariantName, label?: string): HTMLTableCellElement {
  const swatch = el('span', { class: 'swatch' });
  swatch.style.background = COLOURS[v];
  return el('th', { scope: 'row' }, swatch, el('span', { class: 'vname', text: v }), label ? el('span', { class: 'vdesc', text: label }) : null);
}
