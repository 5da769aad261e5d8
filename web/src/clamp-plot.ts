// The clamp capacitor's voltage above the rail for the variants that have a clamp, with its mean
// (dotted) and a note of mean and ripple per variant.

import { $ } from './dom.js';
import type { SimulateAnswer, VariantName } from './api.js';
import { fmtSi } from './format.js';
import { purge, react, type PlotSpec } from './plotly.js';
import { LINEAR_AXIS, BASE_LAYOUT, COLOURS, describePlot, plotConfig, US, VARIANTS, variantLabel } from './plot-style.js';

const plot = $('#clamp-plot');

/**
 * The plot sits below the fold of a usual window. Its Plotly draw took about a third of an edit's
 * re-plot (25–30 ms of about 80), so an answer is drawn when the plot is within NEAR_VIEW_PX of
 * the view, and otherwise kept until it comes that near (scrolled to, the window grown) or the
 * page is printed. Its description is written at once: a screen reader gets it without the draw.
 */
const NEAR_VIEW_PX = 150;
let nearView = false;
let waiting: SimulateAnswer | null = null;
const drawWaiting = (): void => {
  if (!waiting) return;
  const answer = waiting;
  waiting = null;
  drawNow(answer);
};
const watcher = typeof IntersectionObserver === 'function'
  ? new IntersectionObserver((entries) => {
    nearView = entries[entries.length - 1]!.isIntersecting;
    if (nearView) drawWaiting();
  }, { rootMargin: `${NEAR_VIEW_PX}px 0px` })
  : null;
watcher?.observe(plot);
// A printed page shows the answer of the plots above it, not the one before.
window.addEventListener('beforeprint', drawWaiting);

export function drawClamp(result: SimulateAnswer): void {
  const withClamp = clampVariants(result);
  $('#clamp-empty').hidden = withClamp.length > 0;
  plot.hidden = withClamp.length === 0;
  waiting = null;
  if (withClamp.length === 0) { purge(plot); return; }
  describePlot(plot, `Clamp capacitor voltage above the rail against time, ${withClamp.join(', ')}`, `${clampNotes(result, withClamp).join('; ')}.`);
  if (nearView || !watcher) drawNow(result);
  else waiting = result;
}

function clampVariants(result: SimulateAnswer): VariantName[] {
  return VARIANTS.filter((v) => result.traces[v]?.clampVoltage && result.report.variants[v]?.clampVoltageMean !== undefined);
}

/** Per variant with a clamp: its mean and ripple, as the plot's notes and its description give them. */
function clampNotes(result: SimulateAnswer, withClamp: readonly VariantName[]): string[] {
  return withClamp.map((v) => `${v}: mean ${fmtSi(result.report.variants[v]!.clampVoltageMean!, 'V', 4)} · ripple ${fmtSi(result.report.variants[v]!.clampVoltageRipple, 'V', 3)} p-p`);
}

function drawNow(result: SimulateAnswer): void {
  const { report } = result;
  const withClamp = clampVariants(result);
  const x1 = result.recordedSeconds * US;
  const data = withClamp.map((v) => ({
    type: 'scatter', mode: 'lines', name: variantLabel(v, report.variants), meta: `variant:${v}`,
    x: result.traces[v]!.clampVoltage!.timeSeconds.map((t) => t * US),
    y: result.traces[v]!.clampVoltage!.values,
    line: { color: COLOURS[v], width: 1.7 },
    hovertemplate: `%{y:.2f} V at %{x:.3f} µs<extra>${v}</extra>`,
  }));
  const mean = (v: typeof withClamp[number]): number => report.variants[v]!.clampVoltageMean!;
  const shapes = withClamp.map((v) => ({
    type: 'line', xref: 'x', yref: 'y', x0: 0, x1, y0: mean(v), y1: mean(v), line: { color: COLOURS[v], width: 1, dash: 'dot' },
  }));
  const notes = clampNotes(result, withClamp);
  const annotations = withClamp.map((v, i) => ({
    x: 0.005, xref: 'paper', xanchor: 'left', y: 0.98 - i * 0.11, yref: 'paper', yanchor: 'top', showarrow: false,
    align: 'left', bgcolor: 'rgba(255,253,248,0.9)', bordercolor: COLOURS[v], borderwidth: 1, borderpad: 3,
    font: { color: COLOURS[v], size: 12.5 }, meta: `clamp-note:${v}`,
    text: `<b>${v}</b>${notes[i]!.slice(v.length)}`,
  }));
  const layout = {
    ...BASE_LAYOUT,
    margin: { l: 62, r: 14, t: 12, b: 48 },
    showlegend: false, shapes, annotations,
    xaxis: { ...LINEAR_AXIS, title: { text: 'time over the recorded settled cycles (µs)' }, range: [0, x1] },
    // Head-room above the traces keeps the notes off the waveforms.
    yaxis: { ...LINEAR_AXIS, title: { text: 'clamp capacitor above rail (V)' }, range: clampRange(data, withClamp.length) },
  };
  void react(plot, data, layout, plotConfig('clamp capacitor voltage', withClamp));
}

function clampRange(data: ReadonlyArray<PlotSpec & { y: readonly number[] }>, notes: number): [number, number] {
  let lo = Infinity, hi = -Infinity;
  for (const d of data) for (const y of d.y) { if (y < lo) lo = y; if (y > hi) hi = y; }
  const span = Math.max(hi - lo, 1e-3 * Math.abs(hi), 1e-6);
  return [lo - 0.08 * span, hi + (0.12 + 0.16 * notes) * span];
}
