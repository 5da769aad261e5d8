// The HTTP API's requests (zod schemas the server validates bodies with) and answers (types the
// server's handlers are checked against and the page's client reads). A request's issues name
// scenario fields as a scenario file does ("switch.frequency") and the rest of the body as body.…
//
// Free of node-only modules at run time (the page imports it through vite): the answer types are
// imported as types only.

import * as z from 'zod';
import { VARIANT_NAMES, type VariantName } from '../circuit/scenario.js';
import type { SimulationReport } from '../analysis/simulation-report.js';
import type { ReducedTrace } from '../analysis/display-reduction.js';
import type { DesignResult } from '../design/design-clamp.js';
import type { FitJson } from '../capture/fit-json.js';
import type { StudyPoint } from '../study/run-study.js';
import type { PeakDistribution, WorstCase } from '../study/study-summary.js';
import type { DisplayTraces, StartStates } from '../server/simulate-task.js';
import type { CaptureView } from '../server/fit-task.js';
import { scenarioSchema, toValidationIssues } from './scenario-schema.js';
import { issueAt, type PathKey, type ValidationIssue } from './issues.js';

/** Display columns of a simulate answer's traces. */
export const MIN_COLUMNS = 10;
export const MAX_COLUMNS = 4000;
/** Longest start state a simulate request may send per variant (the simulator's largest state). */
export const MAX_START_STATE_LENGTH = 10;
/** Longest column name or position of a capture request. */
export const MAX_COLUMN_NAME_LENGTH = 64;

/** A value as found, short (the limits middleware has bounded its nesting; this bounds its length). */
export function describeBrief(value: unknown): string {
  const text = JSON.stringify(value) ?? String(value);
  return text.length > 80 ? `${text.slice(0, 77)}...` : text;
}

const isVariantName = (value: unknown): value is VariantName => VARIANT_NAMES.some((name) => name === value);

const variantsSchema = z.custom<VariantName[]>(
  (value) => Array.isArray(value) && value.length > 0 && value.every(isVariantName),
  { error: (issue) => `expected a non-empty list of ${VARIANT_NAMES.join(', ')}, found ${describeBrief(issue.input)}` },
).refine((names) => new Set(names).size === names.length, { error: (issue) => `expected each variant at most once, found ${describeBrief(issue.input)}` });

export interface TimeWindow { startSeconds: number; endSeconds: number }
const windowSchema = z.custom<TimeWindow>(
  (value) => typeof value === 'object' && value !== null
    && typeof Reflect.get(value, 'startSeconds') === 'number' && typeof Reflect.get(value, 'endSeconds') === 'number'
    && Reflect.get(value, 'endSeconds') > Reflect.get(value, 'startSeconds'),
  { error: (issue) => `expected { startSeconds, endSeconds } with end after start, found ${describeBrief(issue.input)}` },
);

const columnsSchema = z.custom<number>(
  (value) => Number.isInteger(value) && typeof value === 'number' && value >= MIN_COLUMNS && value <= MAX_COLUMNS,
  { error: (issue) => `expected a whole number from ${MIN_COLUMNS} to ${MAX_COLUMNS}, found ${describeBrief(issue.input)}` },
);

const textList = z.custom<string[]>(
  (value) => Array.isArray(value) && value.every((item) => typeof item === 'string'),
  { error: (issue) => `expected a list of texts, found ${describeBrief(issue.input)}` },
);
const numberOrText = (what: string) => z.custom<number | string>(
  (value) => typeof value === 'number' || typeof value === 'string',
  { error: (issue) => `expected ${what}, found ${describeBrief(issue.input)}` },
);

const captureText = z.custom<string>((value) => typeof value === 'string', {
  error: (issue) => `expected the capture's CSV text (a header block, then rows of time and voltage), found ${issue.input === undefined ? 'nothing' : describeBrief(issue.input)}`,
});
const captureColumn = z.custom<string | number | null>(
  (value) => value === null || value === '' || (typeof value === 'string' && value.length <= MAX_COLUMN_NAME_LENGTH)
    || (typeof value === 'number' && Number.isInteger(value) && value >= 1 && value <= 64),
  { error: (issue) => `expected the drain column's name or its position (1–64, the time column is 1), found ${describeBrief(issue.input)}` },
);

// A variant's period-start state from an earlier answer, sent back as a warm start. Its length is
// only bounded here: one that does not fit the variant's state (another structure) is ignored.
const startState = z.custom<number[]>(
  (value) => Array.isArray(value) && value.length >= 1 && value.length <= MAX_START_STATE_LENGTH
    && value.every((v) => typeof v === 'number' && Number.isFinite(v)),
  { error: (issue) => `expected a list of 1 to ${MAX_START_STATE_LENGTH} finite numbers (the variant's startStates entry of an earlier answer), found ${describeBrief(issue.input)}` },
);
const startStatesSchema = z.strictObject(
  Object.fromEntries(VARIANT_NAMES.map((name) => [name, startState.optional()])) as Record<VariantName, z.ZodOptional<typeof startState>>,
  { error: (issue) => (issue.code === 'unrecognized_keys'
    ? `expected variant names (${VARIANT_NAMES.join(', ')}) as keys, found ${issue.keys.map((k) => JSON.stringify(k)).join(', ')}`
    : `expected an object of start states by variant (an earlier answer's startStates), found ${describeBrief(issue.input)}`) },
);

/** A body: a strict object, so a misspelt request field is reported rather than ignored. */
const body = <Shape extends z.ZodRawShape>(shape: Shape, mainField: string) => z.strictObject(shape, {
  error: (issue) => (issue.code === 'invalid_type' ? `expected a JSON object with a "${mainField}" field, found ${Array.isArray(issue.input) ? 'a list' : typeof issue.input}` : undefined),
});

/** POST /api/simulate */
export const simulateRequestSchema = body({
  scenario: scenarioSchema,
  variants: variantsSchema.optional(),
  window: windowSchema.optional(),
  columns: columnsSchema.optional(),
  /** An earlier answer's startStates: each variant starts from its state (a warm start) when it fits. */
  startStates: startStatesSchema.optional(),
}, 'scenario');

/** POST /api/design (`columns` is accepted for the page's sake; the design's traces have their own). */
export const designRequestSchema = body({
  scenario: scenarioSchema,
  columns: columnsSchema.optional(),
}, 'scenario');

/** POST /api/sweep: the words of `flyclamp sweep` as fields (each checked by the study's parser, naming its field). */
export const sweepRequestSchema = body({
  scenario: scenarioSchema,
  vary: textList.optional(),
  corners: z.boolean({ error: (issue) => `expected true or false, found ${describeBrief(issue.input)}` }).optional(),
  samples: numberOrText('a whole number of samples').optional(),
  tolerance: textList.optional(),
  seed: numberOrText('a whole number').optional(),
}, 'scenario');

/** POST /api/capture */
export const captureRequestSchema = body({
  capture: captureText,
  column: captureColumn.optional(),
}, 'capture');

/** POST /api/fit */
export const fitRequestSchema = body({
  scenario: scenarioSchema,
  capture: captureText,
  column: captureColumn.optional(),
}, 'scenario');

export type SimulateRequest = z.output<typeof simulateRequestSchema>;
export type DesignRequest = z.output<typeof designRequestSchema>;
export type SweepRequest = z.output<typeof sweepRequestSchema>;
export type CaptureRequest = z.output<typeof captureRequestSchema>;
export type FitRequest = z.output<typeof fitRequestSchema>;
/** What the page sends: the scenario as a file holds it (numbers or SI strings). */
export type SimulateRequestBody = z.input<typeof simulateRequestSchema>;
export type DesignRequestBody = z.input<typeof designRequestSchema>;
export type SweepRequestBody = z.input<typeof sweepRequestSchema>;
export type CaptureRequestBody = z.input<typeof captureRequestSchema>;
export type FitRequestBody = z.input<typeof fitRequestSchema>;

export type RequestParse<T> = { ok: true; request: T } | { ok: false; issues: ValidationIssue[] };

/**
 * Validates a request body. Issues inside the scenario are named as in a scenario file (the CLI
 * names them the same way); every other field as body.…
 */
export function parseRequest<T>(schema: z.ZodType<T>, input: unknown): RequestParse<T> {
  const parsed = schema.safeParse(input);
  if (parsed.success) return { ok: true, request: parsed.data };
  const knownFields = schemaKeys(schema);
  const issues: ValidationIssue[] = [];
  for (const zodIssue of parsed.error.issues) {
    const [head, ...rest] = zodIssue.path;
    if (head === 'scenario') {
      const scenario = typeof input === 'object' && input !== null ? Reflect.get(input, 'scenario') : undefined;
      issues.push(...toValidationIssues([{ ...zodIssue, path: rest }], scenario));
    } else if (zodIssue.code === 'unrecognized_keys' && zodIssue.path.length === 0) {
      for (const key of zodIssue.keys) issues.push(issueAt(['body', key], `unknown field (expected ${knownFields.join(', ')})`));
    } else {
      issues.push(issueAt(['body', ...zodIssue.path.filter((key): key is PathKey => typeof key !== 'symbol')], zodIssue.message));
    }
  }
  return { ok: false, issues };
}

function schemaKeys(schema: z.ZodType): string[] {
  return schema instanceof z.ZodObject ? Object.keys(schema.shape) : [];
}

// ---- Answers ----

/** Every 4xx/5xx answer: what went wrong, and for a bad request the issues, each with its path. */
export interface ErrorResponse { error: string; issues?: ValidationIssue[] }

/** GET /api/health */
export interface HealthResponse {
  ok: true;
  runs: { running: number; queued: number; slots: number };
  /** Worker threads started since the server began: more than its slots means threads were ended and replaced (each costs about a second). */
  workerThreadsStarted: number;
}

/** GET /api/scenarios (GET /api/scenarios/:id answers the file as it is). */
export interface ScenarioListResponse { scenarios: Array<{ id: string; name: string }> }

/** POST /api/simulate */
export interface SimulateResponse {
  ok: true;
  report: SimulationReport;
  traces: Partial<Record<VariantName, DisplayTraces>>;
  periodSeconds: number;
  recordedSeconds: number;
  /**
   * Per variant whose orbit settled, its period-start state on the orbit (the simulator's own
   * units and order). Sent back with an edit of the same circuit, the runs start near the orbit.
   */
  startStates: StartStates;
  warnings: ValidationIssue[];
}

/** POST /api/design */
export interface DesignResponse {
  ok: true;
  design: DesignResult;
  worstCaseTraces: Partial<Record<VariantName, ReducedTrace>>;
  warnings: ValidationIssue[];
}

/** POST /api/sweep */
export interface SweepResponse {
  kind: 'grid' | 'corners' | 'monte-carlo';
  voltageRating: number;
  deratedLimit: number;
  points: StudyPoint[];
  worst: Partial<Record<VariantName, WorstCase>>;
  monteCarlo?: Partial<Record<VariantName, PeakDistribution>>;
  pointsRequested: number;
  /** Why the sweep stopped before every point finished (its time cap). */
  interrupted?: string;
}

/** POST /api/capture: the capture read and measured. */
export type CaptureResponse = { ok: true } & CaptureView;

/** POST /api/fit: the `fit --json` object plus what the page draws. */
export type FitResponse = FitJson & {
  variant: VariantName;
  offset: number;
  capture: ReducedTrace;
  simulatedDrain: ReducedTrace;
  columnName: string;
  midpointVolts: number;
  warnings: ValidationIssue[];
};

export type { ReducedTrace, SimulationReport, DesignResult, FitJson, StudyPoint, WorstCase, PeakDistribution, ValidationIssue, DisplayTraces, CaptureView, StartStates };
