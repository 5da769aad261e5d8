// The plots' shared look, the variants' colours and the export settings.

import type { VariantName } from './api.js';
import { fmtNumber, safeFileName } from './format.js';
import { Plotly, type PlotElement, type PlotSpec } from './plotly.js';

export const VARIANTS: readonly VariantName[] = ['bare', 'clamp', 'damped'];
export const COLOURS: Readonly<Record<VariantName, string>> = { bare: '#c4522a', clamp: '#3b4fa8', damped: '#13897a' };
export const RATING_COLOUR = '#9b1b30';
export const DERATED_COLOUR = '#a87000';
export const AVALANCHE_COLOUR = '#4a3b52';
export const REFERENCE_COLOUR = '#8c8372';
export const REFERENCE_TEXT = '#6f6757';
/** Seconds to the plots' microseconds. */
export const US = 1e6;

export const AXIS: PlotSpec = { gridcolor: '#e8e1d2', zerolinecolor: '#cfc6b3', linecolor: '#b9ae98', tickcolor: '#b9ae98', ticks: 'outside', mirror: false };
/** A numeric axis: with its type given, plotly does not scan the data at each draw to guess one. */
export const LINEAR_AXIS: PlotSpec = { ...AXIS, type: 'linear' };
export const BASE_LAYOUT: PlotSpec = {
  paper_bgcolor: '#fffdf8', plot_bgcolor: '#fffdf8',
  font: { family: '"Segoe UI", "Noto Sans", "DejaVu Sans", sans-serif', size: 12, color: '#2a2f33' },
  hovermode: 'closest', hoverlabel: { bgcolor: '#fffdf8', bordercolor: '#b9ae98', font: { color: '#2a2f33' } },
};
export const LEGEND_ON_TOP: PlotSpec = { orientation: 'h', x: 0, y: 1.02, yanchor: 'bottom', font: { size: 12.5 } };

/**
 * Nothing of a design may leave the machine: no send-to-cloud, chart-studio or link controls, only
 * the local image export.
 */
const PLOT_CONFIG: PlotSpec = {
  responsive: true, displaylogo: false, showLink: false, showSendToCloud: false, showEditInChartStudio: false,
  modeBarButtonsToRemove: ['select2d', 'lasso2d', 'autoScale2d', 'sendDataToCloud'],
};
const REMOVED = PLOT_CONFIG.modeBarButtonsToRemove as string[];

/** The design's name as the form holds it. */
export function designName(): string {
  const input = document.querySelector<HTMLInputElement>('[data-path="name"]');
  return safeFileName(input?.value ?? '') || 'flyclamp';
}

/** Per plot, the last config and what it was made for. */
const configs = new Map<string, { key: string; config: PlotSpec }>();

/**
 * The plot's config. Its image export (the camera control) is the page's own: a PNG named
 * "<scenario> - <what> - <variants>" with that title drawn on it, made in this browser.
 *
 * The same object comes back while the name and the variants stay: Plotly.react compares configs
 * and rebuilds the whole plot on any difference (a new click function is one), where an equal one
 * only redraws the data — an edit's re-plot took about 30 ms less.
 */
export function plotConfig(what: string, variants: readonly string[] = []): PlotSpec {
  const key = [designName(), ...variants].join('\u0000');
  const kept = configs.get(what);
  if (kept?.key === key) return kept.config;
  const config = makePlotConfig(what, variants);
  configs.set(what, { key, config });
  return config;
}

function makePlotConfig(what: string, variants: readonly string[]): PlotSpec {
  const filename = [designName(), what, ...(variants.length ? [variants.join(', ')] : [])].join(' - ');
  const title = `${designName()} — ${what}${variants.length ? ` (${variants.join(', ')})` : ''}`;
  const exportButton = {
    name: 'export-titled', title: 'Download plot as PNG, titled', icon: Plotly?.Icons.camera,
    click: (gd: PlotElement) => { void exportImage(gd, filename, title); },
  };
  return { ...PLOT_CONFIG, toImageButtonOptions: { filename, format: 'png' }, modeBarButtonsToRemove: [...REMOVED, 'toImage'], modeBarButtonsToAdd: [exportButton] };
}

/** The plot as drawn, with a title above it, downloaded as a PNG; nothing leaves the browser. */
export async function exportImage(gd: PlotElement, filename: string, title: string): Promise<void> {
  if (!Plotly || !gd.data || !gd.layout) return;
  const margin = { ...(gd.layout.margin as PlotSpec | undefined), t: 80 };
  const layout = { ...gd.layout, margin, title: { text: title, x: 0.01, xanchor: 'left', y: 0.98, yanchor: 'top', font: { size: 15, color: '#2a2f33' } } };
  const url = await Plotly.toImage({ data: gd.data, layout }, { format: 'png', width: gd.clientWidth || 1000, height: (gd.clientHeight || 450) + 46, scale: 2 });
  const link = document.createElement('a');
  link.href = url;
  link.download = `${filename}.png`;
  document.body.append(link);
  link.click();
  link.remove();
  gd.dataset.exported = title;
}

/** The plot's accessible name and description (plots are images to a screen reader). */
export function describePlot(element: HTMLElement, name: string, description: string): void {
  element.setAttribute('role', 'img');
  element.setAttribute('aria-label', name);
  let desc = element.nextElementSibling as HTMLElement | null;
  const id = `${element.id}-description`;
  if (!desc || desc.id !== id) {
    desc = document.createElement('p');
    desc.id = id;
    desc.className = 'sr-only';
    element.after(desc);
    element.setAttribute('aria-describedby', id);
  }
  desc.textContent = description;
}

export function variantLabel(v: VariantName, variants: Partial<Record<VariantName, { clampVoltageMean?: number | undefined } | undefined>>): string {
  if (v === 'bare') return 'bare · no clamp';
  if (v === 'clamp') return 'clamp · RCD clamp';
  return variants.damped?.clampVoltageMean !== undefined ? 'damped · clamp + RC damper' : 'damped · RC damper only';
}

/** A horizontal level from x0 to x1 as a trace (so it shows in hover and export). */
export function level(x0: number, x1: number, y: number, name: string, meta: string, colour: string, dash: string, width: number): PlotSpec {
  return { type: 'scatter', mode: 'lines', name, meta, x: [x0, x1], y: [y, y], showlegend: false, hoverinfo: 'skip', line: { color: colour, dash, width } };
}

/** Its label at the right edge, above (shift > 0) or below the line. */
export function levelTag(y: number, text: string, colour: string, shift: number): PlotSpec {
  return {
    x: 1, xref: 'paper', xanchor: 'right', y, yref: 'y', yanchor: shift > 0 ? 'bottom' : 'top', yshift: shift,
    text, showarrow: false, font: { color: colour, size: 12 }, bgcolor: 'rgba(255,253,248,0.85)',
  };
}

/** Rating, derated limit and Vin + VR as levels with tags, and the avalanche level when given. */
export function limitLevels(x0: number, x1: number, limits: { rating: number; derated: number; plateau: number; avalanche?: number | undefined; plateauName?: string; deratedNote?: string; avalancheNote?: string }): { traces: PlotSpec[]; tags: PlotSpec[] } {
  const { rating, derated, plateau, avalanche } = limits;
  const plateauName = limits.plateauName ?? 'Vin + VR';
  const traces = [
    level(x0, x1, rating, `rating ${fmtNumber(rating)} V`, 'limit:rating', RATING_COLOUR, 'dash', 1.6),
    level(x0, x1, derated, `derated limit ${fmtNumber(derated)} V`, 'limit:derated', DERATED_COLOUR, 'dashdot', 1.4),
    level(x0, x1, plateau, `Vin + VR ${fmtNumber(plateau)} V`, 'ref:plateau', REFERENCE_COLOUR, 'dot', 1),
  ];
  const tags = [
    levelTag(rating, `rating ${fmtNumber(rating)} V`, RATING_COLOUR, 2),
    levelTag(derated, `derated limit ${fmtNumber(derated)} V${limits.deratedNote ?? ''}`, DERATED_COLOUR, 2),
    levelTag(plateau, `${plateauName} ${fmtNumber(plateau)} V`, REFERENCE_TEXT, -2),
  ];
  // Where the transistor breaks down and holds the drain (README, switch.avalancheVoltage).
  if (avalanche !== undefined && Number.isFinite(avalanche) && avalanche > 0) {
    traces.push(level(x0, x1, avalanche, `avalanche ${fmtNumber(avalanche)} V`, 'limit:avalanche', AVALANCHE_COLOUR, 'longdash', 1.4));
    tags.push(levelTag(avalanche, `avalanche ${fmtNumber(avalanche)} V${limits.avalancheNote ?? ''}`, AVALANCHE_COLOUR, 2));
  }
  return { traces, tags };
}
