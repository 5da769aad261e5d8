// The page's client for the flyclamp server: typed answers (the server's own types), one error
// shape, and cancellation of requests that a newer one replaces.

import type {
  CaptureResponse, DesignResponse, ErrorResponse, FitResponse, ReducedTrace, ScenarioListResponse, SimulateResponse, StudyPoint,
  SweepResponse, ValidationIssue,
} from '../../src/contract/api.js';
import type { VariantName } from '../../src/circuit/scenario.js';

export type { VariantName, ReducedTrace, StudyPoint };

// The server's answers, as the contract states them (src/contract/api.ts).
export type ApiIssue = ValidationIssue;
export type ErrorAnswer = Partial<ErrorResponse>;
export type SimulateAnswer = SimulateResponse;
export type DesignAnswer = DesignResponse;
export type CaptureAnswer = CaptureResponse;
export type FitAnswer = FitResponse;
export type SweepAnswer = SweepResponse;
export type ScenarioListAnswer = ScenarioListResponse;

/** A scenario as it travels: the file's JSON, values as typed. */
export type RawScenario = Record<string, unknown>;

export interface Answer<T> {
  response: Response;
  /** The parsed body when the status is 2xx. */
  ok: T | null;
  /** The error body otherwise (or null when the body was not JSON). */
  error: ErrorAnswer | null;
}

export class Unreachable extends Error {
  constructor() { super('could not reach the flyclamp server; is it still running?'); }
}

/** POSTs JSON; a network failure throws Unreachable, an abort rethrows the AbortError. */
export async function postJson<T>(url: string, body: unknown, signal?: AbortSignal): Promise<Answer<T>> {
  let response: Response;
  try {
    response = await fetch(url, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify(body), ...(signal ? { signal } : {}) });
  } catch (error) {
    if (signal?.aborted) throw error;
    throw new Unreachable();
  }
  return readAnswer<T>(response);
}

export async function getJson<T>(url: string): Promise<Answer<T>> {
  let response: Response;
  try { response = await fetch(url); } catch { throw new Unreachable(); }
  return readAnswer<T>(response);
}

async function readAnswer<T>(response: Response): Promise<Answer<T>> {
  const text = await response.text();
  let data: unknown = null;
  try { data = JSON.parse(text); } catch { /* a proxy's HTML page, say: reported by its status */ }
  if (response.ok && data !== null && typeof data === 'object') return { response, ok: data as T, error: null };
  return { response, ok: null, error: data !== null && typeof data === 'object' ? data as ErrorAnswer : null };
}

/** The server's issues when it answered 400 with some. */
export function issuesOf(answer: Answer<unknown>): ApiIssue[] | undefined {
  return answer.response.status === 400 && Array.isArray(answer.error?.issues) ? answer.error.issues : undefined;
}

/** One line for a failure that is not about a field, with a hint per status. */
export function failureLine(answer: Answer<unknown>, hint504: string): string {
  const { response, error } = answer;
  const reason = (typeof error?.error === 'string' ? error.error : `the server answered ${response.status} ${response.statusText}`).replace(/\.$/, '');
  const hint = response.status === 504 ? hint504
    : response.status === 503 ? ' Other runs are in progress; try again in a moment.'
      : response.status === 413 ? ' A scenario is normally a few kilobytes; check what was loaded.' : '';
  return `${reason.charAt(0).toUpperCase()}${reason.slice(1)}.${hint}`;
}
