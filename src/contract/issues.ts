// A problem with an input, named by where it is: `pathKeys` is the path as data (what code uses to
// find the field), `path` the same path as people read it ("switch.drainCapacitance[0][1]"), or a
// place that is not a field (a file name with its line and column).

export type PathKey = string | number;

export interface ValidationIssue {
  /** The path as text: keys joined by dots, list indices in brackets; "(scenario)" for the whole document. */
  path: string;
  /** The path as keys and indices; empty for the whole document or for a place outside it (a file). */
  pathKeys: PathKey[];
  /** What was expected and what was found. */
  message: string;
}

/** A key that reads as a name, joined by a dot; any other (an unknown key of the input) is quoted. */
const PLAIN_KEY = /^[A-Za-z_$][\w$]*$/;

/**
 * An unknown key in brackets as a JSON string, its spaces and colons escaped too, so that the
 * path stays one word before the message's colon: {" ": 0} in design.measuredRing is
 * `design.measuredRing["\u0020"]`, not `design.measuredRing. `.
 */
function quotedKey(key: string): string {
  return `[${JSON.stringify(key).replace(/[\s:]/g, (c) => `\\u${c.charCodeAt(0).toString(16).padStart(4, '0')}`)}]`;
}

/** ['switch', 'drainCapacitance', 0, 1] → "switch.drainCapacitance[0][1]"; [] → "(scenario)". */
export function formatPath(keys: readonly PathKey[]): string {
  let text = '';
  for (const key of keys) {
    if (typeof key === 'number') text += `[${key}]`;
    else if (!PLAIN_KEY.test(key)) text += quotedKey(key);
    else text += text === '' ? key : `.${key}`;
  }
  return text === '' ? '(scenario)' : text;
}

/** An issue at a path given as keys. */
export function issueAt(pathKeys: readonly PathKey[], message: string): ValidationIssue {
  return { path: formatPath(pathKeys), pathKeys: [...pathKeys], message };
}

/** An issue at a dotted field path from the field table ("switch.peakCurrent": names only, no indices). */
export function issueAtField(fieldPath: string, message: string): ValidationIssue {
  return issueAt(fieldPath.split('.'), message);
}

/** An issue about a place that is not a field of the document (a file, a line and column in it). */
export function issueAtPlace(place: string, message: string): ValidationIssue {
  return { path: place, pathKeys: [], message };
}

/** One "path: message" line per issue. */
export function formatIssues(issues: readonly ValidationIssue[]): string {
  return issues.map((i) => `${i.path}: ${i.message}`).join('\n');
}

/** A value as a message quotes it: short, and never the whole of a large input. */
export function describeFound(found: unknown): string {
  if (found === undefined) return 'nothing';
  if (found === null) return 'null';
  if (Array.isArray(found)) return 'a list';
  if (typeof found === 'object') return 'an object';
  const text = JSON.stringify(found);
  return text.length > 40 ? `${text.slice(0, 37)}...` : text;
}
