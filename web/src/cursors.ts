// Two cursors on the drain plot: click a point for A, another for B; the readout gives Δt, ΔV and
// 1/Δt (a ring's period and frequency between two crests). A third click starts again at A.

import { $, button } from './dom.js';
import { fmtSi } from './format.js';
import type { PlotElement, PlotSpec } from './plotly.js';
import { US } from './plot-style.js';

interface Cursor { x: number; y: number; trace: string }
const cursors: Cursor[] = [];
const CURSOR_COLOUR = '#24292d';
const listening = new WeakSet<HTMLElement>();

/** Cursors snap to points of drawn waveforms, not to the limit levels. */
const isWaveform = (meta: unknown): boolean => typeof meta === 'string' && /^(variant|capture|peak)/.test(meta);

export function onPlotClick(plot: PlotElement, redraw: () => void): void {
  if (listening.has(plot) || !plot.on) return;
  listening.add(plot);
  plot.on('plotly_click', (event) => {
    const point = event.points.find((p) => isWaveform(p.data.meta));
    if (!point) return;
    if (cursors.length >= 2) cursors.length = 0;
    cursors.push({ x: point.x, y: point.y, trace: String(point.data.meta).replace(/^[a-z]+:/, '') });
    showReadout();
    redraw();
  });
}

export function resetCursors(): void {
  cursors.length = 0;
  showReadout();
}

/** Vertical lines through the cursors. */
export function cursorShapes(): PlotSpec[] {
  return cursors.map((c) => ({ type: 'line', xref: 'x', yref: 'paper', x0: c.x, x1: c.x, y0: 0, y1: 1, line: { color: CURSOR_COLOUR, width: 1, dash: 'dot' } }));
}

/** The clicked points, ringed and labelled A and B. */
export function cursorTraces(): PlotSpec[] {
  if (cursors.length === 0) return [];
  return [{
    type: 'scatter', mode: 'markers+text', meta: 'cursor', name: 'cursors', showlegend: false, hoverinfo: 'skip',
    x: cursors.map((c) => c.x), y: cursors.map((c) => c.y), text: cursors.map((_, i) => (i === 0 ? 'A' : 'B')),
    textposition: 'top right', textfont: { color: CURSOR_COLOUR, size: 12 },
    marker: { symbol: 'circle-open', size: 12, color: CURSOR_COLOUR, line: { width: 2 } },
  }];
}

function showReadout(): void {
  const out = $('#cursor-readout');
  button('#cursor-clear').hidden = cursors.length === 0;
  const [a, b] = cursors;
  delete out.dataset.dt; delete out.dataset.dv; delete out.dataset.frequency;
  if (!a) { out.textContent = 'Click a point of the drain plot for cursor A, then another for B.'; return; }
  const at = (c: Cursor, name: string): string => `${name}: ${fmtSi(c.x / US, 's', 5)}, ${fmtSi(c.y, 'V', 5)} (${c.trace})`;
  if (!b) { out.textContent = `${at(a, 'A')} · click a second point for B.`; return; }
  const dt = (b.x - a.x) / US, dv = b.y - a.y;
  out.dataset.dt = String(dt);
  out.dataset.dv = String(dv);
  out.dataset.frequency = String(1 / Math.abs(dt));
  out.textContent = `${at(a, 'A')} · ${at(b, 'B')} · Δt = ${fmtSi(dt, 's', 4)}, ΔV = ${fmtSi(dv, 'V', 4)}, 1/Δt = ${dt === 0 ? '—' : fmtSi(1 / Math.abs(dt), 'Hz', 4)}`;
}
