// Validation at the edge: a scenario object (parsed JSON, an HTTP body) becomes a Scenario or a
// list of issues, each naming its field path, what was expected and what was found. The rules live
// in the contract (src/contract/scenario-schema.ts); this wrapper adds the warnings and keeps the
// callers' one-call interface.

import { plausibilityWarnings } from './plausibility.js';
import type { Scenario } from './scenario.js';
import { physicsChecks, scenarioSchema, toValidationIssues } from '../contract/scenario-schema.js';
import type { ValidationIssue } from '../contract/issues.js';

export type { ValidationIssue } from '../contract/issues.js';
export { formatIssues } from '../contract/issues.js';
export { fieldUnit, MAX_CURVE_POINTS } from '../contract/field-metadata.js';

export type ValidationResult =
  | { ok: true; scenario: Scenario; warnings: ValidationIssue[] }
  | { ok: false; issues: ValidationIssue[] };

/** Validates a scenario object; all issues are reported at once. */
export function validateScenario(input: unknown): ValidationResult {
  const parsed = scenarioSchema.safeParse(input);
  if (!parsed.success) return { ok: false, issues: toValidationIssues(parsed.error.issues, input) };
  const scenario = parsed.data;
  return { ok: true, scenario, warnings: scenarioWarnings(scenario) };
}

/** What a valid scenario is warned about: values far from usual, and physics that is unusual but runs. */
export function scenarioWarnings(scenario: Scenario): ValidationIssue[] {
  return [...plausibilityWarnings(scenario), ...physicsChecks(scenario).warnings];
}
