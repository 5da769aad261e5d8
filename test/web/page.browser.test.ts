import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import type { Page } from 'playwright-core';
import { mkdir, readFile } from 'node:fs/promises';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { startPageSession, type PageSession } from '../support/page-session.js';
import { formatSi, parseSiNumber } from '../../src/circuit/si-number.js';

// The page in Debian's chromium against the real server (in-process, simulations in its worker
// pool). Never downloads a browser: CI installs /usr/bin/chromium (.ci/run).

const root = fileURLToPath(new URL('../../', import.meta.url));
const LEAKAGE = 'transformer.leakageInductance';

/** A demo run takes 0.5–1 s, the first one more (worker start-up); plotly is 4.8 MB to parse. */
const RUN_TIMEOUT_MS = 60_000;
const TEST_TIMEOUT_MS = 120_000;

interface DemoScenario {
  supply: { voltage: number | string };
  transformer: { leakageInductance: number | string; turnsRatio: number | string };
  output: { voltage: number | string; diodeDrop: number | string };
  switch: { peakCurrent: number | string; voltageRating: number | string; avalancheVoltage: number | string };
}

/**
 * The demo's transistor as one constant, and the real-part fields that act on the bare drain: with
 * them cleared the bare variant is the ideal circuit the hand formula below describes.
 */
const IDEAL_DRAIN_CAPACITANCE = '180p';
const BARE_REAL_PARTS = ['transformer.windingCapacitance', 'switch.avalancheVoltage', 'switch.turnOffDelay', 'switch.currentFallTime'];

function si(value: number | string, unit: string): number {
  const parsed = parseSiNumber(value, unit);
  if (!parsed.ok) throw new Error(`demo scenario value ${String(value)} does not parse`);
  return parsed.value;
}

let session: PageSession;
let page: Page;
let baseUrl: string;
let demo: DemoScenario;
let pageErrors: string[] = [];

/** Waits until the page has finished `count` requests in all (it counts failures too). */
async function waitForRuns(count: number): Promise<void> {
  await page.waitForFunction(
    (n) => Number(document.body.dataset.runCount) >= n && document.body.dataset.state !== 'busy',
    count, { timeout: RUN_TIMEOUT_MS },
  );
}

async function runCount(): Promise<number> {
  return page.evaluate(() => Number(document.body.dataset.runCount));
}

async function tableValue(variant: string, metric: string): Promise<number> {
  const text = await page.getAttribute(`#metrics tr[data-variant="${variant}"] td[data-metric="${metric}"]`, 'data-value');
  if (text === null) throw new Error(`no ${metric} for ${variant} in the table`);
  return Number(text);
}

/** The clamp plot as drawn (its traces and notes) and its description for screen readers. */
async function clampPlotNotes(): Promise<{ traces: number; notes: string[]; description: string }> {
  return page.evaluate(() => {
    const plot = document.getElementById('clamp-plot') as unknown as { data?: unknown[]; layout?: { annotations?: Array<{ text: string }> } };
    return {
      traces: plot.data?.length ?? 0,
      notes: (plot.layout?.annotations ?? []).map((a) => a.text.replace(/<\/?b>/g, '')),
      description: document.getElementById('clamp-plot-description')?.textContent ?? '',
    };
  });
}

interface TraceSummary { name: string; meta: string; type: string; mode: string; points: number; xMin: number; xMax: number }

async function drainTraces(): Promise<TraceSummary[]> {
  return page.evaluate(() => {
    const plot = document.getElementById('drain-plot') as unknown as { data?: Array<Record<string, unknown>> };
    return (plot.data ?? []).map((d) => {
      const x = (d.x ?? []) as number[];
      return {
        name: String(d.name), meta: String(d.meta), type: String(d.type), mode: String(d.mode),
        points: x.length, xMin: Math.min(...x), xMax: Math.max(...x),
      };
    });
  });
}

beforeAll(async () => {
  demo = JSON.parse(await readFile(join(root, 'scenarios', 'bias-48v.json'), 'utf8')) as DemoScenario;
  session = await startPageSession();
  ({ page, baseUrl, pageErrors } = session);
}, TEST_TIMEOUT_MS);

afterAll(async () => {
  await session?.close();
});

describe('the plotting page', () => {
  let barePeak = 0;

  it('preselects ?scenario=, runs it, and plots three drain traces with the rating lines', async () => {
    await page.goto(`${baseUrl}/?scenario=bias-48v`, { timeout: RUN_TIMEOUT_MS });
    await waitForRuns(1);
    expect(await page.evaluate(() => document.body.dataset.lastOutcome)).toBe('ok');
    expect(await page.inputValue('#scenario-select')).toBe('bias-48v');
    expect(await page.inputValue(`[data-path="${LEAKAGE}"]`)).toBe(String(demo.transformer.leakageInductance));

    const traces = await drainTraces();
    const variants = traces.filter((t) => t.meta.startsWith('variant:'));
    expect(variants.map((t) => t.meta)).toEqual(['variant:bare', 'variant:clamp', 'variant:damped']);
    for (const [i, v] of ['bare', 'clamp', 'damped'].entries()) expect(variants[i]?.name).toContain(v);
    // No GPU in CI: plain SVG scatter, never scattergl; lines, but for the peak markers.
    for (const t of traces) expect([t.type, t.mode]).toEqual(['scatter', t.meta.startsWith('peak:') ? 'markers' : 'lines']);
    expect(traces.filter((t) => t.meta.startsWith('peak:')).map((t) => t.meta)).toEqual(['peak:bare', 'peak:clamp', 'peak:damped']);
    for (const t of variants) expect(t.points).toBeGreaterThan(100);
    expect(traces.map((t) => t.meta)).toEqual(expect.arrayContaining(['limit:rating', 'limit:derated']));
    const rating = si(demo.switch.voltageRating, 'V');
    expect(traces.find((t) => t.meta === 'limit:rating')?.name).toContain(`${rating} V`);
    // 80 % of the rating: the README's derated limit (common practice) when no design block says otherwise.
    expect(traces.find((t) => t.meta === 'limit:derated')?.name).toContain(`${Number((0.8 * rating).toPrecision(4))} V`);

    // The clamp plot sits below the fold: it is drawn once scrolled near.
    await page.locator('#clamp-plot').scrollIntoViewIfNeeded();
    await page.waitForFunction(() => ((document.getElementById('clamp-plot') as unknown as { data?: unknown[] }).data?.length ?? 0) > 0);
    const clampNotes = await clampPlotNotes();
    expect(clampNotes.traces).toBe(2);
    expect(clampNotes.notes.join(' ')).toMatch(/mean .*V .*ripple .*V p-p/);
    await page.evaluate(() => window.scrollTo(0, 0));

    barePeak = await tableValue('bare', 'peakDrainVoltage');
    // The demo's transistor breaks down: the README holds the drain at switch.avalancheVoltage while
    // current flows into it, so the bare peak is that voltage (to the solver's tolerance, 1e-7
    // relative, with slack for the event location) and the energy it takes is reported.
    const avalanche = si(demo.switch.avalancheVoltage, 'V');
    expect(Math.abs(barePeak - avalanche)).toBeLessThan(1e-6 * avalanche);
    expect(await tableValue('bare', 'avalancheEnergyPerCycle')).toBeGreaterThan(0);
    expect(traces.find((t) => t.meta === 'limit:avalanche')?.name).toContain(`${avalanche} V`);
    // Held above the rating, and the table must say so.
    expect(avalanche).toBeGreaterThan(rating);
    expect(await page.getAttribute('#metrics tr[data-variant="bare"] td[data-metric="peakDrainVoltage"]', 'class')).toContain('over-rating');
    expect(await page.textContent('#safety')).toMatch(/not compliance evidence/);
  }, TEST_TIMEOUT_MS);

  it('zooms to the first turn-off at full resolution and back to whole cycles', async () => {
    const before = await runCount();
    const whole = (await drainTraces()).find((t) => t.meta === 'variant:bare')!;
    await page.click('#zoom-turnoff');
    await waitForRuns(before + 1);
    await page.waitForFunction(() => document.getElementById('drain-plot')?.dataset.view === 'turn-off');
    const zoomed = (await drainTraces()).find((t) => t.meta === 'variant:bare')!;
    // The window is a small part of the recorded cycles but holds its own full set of points.
    expect(zoomed.xMax - zoomed.xMin).toBeLessThan(0.25 * (whole.xMax - whole.xMin));
    expect(zoomed.points).toBeGreaterThan(100);
    await page.click('#zoom-whole');
    await page.waitForFunction(() => document.getElementById('drain-plot')?.dataset.view === 'whole');
    const back = (await drainTraces()).find((t) => t.meta === 'variant:bare')!;
    expect(back.xMax - back.xMin).toBeCloseTo(whole.xMax - whole.xMin, 9);
  }, TEST_TIMEOUT_MS);

  it('with ideal parts the bare peak follows the hand formula', async () => {
    // The form's way to ideal parts: the curve becomes one constant, the optional fields go empty.
    await page.check('#f-switch-drainCapacitance-mode-constant');
    await page.fill('[data-path="switch.drainCapacitance"]', IDEAL_DRAIN_CAPACITANCE);
    for (const path of BARE_REAL_PARTS) await page.fill(`[data-path="${path}"]`, '');
    const before = await runCount();
    await page.click('#run');
    await waitForRuns(before + 1);
    expect(await page.evaluate(() => document.body.dataset.lastOutcome)).toBe('ok');
    barePeak = await tableValue('bare', 'peakDrainVoltage');
    // Sanity against a hand formula (undamped LC, ½·Llk·I² = ½·Cd·V²): after turn-off the leakage
    // rings against the drain capacitance around Vin + VR with amplitude Ipk·√(Llk/Cd). 5 % covers
    // the winding resistance's damping and the current gained while the drain charges.
    const llk = si(demo.transformer.leakageInductance, 'H');
    expect(barePeak - plateau()).toBeGreaterThan(0.95 * overshoot(llk));
    expect(barePeak - plateau()).toBeLessThan(1.05 * overshoot(llk));
    // By the same formula the bare drain goes over the rating, and the table must say so.
    expect(plateau() + overshoot(llk)).toBeGreaterThan(si(demo.switch.voltageRating, 'V'));
    expect(await page.getAttribute('#metrics tr[data-variant="bare"] td[data-metric="peakDrainVoltage"]', 'class')).toContain('over-rating');
    // No breakdown voltage given: no avalanche level, and no avalanche column.
    expect((await drainTraces()).map((t) => t.meta)).not.toContain('limit:avalanche');
    expect(await page.isVisible('#metrics thead th[data-metric="avalancheEnergyPerCycle"]')).toBe(false);
  }, TEST_TIMEOUT_MS);

  it('re-runs on Enter with a doubled leakage inductance and shows a higher bare peak', async () => {
    const llk = si(demo.transformer.leakageInductance, 'H');
    const before = await runCount();
    await page.evaluate(() => {
      // Records the busy state as it happens, since a run can end before a poll would see it.
      const seen = { disabled: false, timer: '' };
      (window as unknown as { busySeen: typeof seen }).busySeen = seen;
      const run = document.getElementById('run') as HTMLButtonElement;
      new MutationObserver(() => {
        if (run.disabled) seen.disabled = true;
        if (!document.getElementById('busy')!.hidden) seen.timer = document.getElementById('busy-time')!.textContent ?? '';
      }).observe(document.body, { subtree: true, childList: true, attributes: true, characterData: true });
    });
    // The busy counter shows once a run has taken 0.4 s: this answer is held back for 0.8 s.
    await page.route('**/api/simulate', async (route) => {
      await new Promise((r) => setTimeout(r, 800));
      await route.continue().catch(() => undefined);
    });
    // Typed the way an engineer writes it: prefix, unit and a space ("2.4 µH").
    await page.fill(`[data-path="${LEAKAGE}"]`, formatSi(2 * llk, 'H'));
    await page.press(`[data-path="${LEAKAGE}"]`, 'Enter');
    await waitForRuns(before + 1);
    await page.unroute('**/api/simulate');
    expect(await page.evaluate(() => document.body.dataset.lastOutcome)).toBe('ok');
    const seen = await page.evaluate(() => (window as unknown as { busySeen: { disabled: boolean; timer: string } }).busySeen);
    expect(seen.disabled).toBe(true);
    expect(seen.timer).toMatch(/^\d+\.\d s$/);
    expect(Number(seen.timer.replace(' s', ''))).toBeGreaterThanOrEqual(0.4);
    expect(await page.isDisabled('#run')).toBe(false);
    expect(await page.isHidden('#busy')).toBe(true);

    const doubled = await tableValue('bare', 'peakDrainVoltage');
    expect(doubled).toBeGreaterThan(barePeak);
    // The same hand formula: the overshoot grows with √Llk.
    expect(doubled - plateau()).toBeGreaterThan(0.95 * overshoot(2 * llk));
    expect(doubled - plateau()).toBeLessThan(1.05 * overshoot(2 * llk));
    barePeak = doubled;
  }, TEST_TIMEOUT_MS);

  it('draws the clamp plot of a new answer when it is scrolled near or printed, its description at once', async () => {
    await page.locator('#clamp-plot').scrollIntoViewIfNeeded();
    await page.waitForFunction(() => ((document.getElementById('clamp-plot') as unknown as { data?: unknown[] }).data?.length ?? 0) > 0);
    const drawn = await clampPlotNotes();
    const described = (notes: string[]): string => `${notes.join('; ')}.`;
    /** A run of this leakage with the clamp plot below the fold, the top of the page in view. */
    const runScrolledUp = async (leakageFactor: number): Promise<void> => {
      await page.evaluate(() => window.scrollTo(0, 0));
      const before = await runCount();
      await page.fill(`[data-path="${LEAKAGE}"]`, formatSi(leakageFactor * si(demo.transformer.leakageInductance, 'H'), 'H'));
      await page.press(`[data-path="${LEAKAGE}"]`, 'Enter');
      await waitForRuns(before + 1);
      expect(await page.evaluate(() => document.body.dataset.lastOutcome)).toBe('ok');
    };
    const drawnIsDescribed = (): boolean => {
      const plot = document.getElementById('clamp-plot') as unknown as { layout?: { annotations?: Array<{ text: string }> } };
      const notes = (plot.layout?.annotations ?? []).map((a) => a.text.replace(/<\/?b>/g, ''));
      return `${notes.join('; ')}.` === document.getElementById('clamp-plot-description')?.textContent;
    };

    // The description is the new answer's at once; the drawn notes are still the earlier answer's
    // (the clamp's mean moves with the leakage) until the page is printed.
    await runScrolledUp(1.5);
    const held = await clampPlotNotes();
    expect(held.notes).toEqual(drawn.notes);
    expect(held.description).toMatch(/mean .*V .*ripple .*V p-p/);
    expect(described(held.notes)).not.toBe(held.description);
    await page.evaluate(() => window.dispatchEvent(new Event('beforeprint')));
    const printed = await clampPlotNotes();
    expect(described(printed.notes)).toBe(held.description);

    // Back to the doubled leakage the next test starts from: held again until scrolled near.
    await runScrolledUp(2);
    const heldAgain = await clampPlotNotes();
    expect(heldAgain.notes).toEqual(printed.notes);
    expect(described(heldAgain.notes)).not.toBe(heldAgain.description);
    await page.locator('#clamp-plot').scrollIntoViewIfNeeded();
    await page.waitForFunction(drawnIsDescribed, null, { timeout: RUN_TIMEOUT_MS });
    expect(described((await clampPlotNotes()).notes)).toBe(heldAgain.description);
    await page.evaluate(() => window.scrollTo(0, 0));
    // The same circuit again, warm-started from another orbit: the same peak to well within the settle tolerance.
    const restored = await tableValue('bare', 'peakDrainVoltage');
    expect(Math.abs(restored - barePeak)).toBeLessThan(1e-4 * barePeak);
    barePeak = restored;
  }, TEST_TIMEOUT_MS);

  it('puts the server\'s complaint about an invalid leakage inductance beside that input', async () => {
    const errorBox = `.field-error[data-for="${LEAKAGE}"]`;
    for (const [typed, expected] of [['abc', /expected a number in H.*found "abc"/], ['-1u', /greater than 0.*found "-1u"/]] as const) {
      const before = await runCount();
      await page.fill(`[data-path="${LEAKAGE}"]`, typed);
      await page.click('#run');
      await waitForRuns(before + 1);
      expect(await page.evaluate(() => document.body.dataset.lastOutcome)).toBe('invalid');
      await page.waitForSelector(errorBox, { state: 'visible' });
      expect(await page.textContent(errorBox)).toMatch(expected);
      expect(await page.getAttribute(`[data-path="${LEAKAGE}"]`, 'aria-invalid')).toBe('true');
      const besideItsInput = await page.evaluate(({ path, box }) => {
        const input = document.querySelector(`[data-path="${path}"]`);
        return Boolean(input?.closest('.field')?.querySelector(box));
      }, { path: LEAKAGE, box: errorBox });
      expect(besideItsInput).toBe(true);
    }
    // The last good results stay, marked as not current.
    expect(await tableValue('bare', 'peakDrainVoltage')).toBe(barePeak);
    expect(await page.getAttribute('.results', 'class')).toContain('stale');

    // The form scrolls to the first bad field; from the top the sticky run bar sits where it belongs.
    await page.evaluate(() => window.scrollTo({ top: 0, behavior: 'instant' }));
    await mkdir(join(root, 'test-artifacts'), { recursive: true });
    await page.screenshot({ path: join(root, 'test-artifacts', 'page.png'), fullPage: true });
    expect(pageErrors).toEqual([]);
  }, TEST_TIMEOUT_MS);

  it('links the safety line to the README\'s Safety section', async () => {
    const href = await page.getAttribute('#safety a', 'href');
    expect(href).toBe('/README.md');
    const response = await fetch(`${baseUrl}${href}`);
    expect(response.status).toBe(200);
    expect(await response.text()).toContain('## Safety');
  });
});

function plateau(): number {
  const n = si(demo.transformer.turnsRatio, '');
  return si(demo.supply.voltage, 'V') + n * (si(demo.output.voltage, 'V') + si(demo.output.diodeDrop, 'V'));
}

function overshoot(leakage: number): number {
  return si(demo.switch.peakCurrent, 'A') * Math.sqrt(leakage / si(IDEAL_DRAIN_CAPACITANCE, 'F'));
}
