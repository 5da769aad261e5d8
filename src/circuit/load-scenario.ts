import { readFile } from 'node:fs/promises';
import { validateScenario, type ValidationIssue, type ValidationResult } from './validate-scenario.js';

/** Reads and validates a scenario file; unreadable files and bad JSON become issues too. */
export async function loadScenarioFile(file: string): Promise<ValidationResult & { raw?: unknown }> {
  let text: string;
  try {
    text = await readFile(file, 'utf8');
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code ?? 'unknown error';
    return { ok: false, issues: [{ path: file, message: `expected a readable scenario file, found ${code}` }] };
  }
  let raw: unknown;
  try {
    raw = JSON.parse(text);
  } catch (error) {
    const issue: ValidationIssue = { path: file, message: `expected JSON, found a syntax error: ${(error as Error).message}` };
    return { ok: false, issues: [issue] };
  }
  return { ...validateScenario(raw), raw };
}
