// The drain–source voltage of every variant on one time axis, with the rating, the derated limit,
// Vin + VR and the avalanche level; a marker on each variant's peak; two cursors read Δt, ΔV and
// 1/Δt between clicked points; an opened scope capture is drawn with the variants.

import { $, button } from './dom.js';
import type { SimulateAnswer, VariantName } from './api.js';
import { fmtNumber, fmtSi, fmtVolts } from './format.js';
import { react, type PlotElement, type PlotSpec } from './plotly.js';
import { LINEAR_AXIS, BASE_LAYOUT, COLOURS, describePlot, LEGEND_ON_TOP, limitLevels, plotConfig, US, VARIANTS, variantLabel } from './plot-style.js';
import { cursorShapes, cursorTraces, onPlotClick, resetCursors } from './cursors.js';
import { hooks, state, type TimeWindow } from './state.js';

const plot = $<PlotElement>('#drain-plot');
/** What the plot shows, so a capture, a cursor or the "whole cycles" button can draw it again. */
let shown: { result: SimulateAnswer; window_: TimeWindow | null } | null = null;

export function presentVariants(result: SimulateAnswer): VariantName[] {
  return VARIANTS.filter((v) => result.traces[v] && result.report.variants[v]);
}

/**
 * Each variant's peak: at the time of its highest displayed sample, at the value the table gives
 * (the report's, from the full resolution and the located events).
 */
function peakMarkers(result: SimulateAnswer, variants: readonly VariantName[]): PlotSpec[] {
  return variants.map((v) => {
    const { timeSeconds, values } = result.traces[v]!.drainVoltage;
    let k = 0;
    for (let i = 1; i < values.length; i++) if (values[i]! > values[k]!) k = i;
    return {
      type: 'scatter', mode: 'markers', meta: `peak:${v}`, name: `${v} peak`, showlegend: false,
      x: [timeSeconds[k]! * US], y: [result.report.variants[v]!.peakDrainVoltage],
      marker: { symbol: 'triangle-down', size: 11, color: COLOURS[v], line: { color: '#fffdf8', width: 1 } },
      hovertemplate: `peak %{y:.2f} V at %{x:.4f} µs<extra>${v}</extra>`,
    };
  });
}

export function drawDrain(result: SimulateAnswer, window_: TimeWindow | null): void {
  const { report } = result;
  shown = { result, window_ };
  const x0 = window_ ? window_.startSeconds * US : 0;
  const x1 = window_ ? window_.endSeconds * US : result.recordedSeconds * US;
  const variants = presentVariants(result);
  const data: PlotSpec[] = variants.map((v) => ({
    type: 'scatter', mode: 'lines', name: variantLabel(v, report.variants), meta: `variant:${v}`,
    x: result.traces[v]!.drainVoltage.timeSeconds.map((t) => t * US),
    y: result.traces[v]!.drainVoltage.values,
    line: { color: COLOURS[v], width: v === 'bare' ? 1.3 : 1.7 },
    hovertemplate: `%{y:.1f} V at %{x:.3f} µs<extra>${v}</extra>`,
  }));
  // An opened scope capture follows the variants (capture-panel.ts places it at their turn-off).
  data.push(...hooks.drainExtras(result));
  const plateau = report.supplyVoltage + report.reflectedVoltage;
  const avalanche = state.last?.avalanche;
  const levels = limitLevels(x0, x1, {
    rating: report.voltageRating, derated: report.deratedLimit, plateau, avalanche,
    deratedNote: ` (${fmtNumber(100 * report.deratedLimit / report.voltageRating, 3)} %)`, avalancheNote: ': the drain is held here',
  });
  data.push(...levels.traces, ...peakMarkers(result, variants), ...cursorTraces());
  const layout: PlotSpec = {
    ...BASE_LAYOUT,
    margin: { l: 62, r: 14, t: 34, b: 48 },
    legend: LEGEND_ON_TOP,
    xaxis: { ...LINEAR_AXIS, title: { text: window_ ? 'time from the start of the recorded cycles (µs) — full resolution' : 'time over the recorded settled cycles (µs)' }, range: [x0, x1] },
    yaxis: { ...LINEAR_AXIS, title: { text: 'drain–source voltage (V)' }, rangemode: 'tozero' },
    annotations: levels.tags,
    shapes: cursorShapes(),
  };
  void react(plot, data, layout, plotConfig('drain voltage', variants)).then(() => onPlotClick(plot, redrawDrain));
  plot.dataset.view = window_ ? 'turn-off' : 'whole';
  const cycles = (result.recordedSeconds / result.periodSeconds).toFixed(0);
  $('#view-label').textContent = window_
    ? `${fmtNumber(x0, 3)}–${fmtNumber(x1, 3)} µs around the first turn-off`
    : `${report.variants.bare ? cycles : ''} settled cycles at ${fmtSi(1 / result.periodSeconds, 'Hz', 3)}`;
  const peaks = variants.map((v) => `${v} ${fmtVolts(report.variants[v]!.peakDrainVoltage)}`).join(', ');
  describePlot(plot, `Drain–source voltage against time, ${variants.join(', ')}`,
    `Peak drain voltage: ${peaks}; rating ${fmtVolts(report.voltageRating)}, derated limit ${fmtVolts(report.deratedLimit)}, Vin + VR ${fmtVolts(plateau)}. The table below has every value.`);
  syncViewButtons();
}

/** Draws what is shown again (a capture opened, a cursor set). */
export function redrawDrain(): void { if (shown) drawDrain(shown.result, shown.window_); }

export function syncViewButtons(): void {
  const busy = button('#run').disabled;
  const have = Boolean(state.last?.result.traces.bare?.turnOffSeconds.length);
  button('#zoom-turnoff').disabled = busy || !have || plot.dataset.view === 'turn-off';
  button('#zoom-whole').disabled = busy || !state.last || plot.dataset.view !== 'turn-off';
}

/**
 * From 0.2 µs before the earliest first turn-off to five periods of the slowest ring after the
 * latest one: the spike, the clamp interval and the ring's decay, at the recorder's resolution.
 */
export function turnOffWindow(result: SimulateAnswer): TimeWindow {
  const variants = presentVariants(result);
  const firsts = variants.map((v) => result.traces[v]!.turnOffSeconds[0]).filter((t): t is number => t !== undefined && Number.isFinite(t));
  const rings = variants.map((v) => result.report.variants[v]!.ringFrequency).filter((f): f is number => typeof f === 'number' && f > 0);
  const period = result.periodSeconds;
  const after = rings.length > 0 ? 5 / Math.min(...rings) : 0.15 * period;
  const start = Math.max(0, Math.min(...firsts) - 0.2e-6);
  const end = Math.min(result.recordedSeconds, Math.max(...firsts) + Math.min(Math.max(after, 0.3e-6), 0.9 * period));
  return { startSeconds: start, endSeconds: end };
}

export function clearCursors(): void { resetCursors(); }

export function initDrainPlot(): void {
  button('#cursor-clear').addEventListener('click', () => { resetCursors(); redrawDrain(); });
}
