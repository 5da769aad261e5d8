// What the page's modules share: the last good answers and the hooks main.ts wires between them
// (so modules call each other through here rather than importing in a circle).

import type { DesignAnswer, RawScenario, SimulateAnswer, SweepAnswer } from './api.js';

export interface SimulationShown { scenario: RawScenario; result: SimulateAnswer; label: string; avalanche: number | undefined }
export interface TimeWindow { startSeconds: number; endSeconds: number }
export interface StudyShown { request: StudyRequest; data: SweepAnswer; nominals: Record<string, number | undefined>; seconds: string }
export interface StudyRequest { body: RawScenario; label: string; count: number; path?: string }

export const state = {
  /** The last successful whole-cycle run: what the plots, the table and the zoom refer to. */
  last: null as SimulationShown | null,
  /** What the bundled list entry or the file was called, for the status line. */
  sourceLabel: '',
  /** The scenario as loaded (the bundled file or the opened one), which a shared link is a change of. */
  loaded: { id: '', raw: {} as RawScenario },
  /** Name of the opened file without .json, for the saved copy's name. */
  fileBase: '',
  design: null as null | { scenario: RawScenario; data: DesignAnswer },
  study: null as StudyShown | null,
};

/** Set by main.ts. */
export const hooks = {
  /** The form changed (typed, toggled, or written by a panel). */
  edited: (): void => {},
  /** Which study fields exist follows the form's blocks and control. */
  refreshStudyFields: (): void => {},
  /** Extra traces on the drain plot (an opened scope capture). */
  drainExtras: (_result: SimulateAnswer): Array<Record<string, unknown>> => [],
  redrawDrain: (): void => {},
  /** A whole-cycle run succeeded after `seconds` (the request's wall time). */
  simulated: (_seconds: number): void => {},
};
