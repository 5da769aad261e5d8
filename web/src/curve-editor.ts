// The transistor's drain capacitance in the form: one constant, or datasheet points [[V, C], …]
// with a small log-scale plot of C(v) as the simulator reads it (ln C linear between points, the
// last value beyond, C(0) below 0 V; README, "Scenario files").

import { el } from './dom.js';
import { readSi } from './format.js';
import { UNIT_WORDS } from './fields.js';
import { MAX_CURVE_POINTS, MIN_CURVE_POINTS } from '../../src/contract/field-metadata.js';
import { purge, react, type PlotSpec } from './plotly.js';

/** The server's limits for a curve. */
const MIN_POINTS = MIN_CURVE_POINTS;
const MAX_POINTS = MAX_CURVE_POINTS;
/** Samples per segment for the plotted line; the line is exact at any count, this keeps hover useful. */
const SAMPLES_PER_SEGMENT = 12;
/** One object for every draw: plotly rebuilds a plot whose config object changed. */
const CURVE_PLOT_CONFIG: PlotSpec = { responsive: true, displaylogo: false, displayModeBar: false };

type Point = [number, number];
type Mode = 'constant' | 'curve';

/** C at v on ln-linear datasheet points: the same rule as src/model/drain-capacitance.ts. */
export function capacitanceAt(points: readonly Point[], v: number): number {
  const first = points[0]!;
  if (v <= first[0]) return first[1];
  for (let i = 0; i < points.length - 1; i++) {
    const [v0, c0] = points[i]!;
    const [v1, c1] = points[i + 1]!;
    if (v <= v1) return c0 * Math.exp((Math.log(c1 / c0) * (v - v0)) / (v1 - v0));
  }
  return points[points.length - 1]![1];
}

export interface CurveContext { plateau: number | undefined; rating: number | undefined; avalanche: number | undefined }

export interface CurveEditorOptions {
  path: string;
  label: string;
  formatForForm: (value: number) => string;
  plotLayout: PlotSpec;
  axis: PlotSpec;
  context: () => CurveContext;
  onEdit: () => void;
}

export type CurveEditor = ReturnType<typeof createCurveEditor>;

export function createCurveEditor(options: CurveEditorOptions) {
  const { path } = options;
  const base = `f-${path.replace(/\./g, '-')}`;

  // ---- the wrapper and the mode toggle ----
  const wrap = el('div', { class: 'field field-curve', dataset: { field: path, curveMode: 'constant' } });
  const title = el('span', { class: 'curve-title', id: `${base}-title`, text: options.label });
  const toggle = el('div', { class: 'choice curve-mode', role: 'radiogroup', 'aria-labelledby': `${base}-title` });
  const radios = {} as Record<Mode, HTMLInputElement>;
  for (const [value, text] of [['constant', 'constant'], ['curve', 'datasheet curve']] as const) {
    const radio = el('input', { type: 'radio', name: `${path}-mode`, value, id: `${base}-mode-${value}` });
    radio.addEventListener('change', () => { if (radio.checked) setMode(value, true); options.onEdit(); });
    radios[value] = radio;
    toggle.append(el('label', { for: radio.id }, radio, ` ${text}`));
  }

  // ---- constant: an ordinary field, with the ids and data-path the rest of the page knows ----
  const constantRow = el('div', { class: 'curve-constant' });
  const constantLabel = el('label', { for: base, class: 'sr-only', text: `${options.label}, constant, in ${UNIT_WORDS.F}` });
  const constantInput = el('input', { type: 'text', id: base, name: path, 'aria-describedby': `${base}-error`, dataset: { path } });
  constantInput.spellcheck = false;
  constantRow.append(constantLabel, el('div', { class: 'entry' }, constantInput, el('span', { class: 'unit', 'aria-hidden': 'true', text: 'F' })));
  const constantNote = el('p', { class: 'curve-note', 'aria-live': 'polite' });
  constantRow.append(constantNote);

  // ---- curve: the points and the plot ----
  const curveBox = el('div', { class: 'curve-body', hidden: '' });
  const list = el('div', { class: 'curve-points', role: 'group', 'aria-label': `${options.label}: datasheet points` });
  const head = el('div', { class: 'curve-row curve-head', 'aria-hidden': 'true' },
    el('span', { class: 'curve-index', text: '#' }), el('span', { text: 'drain voltage' }), el('span', { text: 'capacitance' }), el('span'));
  const rows = el('div', { class: 'curve-rows' });
  const addButton = el('button', { type: 'button', class: 'quiet curve-add', id: `${base}-add`, text: 'Add point' });
  addButton.addEventListener('click', () => {
    addRow('', '');
    renumber();
    rows.lastElementChild?.querySelector('input')?.focus();
    changed();
  });
  list.append(head, rows, addButton);
  const plotHolder = el('div', { class: 'curve-plot-holder' });
  const plot = el('div', { class: 'plot plot-curve', id: 'cv-plot', role: 'img', 'aria-label': `${options.label} against drain voltage, log scale` });
  const note = el('p', { class: 'curve-note', id: `${base}-note`, 'aria-live': 'polite' });
  plotHolder.append(plot, note);
  curveBox.append(list, plotHolder);

  // Errors about the whole field (required, number of points) for both modes.
  const error = el('div', { class: 'field-error', id: `${base}-error`, dataset: { for: path }, hidden: '' });
  wrap.append(title, toggle, constantRow, curveBox, error);

  function addRow(vText: string, cText: string): void {
    const row = el('div', { class: 'curve-row curve-point' });
    const index = el('span', { class: 'curve-index' });
    const cell = (unit: string, which: string, text: string) => {
      const input = el('input', { type: 'text', class: `curve-${which}` });
      input.spellcheck = false;
      input.value = text;
      const label = el('label', { class: 'sr-only' });
      return { input, entry: el('span', { class: 'entry' }, label, input, el('span', { class: 'unit', 'aria-hidden': 'true', text: unit })) };
    };
    const v = cell('V', 'voltage', vText);
    const c = cell('F', 'capacitance', cText);
    const remove = el('button', { type: 'button', class: 'quiet curve-remove', text: 'Remove' });
    const rowError = el('div', { class: 'field-error curve-error', hidden: '' });
    remove.addEventListener('click', () => {
      const focusNext = row.nextElementSibling ?? row.previousElementSibling;
      row.remove();
      renumber();
      (focusNext?.querySelector<HTMLElement>('.curve-remove:not(:disabled)') ?? addButton).focus();
      changed();
    });
    for (const input of [v.input, c.input]) {
      input.addEventListener('input', () => {
        // The server's complaint was about this point; an edit makes it old news.
        rowError.replaceChildren();
        rowError.hidden = true;
        v.input.removeAttribute('aria-invalid');
        c.input.removeAttribute('aria-invalid');
        scheduleDraw();
      });
    }
    row.append(index, v.entry, c.entry, remove, rowError);
    rows.append(row);
  }

  /** Paths, ids and labels follow the position, as the server's issue paths do. */
  function renumber(): void {
    const all = [...rows.children] as HTMLElement[];
    all.forEach((row, i) => {
      const n = i + 1;
      row.dataset.point = String(i);
      row.querySelector('.curve-index')!.textContent = String(n);
      const labels = row.querySelectorAll('label');
      const inputs = [row.querySelector<HTMLInputElement>('.curve-voltage')!, row.querySelector<HTMLInputElement>('.curve-capacitance')!];
      const rowError = row.querySelector<HTMLElement>('.curve-error')!;
      rowError.id = `${base}-p${i}-error`;
      rowError.dataset.for = `${path}[${i}]`;
      inputs.forEach((input, j) => {
        const label = labels[j]!;
        input.id = `${base}-p${i}-${j}`;
        input.dataset.path = `${path}[${i}][${j}]`;
        input.setAttribute('aria-describedby', rowError.id);
        input.placeholder = j === 0 && i === 0 ? '0' : '';
        label.htmlFor = input.id;
        label.textContent = `Point ${n}, ${j === 0 ? 'drain voltage' : 'capacitance'}, in ${j === 0 ? UNIT_WORDS.V : UNIT_WORDS.F}`;
      });
      const remove = row.querySelector<HTMLButtonElement>('.curve-remove')!;
      remove.setAttribute('aria-label', `Remove point ${n}`);
      remove.disabled = all.length <= MIN_POINTS;
    });
    addButton.disabled = all.length >= MAX_POINTS;
  }

  function rowTexts(): Array<[string, string]> {
    return ([...rows.children] as HTMLElement[]).map((row) => [
      row.querySelector<HTMLInputElement>('.curve-voltage')!.value,
      row.querySelector<HTMLInputElement>('.curve-capacitance')!.value,
    ]);
  }

  function setRows(pairs: ReadonlyArray<readonly [string, string]>): void {
    rows.replaceChildren();
    for (const [v, c] of pairs) addRow(v, c);
    renumber();
  }

  function mode(): Mode { return wrap.dataset.curveMode === 'curve' ? 'curve' : 'constant'; }

  function setMode(next: Mode, seed = false): void {
    if (seed && next === 'curve' && rowTexts().every(([v, c]) => v.trim() === '' && c.trim() === '')) {
      // A constant is the flat curve through it; the second point is left for the engineer.
      setRows([['0', constantInput.value.trim()], ['', '']]);
    }
    if (seed && next === 'constant' && constantInput.value.trim() === '') {
      const points = parsedPoints().valid;
      const at = options.context().plateau;
      if (points && at !== undefined && Number.isFinite(at)) {
        // README ("The model"): of single constants, C at Vin + VR errs least on the bare peak.
        constantInput.value = options.formatForForm(Number(capacitanceAt(points, at).toPrecision(3)));
        note.textContent = '';
        constantNote.textContent = `Filled in with the curve's value at Vin + VR = ${Number(at.toPrecision(4))} V.`;
      }
    } else if (next === 'curve') constantNote.textContent = '';
    wrap.dataset.curveMode = next;
    radios[next].checked = true;
    constantRow.hidden = next !== 'constant';
    curveBox.hidden = next !== 'curve';
    if (next === 'curve') draw();
    else { purge(plot); drawnFrom = ''; }
  }

  /** The points as numbers; `valid` only when the simulator would take them as they are. */
  function parsedPoints(): { usable: Point[]; valid: Point[] | null; count: number } {
    const parsed = rowTexts().map(([v, c]) => [readSi(v, 'V'), readSi(c, 'F')] as const);
    const usable = parsed.filter((p): p is readonly [number, number] => p[0] !== undefined && p[1] !== undefined && p[1] > 0).map(([v, c]): Point => [v, c]);
    const valid = usable.length === parsed.length && usable.length >= MIN_POINTS && usable[0]![0] === 0
      && usable.every(([v], i) => i === 0 || v > usable[i - 1]![0]) ? usable : null;
    return { usable, valid, count: parsed.length };
  }

  let frame = 0;
  function scheduleDraw(): void {
    if (frame) return;
    frame = requestAnimationFrame(() => { frame = 0; draw(); });
  }

  // What the plot was last drawn from: an edit elsewhere in the form (most of them) leaves it as it
  // is, and a redraw with new arrays cost about 26 ms of the page's time on each live run.
  let drawnFrom = '';
  function draw(): void {
    if (mode() !== 'curve') return;
    const { usable, valid, count } = parsedPoints();
    const ctx = options.context();
    const inputs = JSON.stringify([rowTexts(), ctx.plateau, ctx.rating, ctx.avalanche]);
    if (inputs === drawnFrom) return;
    drawnFrom = inputs;
    const lastV = usable.length ? Math.max(...usable.map(([v]) => v)) : 0;
    // Past the last point the simulator holds C flat; show that up to where the drain can go.
    const reach = Math.max(lastV * 1.25, ctx.rating ?? 0, ctx.avalanche ?? 0, 1);
    const data: PlotSpec[] = [];
    if (valid) {
      const xs: number[] = [], ys: number[] = [];
      for (let i = 0; i < valid.length - 1; i++) {
        const [v0] = valid[i]!, [v1] = valid[i + 1]!;
        for (let s = 0; s < SAMPLES_PER_SEGMENT; s++) {
          const v = v0 + ((v1 - v0) * s) / SAMPLES_PER_SEGMENT;
          xs.push(v); ys.push(capacitanceAt(valid, v));
        }
      }
      const lastC = valid[valid.length - 1]![1];
      xs.push(lastV, reach); ys.push(lastC, lastC);
      data.push({
        type: 'scatter', mode: 'lines', meta: 'curve:interpolated', name: 'as simulated', x: xs, y: ys,
        line: { color: '#5a2d6e', width: 1.6 }, hovertemplate: '%{y:.3s}F at %{x:.3g} V<extra></extra>',
      });
    }
    data.push({
      type: 'scatter', mode: 'markers', meta: 'curve:points', name: 'datasheet points',
      x: usable.map(([v]) => v), y: usable.map(([, c]) => c),
      marker: { color: '#fffdf8', size: 7, line: { color: '#5a2d6e', width: 1.6 } },
      hovertemplate: '%{y:.3s}F at %{x:.3g} V<extra>point</extra>',
    });
    const shapes: PlotSpec[] = [], annotations: PlotSpec[] = [];
    if (ctx.plateau !== undefined && Number.isFinite(ctx.plateau) && ctx.plateau > 0) {
      shapes.push({ type: 'line', xref: 'x', yref: 'paper', x0: ctx.plateau, x1: ctx.plateau, y0: 0, y1: 1, line: { color: '#8c8372', width: 1, dash: 'dot' } });
      annotations.push({ x: ctx.plateau, xref: 'x', y: 1, yref: 'paper', xanchor: 'left', yanchor: 'top', text: ' Vin + VR', showarrow: false, font: { color: '#6f6757', size: 10.5 } });
    }
    const layout = {
      ...options.plotLayout,
      margin: { l: 48, r: 8, t: 8, b: 34 },
      showlegend: false, shapes, annotations,
      xaxis: { ...options.axis, title: { text: 'drain voltage (V)', font: { size: 11 } }, range: [0, reach], tickfont: { size: 10.5 } },
      yaxis: { ...options.axis, type: 'log', exponentformat: 'SI', ticksuffix: 'F', tickfont: { size: 10.5 } },
    };
    react(plot, data, layout, CURVE_PLOT_CONFIG);
    if (valid) note.textContent = '';
    else if (usable.length < count) note.textContent = 'Points that do not read as a voltage and a capacitance above 0 are left out of the plot.';
    else note.textContent = 'The line appears once the voltages rise strictly from 0 V.';
  }

  function changed(): void {
    scheduleDraw();
    options.onEdit();
  }

  setRows([]);
  setMode('constant');

  const text = (x: unknown): string => (x === undefined || x === null ? '' : typeof x === 'object' ? JSON.stringify(x) : String(x));

  return {
    element: wrap,
    plot,
    mode,
    /** A value as the scenario file holds it: a number or text, or points. */
    fill(raw: unknown): void {
      error.replaceChildren();
      error.hidden = true;
      constantNote.textContent = '';
      if (Array.isArray(raw)) {
        setRows(raw.map((p: unknown) => (Array.isArray(p) ? [text(p[0]), text(p[1])] as const : [text(p), ''] as const)));
        constantInput.value = '';
        setMode('curve');
      } else {
        setRows([]);
        constantInput.value = text(raw);
        setMode('constant');
      }
    },
    /**
     * The value to send or save; `convert` turns one typed text into what goes in the JSON.
     * Undefined when nothing is filled in, so the server reports the field as required.
     */
    read(convert: (typed: string) => string | number): unknown {
      if (mode() === 'constant') {
        const typed = constantInput.value;
        return typed.trim() === '' ? undefined : convert(typed);
      }
      const pairs = rowTexts();
      if (pairs.every(([v, c]) => v.trim() === '' && c.trim() === '')) return undefined;
      // Every row goes, blanks too: the server's issue paths then count rows as the form shows them.
      return pairs.map(([v, c]) => [convert(v), convert(c)]);
    },
    /** Whether every typed value reads as a number in its unit (the server judges the rest). */
    readable(): boolean {
      if (mode() === 'constant') return constantInput.value.trim() === '' || readSi(constantInput.value, 'F') !== undefined;
      const { count, usable } = parsedPoints();
      return count === usable.length;
    },
    /** The value a study's percentage refers to: the constant, or C at 0 V (the server's rule). */
    nominal(): number | undefined {
      if (mode() === 'constant') return readSi(constantInput.value, 'F');
      const first = rowTexts()[0];
      return first ? readSi(first[1], 'F') : undefined;
    },
    /** The box and input for an issue path of this field, or null when it is not this field's. */
    target(issuePath: string): { box: HTMLElement; input: HTMLElement | null } | null {
      if (issuePath === path) return { box: error, input: mode() === 'constant' ? constantInput : rows.querySelector('input') };
      const m = /^([^[]*)\[(\d+)\](?:\[([01])\])?$/.exec(issuePath);
      if (!m || m[1] !== path) return null;
      const row = rows.children[Number(m[2])];
      if (!row || mode() !== 'curve') return { box: error, input: null };
      return { box: row.querySelector<HTMLElement>('.curve-error')!, input: row.querySelector<HTMLElement>(m[3] === '1' ? '.curve-capacitance' : '.curve-voltage') };
    },
    redraw: scheduleDraw,
  };
}
