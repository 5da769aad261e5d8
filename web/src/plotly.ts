// The parts of plotly the page uses, typed. Plotly is loaded as a classic script from
// /vendor/plotly.min.js (served by flyclamp from node_modules) and sets window.Plotly before the
// page's module runs; it is not bundled.

/** A trace or layout object as plotly takes it: plain data, checked by plotly itself. */
export type PlotSpec = Record<string, unknown>;

export interface PlotPoint { x: number; y: number; curveNumber: number; pointNumber: number; data: PlotSpec }
export interface PlotClickEvent { points: PlotPoint[] }

export interface PlotAxis { l2p(value: number): number; p2l(pixel: number): number; range: [number, number]; type: string }

/** A div plotly has drawn into. */
export interface PlotElement extends HTMLElement {
  data?: PlotSpec[];
  layout?: PlotSpec;
  _fullLayout?: { xaxis: PlotAxis; yaxis: PlotAxis; _size: { l: number; t: number; w: number; h: number } };
  on?(event: 'plotly_click', handler: (event: PlotClickEvent) => void): void;
}

export interface PlotlyApi {
  react(element: HTMLElement, data: PlotSpec[], layout: PlotSpec, config?: PlotSpec): Promise<PlotElement>;
  purge(element: HTMLElement): void;
  Plots: { resize(element: HTMLElement): void };
  Icons: Record<string, unknown>;
  toImage(figure: { data: PlotSpec[]; layout: PlotSpec }, options: PlotSpec): Promise<string>;
}

/** Undefined when the script did not load (the page says so instead of drawing). */
export const Plotly: PlotlyApi | undefined = (window as unknown as { Plotly?: PlotlyApi }).Plotly;

/** Draws when plotly is there; a page without it reports that once, at start. */
export function react(element: HTMLElement, data: PlotSpec[], layout: PlotSpec, config?: PlotSpec): Promise<PlotElement | undefined> {
  return Plotly ? Plotly.react(element, data, layout, config) : Promise.resolve(undefined);
}

export function purge(element: HTMLElement): void { Plotly?.purge(element); }
