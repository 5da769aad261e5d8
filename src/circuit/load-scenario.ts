import type { Stats } from 'node:fs';
import { open, stat } from 'node:fs/promises';
import { validateScenario, type ValidationResult } from './validate-scenario.js';
import { issueAtPlace, type ValidationIssue } from '../contract/issues.js';
import { checkInputLimits } from './input-limits.js';
import { duplicateKeyIssues } from './duplicate-keys.js';

/** A scenario file is a few kB; the cap matches the HTTP body limit, so both edges accept the same. */
export const MAX_SCENARIO_FILE_BYTES = 256 * 1024;

type Loaded = ValidationResult & { raw?: unknown };
const refused = (file: string, message: string): Loaded => ({ ok: false, issues: [issueAtPlace(file, message)] });

/** Reads and validates a scenario file; unreadable, oversized and malformed files become issues too. */
export async function loadScenarioFile(file: string): Promise<Loaded> {
  let text: string;
  try {
    // Only regular files are read: opening a FIFO blocks until a writer comes, and a device
    // (/dev/zero) never ends. Checked by path before opening and through the handle after, so the
    // file checked is the file read.
    const kind = (info: Stats): string | undefined => (info.isFile() ? undefined : info.isDirectory() ? 'a directory' : 'a special file (device, FIFO or socket)');
    const before = kind(await stat(file));
    if (before) return refused(file, `expected a regular scenario file, found ${before}`);
    const handle = await open(file, 'r');
    try {
      const info = await handle.stat();
      const after = kind(info);
      if (after) return refused(file, `expected a regular scenario file, found ${after}`);
      if (info.size > MAX_SCENARIO_FILE_BYTES) return refused(file, `expected a scenario file of at most ${MAX_SCENARIO_FILE_BYTES / 1024} kB, found ${Math.ceil(info.size / 1024)} kB`);
      text = await handle.readFile('utf8');
    } finally {
      await handle.close();
    }
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code ?? 'unknown error';
    return refused(file, `expected a readable scenario file, found ${code}`);
  }
  // Editors on some systems start UTF-8 files with a byte-order mark; it is not part of the JSON.
  if (text.startsWith('\ufeff')) text = text.slice(1);
  let raw: unknown;
  try {
    raw = JSON.parse(text);
  } catch (error) {
    return { ok: false, issues: [jsonSyntaxIssue(file, text, (error as Error).message)] };
  }
  const limits = [...checkInputLimits(raw, []), ...duplicateKeyIssues(text)];
  if (limits.length > 0) return { ok: false, issues: limits };
  return { ...validateScenario(raw), raw };
}

/** The syntax error with its line and column, so the message points at the place to fix. */
function jsonSyntaxIssue(file: string, text: string, parserMessage: string): ValidationIssue {
  // The parser quotes a piece of the text, line breaks and all: one line per issue.
  const message = parserMessage.replace(/\s+/g, ' ');
  const position = /position (\d+)/.exec(message)?.[1];
  if (position === undefined) return issueAtPlace(file, `expected JSON, found a syntax error: ${message}`);
  const before = text.slice(0, Number(position));
  const line = before.split('\n').length;
  const column = before.length - before.lastIndexOf('\n');
  return issueAtPlace(`${file}:${line}:${column}`, `expected JSON, found a syntax error: ${message.replace(/ in JSON at position \d+.*$/, '')}`);
}
