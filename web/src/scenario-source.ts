// Where the form's scenario comes from and goes: the bundled list, a file opened in the browser, a
// shared link (the fragment), and the saved file.

import { $, el } from './dom.js';
import { getJson, type RawScenario } from './api.js';
import { applyFormSwitches, fillForm, formSnapshot, getPath, isScenarioObject, readForm, unknownPaths } from './form-values.js';
import { showGeneral } from './issues.js';
import { applyChange, decodeFragment, difference, writeFragment, type SharedState } from './share-link.js';
import { cancelRuns, simulate } from './simulate.js';
import { state } from './state.js';

const select = $<HTMLSelectElement>('#scenario-select');

function dropFileOption(): void { select.querySelector('option[data-file]')?.remove(); }

async function fetchBundled(id: string): Promise<RawScenario> {
  const answer = await getJson<RawScenario>(`/api/scenarios/${encodeURIComponent(id)}`);
  if (!answer.ok) throw new Error(answer.error?.error ?? `no bundled scenario "${id}"`);
  return answer.ok;
}

/** Marks the page busy while a scenario loads, so nothing reads a half-filled form. */
function loading(): void {
  cancelRuns();
  document.body.dataset.state = 'busy';
}

export async function loadBundled(id: string, options: { run?: boolean; change?: Parameters<typeof applyChange>[1] } = {}): Promise<void> {
  loading();
  let raw: RawScenario;
  try { raw = await fetchBundled(id); } catch (error) {
    document.body.dataset.state = 'error';
    throw error;
  }
  state.loaded = { id, raw };
  // A link's scenario may hold both controls' fields (the form keeps both); its switches say which.
  const notes = options.change ? (fillForm(applyChange(raw, options.change)), []) : fillForm(raw);
  if (options.change) applyFormSwitches(options.change.off, options.change.control);
  state.sourceLabel = id;
  state.fileBase = '';
  $('#scenario-source').textContent = `Bundled scenario ${id}.json${options.change ? ', with the changes the link carries' : ''} — edit freely; the file on the server is not changed.`;
  dropFileOption();
  select.value = id;
  const url = new URL(window.location.href);
  url.searchParams.set('scenario', id);
  history.replaceState(null, '', url);
  if (!options.change) await writeFragment({ base: id, set: {}, unset: [], off: [] });
  if (notes.length > 0) showGeneral(notes, 'note');
  if (options.run !== false) await simulate();
}

/** Opens a scenario file; the first run sends the file as it is, so the server reports every key it does not know. */
export async function loadFile(file: File): Promise<void> {
  const text = await file.text();
  let raw: unknown;
  try { raw = JSON.parse(text); } catch (error) {
    showGeneral([`${file.name} is not valid JSON: ${(error as Error).message}`]);
    return;
  }
  loading();
  await openRaw(raw, file.name, `Opened from ${file.name}.`);
}

async function openRaw(raw: unknown, label: string, source: string, change?: SharedState): Promise<void> {
  const notes = fillForm(raw);
  if (change) applyFormSwitches(change.off, change.control);
  dropFileOption();
  select.prepend(el('option', { value: '', dataset: { file: '' }, text: `file: ${label}` }));
  select.value = '';
  state.sourceLabel = label;
  state.fileBase = label.replace(/\.json$/i, '');
  state.loaded = { id: '', raw: isScenarioObject(raw) ? raw : {} };
  $('#scenario-source').textContent = source;
  const url = new URL(window.location.href);
  url.searchParams.delete('scenario');
  history.replaceState(null, '', url);
  await updateShareLink();
  if (!isScenarioObject(raw)) { showGeneral(notes); return; }
  // Keys the format does not have (a misspelt field) are not in the form; the first run sends the
  // file as it is, so the server names each one with what it expected, as the command line does.
  const unknown = change ? [] : unknownPaths(raw);
  await simulate(change ? {} : { scenario: raw });
  if (unknown.length > 0) {
    const area = $('#general-error');
    const values = unknown.map((path) => `${path} = ${JSON.stringify(getPath(raw, path))}`).join('; ');
    area.prepend(el('p', { class: 'lead', text: `${label} has ${unknown.length === 1 ? 'a field' : 'fields'} the scenario format does not have (${values}). The form left ${unknown.length === 1 ? 'it' : 'them'} out: check the spelling and type the value into the right field.` }));
    area.hidden = false;
    area.dataset.tone = 'error';
  } else if (notes.length > 0 && document.body.dataset.lastOutcome === 'ok') showGeneral(notes, 'note');
}

/** Puts the edited scenario into the address (only its change from the loaded scenario). */
export async function updateShareLink(): Promise<void> {
  const { scenario, off, control } = formSnapshot();
  // A scenario from a file is in no bundled list: its link carries all of it.
  await writeFragment(difference(state.loaded.id, state.loaded.id ? state.loaded.raw : {}, scenario, off, control));
}

/** Restores the scenario a link's fragment holds; false when the address has none. */
export async function openSharedLink(known: ReadonlyArray<{ id: string }>): Promise<boolean> {
  let change;
  try { change = await decodeFragment(window.location.hash); } catch (error) {
    showGeneral([`The link's scenario could not be read (${(error as Error).message}); the bundled one is shown instead.`]);
    return false;
  }
  if (!change) return false;
  if (change.base === '') {
    loading();
    await openRaw(applyChange({}, change), 'shared link', 'Opened from a shared link (a scenario that was opened from a file).', change);
    return true;
  }
  if (!known.some((s) => s.id === change.base)) {
    showGeneral([`The link is a change of the bundled scenario "${change.base}", which this server does not have.`]);
    return false;
  }
  await loadBundled(change.base, { change });
  return true;
}

export function saveFile(): void {
  const scenario = readForm(true);
  const blob = new Blob([`${JSON.stringify(scenario, null, 2)}\n`], { type: 'application/json' });
  const base = (select.value || state.fileBase || String(scenario.name ?? '') || 'scenario').toLowerCase()
    .replace(/[^a-z0-9]+/g, '-').replace(/^-+|-+$/g, '').slice(0, 60) || 'scenario';
  const link = el('a', { href: URL.createObjectURL(blob), download: `${base}${select.value ? '-edited' : ''}.json` });
  document.body.append(link);
  link.click();
  link.remove();
  setTimeout(() => URL.revokeObjectURL(link.href), 10_000);
}

