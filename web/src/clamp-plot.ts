// The clamp capacitor's voltage above the rail for the variants that have a clamp, with its mean
// (dotted) and a note of mean and ripple per variant.

import { $ } from './dom.js';
import type { SimulateAnswer } from './api.js';
import { fmtSi } from './format.js';
import { purge, react, type PlotSpec } from './plotly.js';
import { LINEAR_AXIS, BASE_LAYOUT, COLOURS, describePlot, plotConfig, US, VARIANTS, variantLabel } from './plot-style.js';

const plot = $('#clamp-plot');

export function drawClamp(result: SimulateAnswer): void {
  const { report } = result;
  const withClamp = VARIANTS.filter((v) => result.traces[v]?.clampVoltage && report.variants[v]?.clampVoltageMean !== undefined);
  $('#clamp-empty').hidden = withClamp.length > 0;
  plot.hidden = withClamp.length === 0;
  if (withClamp.length === 0) { purge(plot); return; }
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
  const notes = withClamp.map((v) => `${v}: mean ${fmtSi(mean(v), 'V', 4)} · ripple ${fmtSi(report.variants[v]!.clampVoltageRipple, 'V', 3)} p-p`);
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
  describePlot(plot, `Clamp capacitor voltage above the rail against time, ${withClamp.join(', ')}`, `${notes.join('; ')}.`);
}

function clampRange(data: ReadonlyArray<PlotSpec & { y: readonly number[] }>, notes: number): [number, number] {
  let lo = Infinity, hi = -Infinity;
  for (const d of data) for (const y of d.y) { if (y < lo) lo = y; if (y > hi) hi = y; }
  const span = Math.max(hi - lo, 1e-3 * Math.abs(hi), 1e-6);
  return [lo - 0.08 * span, hi + (0.12 + 0.16 * notes) * span];
}
