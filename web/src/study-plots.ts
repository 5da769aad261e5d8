// A study's plot: the settled peak against the varied field (a range), or the peaks' histograms
// (Monte Carlo), the bare variant on its own axis so the clamped spreads keep a readable scale.

import { $ } from './dom.js';
import type { StudyPoint, SweepAnswer, VariantName } from './api.js';
import { fmtNumber, scaleFor } from './format.js';
import { formField } from './fields.js';
import { unitOf } from './form-values.js';
import { react, type PlotSpec } from './plotly.js';
import { AXIS, BASE_LAYOUT, COLOURS, DERATED_COLOUR, describePlot, LEGEND_ON_TOP, level, levelTag, plotConfig, RATING_COLOUR, REFERENCE_COLOUR, REFERENCE_TEXT, variantLabel } from './plot-style.js';

const plot = (): HTMLElement => $('#sweep-plot');

export function studyVariantLabel(v: VariantName, points: readonly StudyPoint[]): string {
  const first = points.find((p) => p.variants?.[v]);
  return first?.variants ? variantLabel(v, first.variants) : v;
}

/** Rating and derated limit at a point, as the answer gives them (they follow a varied rating). */
export function limitsAt(point: StudyPoint | undefined, data: SweepAnswer): { rating: number; derated: number } {
  return { rating: point?.voltageRating ?? data.voltageRating, derated: point?.deratedLimit ?? data.deratedLimit };
}


export function drawStudyGrid(data: SweepAnswer, present: readonly VariantName[], path: string, nominals: Record<string, number | undefined>): void {
  const points = data.points;
  const values = points.map((p) => p.values[path]!);
  const { scale, label } = scaleFor(values, unitOf(path));
  const x = values.map((v) => v / scale);
  const field = formField(path);
  const traces: PlotSpec[] = present.map((v) => ({
    type: 'scatter', mode: 'lines+markers', meta: `variant:${v}`, name: studyVariantLabel(v, points),
    x, y: points.map((p) => p.variants?.[v]?.peakDrainVoltage ?? null),
    customdata: points.map((p) => p.index + 1),
    line: { color: COLOURS[v], width: 1.8 }, marker: { color: COLOURS[v], size: 7 },
    hovertemplate: `%{y:.1f} V at %{x:.4g} ${label}<extra>${v} · point %{customdata}</extra>`,
  }));
  const lims = points.map((p) => limitsAt(p, data));
  const flat = lims.every((l) => Math.abs(l.rating - lims[0]!.rating) < 1e-9);
  const xs = [Math.min(...x), Math.max(...x)] as const;
  if (flat) {
    traces.push(
      level(xs[0], xs[1], data.voltageRating, `rating ${fmtNumber(data.voltageRating)} V`, 'limit:rating', RATING_COLOUR, 'dash', 1.6),
      level(xs[0], xs[1], data.deratedLimit, `derated limit ${fmtNumber(data.deratedLimit)} V`, 'limit:derated', DERATED_COLOUR, 'dashdot', 1.4),
    );
  } else {
    // The rating itself is varied: its lines follow the points.
    const line = (key: 'rating' | 'derated', name: string, meta: string, colour: string, dash: string, width: number): PlotSpec => ({ type: 'scatter', mode: 'lines', name, meta, x, y: lims.map((l) => l[key]), showlegend: false, hoverinfo: 'skip', line: { color: colour, dash, width } });
    traces.push(line('rating', 'rating', 'limit:rating', RATING_COLOUR, 'dash', 1.6), line('derated', 'derated limit', 'limit:derated', DERATED_COLOUR, 'dashdot', 1.4));
  }
  const nominal = nominals[path];
  const showNominal = nominal !== undefined && nominal / scale >= xs[0] && nominal / scale <= xs[1];
  const shapes = showNominal ? [{ type: 'line', xref: 'x', yref: 'paper', x0: nominal / scale, x1: nominal / scale, y0: 0, y1: 1, line: { color: REFERENCE_COLOUR, width: 1, dash: 'dot' } }] : [];
  const last = lims[lims.length - 1]!;
  const annotations: PlotSpec[] = flat ? [
    levelTag(data.voltageRating, `rating ${fmtNumber(data.voltageRating)} V`, RATING_COLOUR, 2),
    levelTag(data.deratedLimit, `derated limit ${fmtNumber(data.deratedLimit)} V`, DERATED_COLOUR, 2),
  ] : [
    { ...levelTag(last.rating, 'rating', RATING_COLOUR, 2), x: x[x.length - 1], xref: 'x' },
    { ...levelTag(last.derated, 'derated limit', DERATED_COLOUR, 2), x: x[x.length - 1], xref: 'x' },
  ];
  if (showNominal) annotations.push({ x: nominal / scale, xref: 'x', y: 0, yref: 'paper', yanchor: 'bottom', xanchor: 'left', text: ' value in the form', showarrow: false, font: { color: REFERENCE_TEXT, size: 11.5 } });
  const what = `${field ? field.label.toLowerCase() : path}${label ? ` (${label})` : ''}`;
  const layout = {
    ...BASE_LAYOUT,
    margin: { l: 62, r: 14, t: 34, b: 52 },
    legend: LEGEND_ON_TOP,
    xaxis: { ...AXIS, title: { text: what }, zeroline: false },
    yaxis: { ...AXIS, title: { text: 'settled peak drain–source voltage (V)' } },
    shapes, annotations,
  };
  const element = plot();
  element.dataset.kind = 'grid';
  void react(element, traces, layout, plotConfig('study', present));
  describePlot(element, `Settled peak drain voltage against ${what}, ${present.join(', ')}`,
    `${points.length} points; the worst point per variant and every point are in the tables below.`);
}

const peaksOf = (points: readonly StudyPoint[], v: VariantName): number[] =>
  points.map((p) => p.variants?.[v]?.peakDrainVoltage).filter((y): y is number => y !== undefined && Number.isFinite(y));

/** The span of `values` with 6 % of room on each side (a flat set gets a volt). */
function spanOf(values: readonly number[]): [number, number] {
  const lo = Math.min(...values), hi = Math.max(...values);
  const pad = Math.max(0.06 * (hi - lo), 0.5);
  return [lo - pad, hi + pad];
}

export function drawStudyHistogram(data: SweepAnswer, present: readonly VariantName[]): void {
  const points = data.points;
  // The bare peaks sit far above the clamped ones: on one axis the clamped spreads become thin bars.
  // With a clamped variant present, bare gets its own axis at the right.
  const split = present.includes('bare') && present.length > 1;
  const axisOf = (v: VariantName): 'x' | 'x2' => (split && v === 'bare' ? 'x2' : 'x');
  const ranges = new Map<'x' | 'x2', [number, number]>();
  const bins = new Map<'x' | 'x2', PlotSpec>();
  for (const axis of ['x', 'x2'] as const) {
    const peaks = present.filter((v) => axisOf(v) === axis).flatMap((v) => peaksOf(points, v));
    if (peaks.length === 0) continue;
    ranges.set(axis, spanOf(peaks));
    // One set of bins per axis, so the variants on it are counted alike and none turns into slivers.
    const lo = Math.min(...peaks), hi = Math.max(...peaks);
    const count = Math.max(8, Math.min(40, Math.round(2 * Math.sqrt(peaks.length / present.filter((v) => axisOf(v) === axis).length))));
    // Peaks held at one level (breakdown) differ by rounding only: one bin of half a volt or more.
    const size = hi - lo > 1e-4 * Math.abs(hi) ? (hi - lo) / count : Math.max(0.5, 1e-3 * Math.abs(hi));
    bins.set(axis, { start: lo - size / 2, end: hi + size / 2, size });
  }
  const traces: PlotSpec[] = present.map((v) => ({
    type: 'histogram', meta: `variant:${v}`, name: studyVariantLabel(v, points), x: peaksOf(points, v), xaxis: axisOf(v),
    xbins: bins.get(axisOf(v)), autobinx: false,
    marker: { color: COLOURS[v], line: { color: COLOURS[v], width: 1 } }, opacity: 0.6,
    hovertemplate: `%{y} samples at %{x} V<extra>${v}</extra>`,
  }));
  // The derated limit, what a clamp is sized against, is always drawn on the first axis; otherwise
  // a limit line is drawn on an axis whose span it falls in, or reaches within half that span.
  const shapes: PlotSpec[] = [], annotations: PlotSpec[] = [];
  for (const [axis, [lo, hi]] of ranges) {
    const reach = 0.5 * (hi - lo);
    const range: [number, number] = [lo, hi];
    for (const [x, colour, dash, text, anchor] of [[data.deratedLimit, DERATED_COLOUR, 'dashdot', `derated limit ${fmtNumber(data.deratedLimit)} V `, 'right'], [data.voltageRating, RATING_COLOUR, 'dash', ` rating ${fmtNumber(data.voltageRating)} V`, 'left']] as const) {
      const always = axis === 'x' && x === data.deratedLimit;
      if (!always && (x < lo - reach || x > hi + reach)) continue;
      const pad = 0.03 * (Math.max(hi, x) - Math.min(lo, x));
      range[0] = Math.min(range[0], x - pad); range[1] = Math.max(range[1], x + pad);
      shapes.push({ type: 'line', xref: axis, yref: 'paper', x0: x, x1: x, y0: 0, y1: 1, line: { color: colour, dash, width: 1.6 } });
      // Written up along its line, so the label does not sit on the bars beside it.
      annotations.push({ x, xref: axis, y: 1, yref: 'paper', yanchor: 'top', xanchor: anchor, textangle: -90, text, showarrow: false, font: { color: colour, size: 12 }, bgcolor: 'rgba(255,253,248,0.85)' });
    }
    ranges.set(axis, range);
  }
  const title = 'settled peak drain–source voltage (V)';
  const layout: PlotSpec = {
    ...BASE_LAYOUT,
    barmode: 'overlay',
    margin: { l: 62, r: 14, t: 34, b: 52 },
    legend: LEGEND_ON_TOP,
    xaxis: { ...AXIS, title: { text: split ? `${title}, with a clamp` : title }, range: ranges.get('x'), domain: split ? [0, 0.64] : [0, 1] },
    yaxis: { ...AXIS, title: { text: 'samples' } },
    ...(split ? { xaxis2: { ...AXIS, title: { text: 'bare, no clamp (V)' }, range: ranges.get('x2'), domain: [0.72, 1], anchor: 'y' } } : {}),
    shapes, annotations,
  };
  const element = plot();
  element.dataset.kind = 'monte-carlo';
  void react(element, traces, layout, plotConfig('study', present));
  describePlot(element, `Histogram of the settled peak drain voltage over ${points.length} Monte Carlo samples, ${present.join(', ')}`,
    `Derated limit ${fmtNumber(data.deratedLimit)} V, rating ${fmtNumber(data.voltageRating)} V; the percentiles are in the table below.${split ? ' The bare variant has its own axis at the right.' : ''}`);
}
