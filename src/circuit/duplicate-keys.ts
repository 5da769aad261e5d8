// JSON.parse keeps the last of two equal keys and says nothing, so a scenario with
// "leakageInductance" twice silently loses one value. This scan finds repeated keys in text that
// JSON.parse has already accepted: one pass, an explicit stack (no recursion), linear time.

import { issueAt, type PathKey, type ValidationIssue } from '../contract/issues.js';

interface Frame { object: boolean; path: readonly PathKey[]; keys: Set<string>; key: string | null; expectKey: boolean; index: number }

/** Reports at most this many repeats: a document with thousands of them needs no more to be fixed. */
const MAX_REPORTED = 20;

/** Issues for keys repeated within one object, named by the path of the repeat (`rootKeys` before it). */
export function duplicateKeyIssues(text: string, rootKeys: readonly PathKey[] = []): ValidationIssue[] {
  const issues: ValidationIssue[] = [];
  const stack: Frame[] = [];
  const childPath = (): readonly PathKey[] => {
    const top = stack[stack.length - 1];
    if (!top) return rootKeys;
    return top.object ? [...top.path, top.key ?? ''] : [...top.path, top.index];
  };
  for (let i = 0; i < text.length && issues.length < MAX_REPORTED; i++) {
    const c = text[i];
    if (c === '{' || c === '[') {
      stack.push({ object: c === '{', path: childPath(), keys: new Set(), key: null, expectKey: c === '{', index: 0 });
    } else if (c === '}' || c === ']') {
      stack.pop();
    } else if (c === ',') {
      const top = stack[stack.length - 1];
      if (top?.object) top.expectKey = true;
      else if (top) top.index++;
    } else if (c === '"') {
      let end = i + 1;
      while (end < text.length && text[end] !== '"') end += text[end] === '\\' ? 2 : 1;
      const top = stack[stack.length - 1];
      if (top?.object && top.expectKey) {
        const key = JSON.parse(text.slice(i, end + 1)) as string;
        if (top.keys.has(key)) issues.push(issueAt([...top.path, key], 'expected each field once in its block, found it again (the later value would silently replace the earlier one)'));
        top.keys.add(key);
        top.key = key;
        top.expectKey = false;
      }
      i = end;
    }
  }
  return issues;
}
