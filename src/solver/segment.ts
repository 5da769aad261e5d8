// The contract between the cycle loop and an integrator: integrate one mode's vector field
// from t0 until tEnd or the first rising zero crossing of one of the event functions.
// Time is in the model's time unit (µs).

import type { AffineSystem } from '../model/affine.js';

/** A scalar function of the state whose rising zero crossing is an event. */
export type EventFunction = (x: ArrayLike<number>) => number;

/** Evaluates the solution at a time inside the piece being observed, writing the state into `out`. */
export type StateAt = (t: number, out: number[]) => void;

/** Sees each accepted piece [tStart, tEnd] of the solution, with a way to evaluate it inside. */
export type PieceObserver = (tStart: number, tEnd: number, stateAt: StateAt) => void;

export interface SegmentProblem {
  /** dx/dt per time unit, written into `out`. */
  derivative: (x: ArrayLike<number>, out: number[]) => number[];
  /** The same field as dx/dt = A·x + b, when the mode is linear (for exact propagators). */
  system: AffineSystem | null;
  t0: number;
  x0: readonly number[];
  tEnd: number;
  /** The segment stops at the first rising zero crossing (negative to non-negative) of any of these. */
  events: readonly EventFunction[];
  /**
   * The components the field can move (ascending); the others keep x0's values through the
   * segment. An integrator may integrate only these. All of them when absent.
   */
  moving?: readonly number[];
  /** A starting step: the last good step taken in the same mode, or a guess. */
  initialStep: number;
  maxStep: number;
  observer?: PieceObserver;
}

export interface SegmentResult {
  status: 'reached-end' | 'event' | 'failed';
  t: number;
  x: number[];
  /** Index into `events` of the crossing that stopped the segment, or -1. */
  eventIndex: number;
  /** Length of the last full accepted step, for the next restart in this mode. */
  lastStep: number;
  evaluations: number;
  steps: number;
  message?: string;
}

export interface SegmentIntegrator {
  integrate(problem: SegmentProblem): SegmentResult;
}
