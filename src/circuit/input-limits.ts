// Size limits on parsed input (a scenario file, an HTTP body), checked before anything else reads
// it: every later step (validation, messages that quote a value, structured clones) may recurse or
// copy, so a deeply nested or very wide document must be refused while it is still only data.

import { issueAt, type PathKey, type ValidationIssue } from '../contract/issues.js';

export interface InputLimits {
  /** Levels of objects and lists: a scenario needs 3 (design.measuredRing.frequency). */
  maxDepth: number;
  /** Fields in one object or items in one list: the widest scenario block has 12. */
  maxEntries: number;
  /** Objects, lists and values in all. */
  maxNodes: number;
  /** Characters in any text (names; numbers have their own cap of 64 in si-number.ts). */
  maxTextLength: number;
}

export const INPUT_LIMITS: Readonly<InputLimits> = { maxDepth: 8, maxEntries: 64, maxNodes: 2_000, maxTextLength: 200 };

const describeKind = (v: unknown): string => (Array.isArray(v) ? 'list' : 'object');

/**
 * Issues for every part of `input` over the limits, each naming its path under `rootKeys`
 * ([] for a scenario file, ['body'] for an HTTP body). Iterative, so depth cannot overflow the stack.
 */
export function checkInputLimits(input: unknown, rootKeys: readonly PathKey[], limits: InputLimits = INPUT_LIMITS): ValidationIssue[] {
  const issues: ValidationIssue[] = [];
  const stack: Array<{ value: unknown; path: readonly PathKey[]; depth: number }> = [{ value: input, path: rootKeys, depth: 0 }];
  let nodes = 0;
  const at = (path: readonly PathKey[], message: string): ValidationIssue => issueAt(path, message);
  while (stack.length > 0) {
    const { value, path, depth } = stack.pop()!;
    if (++nodes > limits.maxNodes) {
      issues.push(at(rootKeys, `expected at most ${limits.maxNodes} values in all, found more`));
      break;
    }
    if (typeof value === 'string') {
      if (value.length > limits.maxTextLength) {
        issues.push(at(path, `expected a text of at most ${limits.maxTextLength} characters, found ${value.length}`));
      }
      continue;
    }
    if (typeof value !== 'object' || value === null) continue;
    if (depth >= limits.maxDepth) {
      issues.push(at(path, `expected at most ${limits.maxDepth} levels of nesting, found a ${describeKind(value)} nested deeper`));
      continue;
    }
    const keys = Array.isArray(value) ? null : Object.keys(value);
    const count = keys ? keys.length : (value as unknown[]).length;
    if (count > limits.maxEntries) {
      issues.push(at(path, `expected at most ${limits.maxEntries} ${keys ? 'fields' : 'items'} in this ${describeKind(value)}, found ${count}`));
      continue;
    }
    if (keys) {
      for (const key of keys) {
        if (key.length > limits.maxTextLength) {
          issues.push(at(path, `expected field names of at most ${limits.maxTextLength} characters, found one of ${key.length}`));
          continue;
        }
        stack.push({ value: (value as Record<string, unknown>)[key], path: [...path, key], depth: depth + 1 });
      }
    } else {
      (value as unknown[]).forEach((item, i) => stack.push({ value: item, path: [...path, i], depth: depth + 1 }));
    }
  }
  return issues;
}
