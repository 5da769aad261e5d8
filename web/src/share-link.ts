// The edited scenario in the page's address, so a link opens the same design: the fragment (never
// sent to a server, so never in a log) holds the loaded scenario's id and the fields that differ
// from it, as JSON compressed with deflate and written in base64url.

import type { RawScenario } from './api.js';
import { isScenarioObject } from './form-values.js';
import type { ControlKind } from './fields.js';

/** The fragment's prefix and format version. */
const PREFIX = '#s1.';

export interface SharedState {
  /** The bundled scenario the change is of ('' for a scenario opened from a file: `set` holds all of it). */
  base: string;
  /** Paths ("switch.drainCapacitance") set to a value: a number, a text, or a curve's points. */
  set: Record<string, unknown>;
  /** Paths of the base that the edited scenario does not have (a field emptied). */
  unset: string[];
  /** Optional blocks switched off in the form (their values kept, as the form keeps them). */
  off: string[];
  /** The switch control chosen. */
  control?: ControlKind;
}

/** Leaves of a scenario by dotted path; a list (a curve) is one leaf. */
function flatten(raw: RawScenario, prefix = '', out: Map<string, unknown> = new Map()): Map<string, unknown> {
  for (const [key, value] of Object.entries(raw)) {
    const path = prefix ? `${prefix}.${key}` : key;
    if (isScenarioObject(value) && Object.keys(value).length > 0) flatten(value, path, out);
    else out.set(path, value);
  }
  return out;
}

/** The change from `base` to `edited`; a value that reads the same (20 and "20") counts as unchanged. */
export function difference(baseId: string, base: RawScenario, edited: RawScenario, off: string[] = [], control?: ControlKind): SharedState {
  const from = flatten(base), to = flatten(edited);
  const same = (a: unknown, b: unknown): boolean => JSON.stringify(a) === JSON.stringify(b) || (typeof a !== 'object' && String(a) === String(b));
  const set: Record<string, unknown> = {};
  for (const [path, value] of to) if (!from.has(path) || !same(from.get(path), value)) set[path] = value;
  const unset = [...from.keys()].filter((path) => !to.has(path));
  return { base: baseId, set, unset, off, ...(control ? { control } : {}) };
}

/** `base` with the change applied (a copy). */
export function applyChange(base: RawScenario, change: SharedState): RawScenario {
  const copy = JSON.parse(JSON.stringify(base)) as RawScenario;
  for (const path of change.unset) {
    const keys = path.split('.');
    let target: unknown = copy;
    for (const k of keys.slice(0, -1)) target = isScenarioObject(target) ? target[k] : undefined;
    if (isScenarioObject(target)) delete target[keys[keys.length - 1]!];
  }
  for (const [path, value] of Object.entries(change.set)) {
    const keys = path.split('.');
    let target = copy;
    for (const k of keys.slice(0, -1)) {
      if (!isScenarioObject(target[k])) target[k] = {};
      target = target[k] as RawScenario;
    }
    target[keys[keys.length - 1]!] = value;
  }
  // A block whose every field was removed is left out as a whole (an optional block switched off).
  for (const [key, value] of Object.entries(copy)) if (isScenarioObject(value) && Object.keys(value).length === 0) delete copy[key];
  return copy;
}

async function through(bytes: Uint8Array, stream: CompressionStream | DecompressionStream): Promise<Uint8Array> {
  const piped = new Blob([bytes as BlobPart]).stream().pipeThrough(stream);
  return new Uint8Array(await new Response(piped).arrayBuffer());
}

function toBase64Url(bytes: Uint8Array): string {
  let binary = '';
  for (const b of bytes) binary += String.fromCharCode(b);
  return btoa(binary).replace(/\+/g, '-').replace(/\//g, '_').replace(/=+$/, '');
}

function fromBase64Url(text: string): Uint8Array {
  const binary = atob(text.replace(/-/g, '+').replace(/_/g, '/'));
  return Uint8Array.from(binary, (c) => c.charCodeAt(0));
}

export async function encodeFragment(change: SharedState): Promise<string> {
  const json = new TextEncoder().encode(JSON.stringify({ b: change.base, s: change.set, u: change.unset, o: change.off, ...(change.control ? { c: change.control } : {}) }));
  return `${PREFIX}${toBase64Url(await through(json, new CompressionStream('deflate-raw')))}`;
}

/** Longest fragment read back: a scenario is a few kilobytes, its compressed change far less. */
const MAX_FRAGMENT_LENGTH = 64 * 1024;

/** The change a fragment holds; undefined for a fragment that is not one; throws for a damaged one. */
export async function decodeFragment(hash: string): Promise<SharedState | undefined> {
  if (!hash.startsWith(PREFIX)) return undefined;
  if (hash.length > MAX_FRAGMENT_LENGTH) throw new Error(`the link's scenario is longer than ${MAX_FRAGMENT_LENGTH} characters`);
  const json = new TextDecoder().decode(await through(fromBase64Url(hash.slice(PREFIX.length)), new DecompressionStream('deflate-raw')));
  const data = JSON.parse(json) as unknown;
  const texts = (list: unknown): list is string[] => Array.isArray(list) && list.every((p) => typeof p === 'string');
  if (!isScenarioObject(data) || typeof data.b !== 'string' || !isScenarioObject(data.s) || !texts(data.u) || !texts(data.o)) {
    throw new Error('the link does not hold a scenario change');
  }
  const control = data.c === 'fixed-duty' || data.c === 'peak-current' ? data.c : undefined;
  return { base: data.b, set: data.s, unset: data.u, off: data.o, ...(control ? { control } : {}) };
}

/** Writes the change into the address without a new history entry; no change, no fragment. */
export async function writeFragment(change: SharedState): Promise<void> {
  const url = new URL(window.location.href);
  const empty = Object.keys(change.set).length === 0 && change.unset.length === 0 && change.off.length === 0 && change.base !== '';
  url.hash = empty ? '' : await encodeFragment(change);
  history.replaceState(null, '', url);
}
