import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import type { Page } from 'playwright-core';
import { mkdir, readFile } from 'node:fs/promises';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { startPageSession, type PageSession } from '../support/page-session.js';
import { parseSiNumber } from '../../src/circuit/si-number.js';

// The design and study panels in Debian's chromium against the real server (in-process, work in
// its worker pool). Never downloads a browser: CI installs /usr/bin/chromium (.ci/run).

const root = fileURLToPath(new URL('../../', import.meta.url));
const SCENARIO = 'mains-aux-12v';
const LEAKAGE = 'transformer.leakageInductance';
const VARIANTS = ['bare', 'clamp', 'damped'] as const;

/** A design verifies several corners (1–5 s); a 5-point study takes a few seconds on two cores. */
const RUN_TIMEOUT_MS = 60_000;
/** A design verifies several corners of a real-part scenario: about 35 s of CPU alone, more on a loaded CI machine. */
const PANEL_TIMEOUT_MS = 150_000;
const TEST_TIMEOUT_MS = 240_000;

/** IEC 60063 mantissas, to check that the chosen parts are preferred values. */
const E12 = [1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2];
const E24 = [1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1];

function inSeries(value: number, series: readonly number[]): boolean {
  const mantissa = value / 10 ** Math.floor(Math.log10(value) + 1e-9);
  return series.some((m) => Math.abs(mantissa - m) < 1e-6);
}

function si(text: string, unit: string): number {
  const parsed = parseSiNumber(text, unit);
  if (!parsed.ok) throw new Error(`"${text}" does not parse as ${unit}`);
  return parsed.value;
}

let session: PageSession;
let page: Page;
let baseUrl: string;
let pageErrors: string[] = [];

interface Trace { meta: string; type: string; mode: string; x: number[]; y: Array<number | null> }

async function plotTraces(id: string): Promise<Trace[]> {
  return page.evaluate((plotId) => {
    const plot = document.getElementById(plotId) as unknown as { data?: Array<Record<string, unknown>> };
    return (plot.data ?? []).map((d) => ({
      meta: String(d.meta), type: String(d.type), mode: String(d.mode),
      x: Array.from((d.x ?? []) as number[]), y: Array.from((d.y ?? []) as Array<number | null>),
    }));
  }, id);
}

/** Waits until a panel has finished `count` runs (failures count too). */
async function waitForPanel(panel: 'design' | 'sweep', count: number): Promise<void> {
  await page.waitForFunction(
    ({ id, n }) => {
      const el = document.getElementById(id)!;
      return Number(el.dataset.runCount) >= n && el.dataset.state !== 'busy';
    },
    { id: `${panel}-panel`, n: count }, { timeout: PANEL_TIMEOUT_MS },
  );
}

async function panelRuns(panel: 'design' | 'sweep'): Promise<number> {
  return page.evaluate((id) => Number(document.getElementById(id)!.dataset.runCount), `${panel}-panel`);
}

async function lastOutcome(panel: 'design' | 'sweep'): Promise<string | undefined> {
  return page.evaluate((id) => document.getElementById(id)!.dataset.lastOutcome, `${panel}-panel`);
}

/** Records a panel's busy state as it happens: a run can end before a poll would see it. */
async function watchBusy(panel: 'design' | 'sweep'): Promise<void> {
  await page.evaluate((p) => {
    const seen = { disabled: false, timer: '' };
    (window as unknown as Record<string, unknown>)[`${p}Busy`] = seen;
    const button = document.getElementById(`${p}-run`) as HTMLButtonElement;
    new MutationObserver(() => {
      if (button.disabled) seen.disabled = true;
      if (!document.getElementById(`${p}-busy`)!.hidden) seen.timer = document.getElementById(`${p}-busy-time`)!.textContent ?? '';
    }).observe(document.getElementById(`${p}-panel`)!, { subtree: true, childList: true, attributes: true, characterData: true });
  }, panel);
}

async function busySeen(panel: 'design' | 'sweep'): Promise<{ disabled: boolean; timer: string }> {
  return page.evaluate((p) => (window as unknown as Record<string, { disabled: boolean; timer: string }>)[`${p}Busy`]!, panel);
}

async function dataValue(selector: string): Promise<number> {
  const text = await page.getAttribute(selector, 'data-value');
  if (text === null) throw new Error(`no data-value at ${selector}`);
  return Number(text);
}

/** A picture of one panel, from the top of the page so the sticky run bar is not over it. */
async function shoot(id: string, file: string): Promise<void> {
  await page.evaluate(() => window.scrollTo({ top: 0, behavior: 'instant' }));
  const box = await page.evaluate((panelId) => {
    const r = document.getElementById(panelId)!.getBoundingClientRect();
    return { x: r.left + window.scrollX, y: r.top + window.scrollY, width: r.width, height: r.height };
  }, id);
  await mkdir(join(root, 'test-artifacts'), { recursive: true });
  await page.screenshot({ path: join(root, 'test-artifacts', file), fullPage: true, clip: box });
}

beforeAll(async () => {
  session = await startPageSession();
  ({ page, baseUrl, pageErrors } = session);
  await page.goto(`${baseUrl}/?scenario=${SCENARIO}`, { timeout: RUN_TIMEOUT_MS });
  // The main simulation runs on load and stays first on the page.
  await page.waitForFunction(() => Number(document.body.dataset.runCount) >= 1 && document.body.dataset.state !== 'busy', null, { timeout: RUN_TIMEOUT_MS });
}, TEST_TIMEOUT_MS);

afterAll(async () => {
  await session?.close();
});

describe('the design panel', () => {
  let nominalClampPeak = 0;
  let nominalDampedPeak = 0;
  let damperFitted = true;

  it('designs the clamp and damper: preferred parts, PASS/FAIL per corner, the worst-case plot', async () => {
    expect(await page.evaluate(() => document.body.dataset.lastOutcome)).toBe('ok');
    await watchBusy('design');
    await page.click('#design-run');
    await waitForPanel('design', 1);
    expect(await lastOutcome('design')).toBe('ok');
    const busy = await busySeen('design');
    expect(busy.disabled).toBe(true);
    expect(busy.timer).toMatch(/^\d+\.\d s$/);
    expect(await page.isDisabled('#design-run')).toBe(false);

    // The parts, shown with SI prefixes, are preferred values (E24 resistors, E12 capacitors by default).
    const part = async (path: string): Promise<{ value: number; text: string }> => ({
      value: await dataValue(`#design-parts dd[data-part="${path}"]`),
      text: (await page.textContent(`#design-parts dd[data-part="${path}"]`)) ?? '',
    });
    const r = await part('clamp.resistance');
    const c = await part('clamp.capacitance');
    expect(r.text).toMatch(/^\d+(\.\d+)? kΩ$/);
    expect(c.text).toMatch(/^\d+(\.\d+)? nF$/);
    expect(inSeries(r.value, E24)).toBe(true);
    expect(inSeries(c.value, E12)).toBe(true);
    // The least-loss set decides whether a damper is fitted (design.damper "least-loss" by default).
    damperFitted = (await page.getAttribute('#design-parts [data-block="damper"]', 'data-fitted')) !== 'false';
    if (damperFitted) {
      const rs = await part('damper.resistance');
      const cs = await part('damper.capacitance');
      expect(cs.text).toMatch(/^\d+(\.\d+)? pF$/);
      expect(inSeries(rs.value, E24)).toBe(true);
      expect(inSeries(cs.value, E12)).toBe(true);
    } else {
      expect(await page.textContent('#design-parts [data-block="damper"] h4')).toBe('No RC damper');
      expect(await page.locator('#design-parts dd[data-part^="damper."]').count()).toBe(0);
    }
    // Shown where the resistor moved from the formula's value, each step with its reason.
    const steps = await page.locator('#design-adjustments li').allTextContents();
    expect(steps[0]).toMatch(/Formula at the worst case: R = /);
    expect(steps.join(' ')).toMatch(/Chosen clamp:/);

    // Both corners, each with its verdict: PASS exactly when the clamp and the damped runs settled
    // and the margin to the derated limit is not negative.
    for (const corner of ['worstCase', 'nominal']) {
      const row = `#design-verification tr[data-corner="${corner}"]`;
      const verdict = (await page.textContent(`${row} td[data-metric="verdict"] .verdict`))?.trim();
      expect(['PASS', 'FAIL']).toContain(verdict);
      const margin = await dataValue(`${row} td[data-metric="margin"]`);
      const settled = (await page.getAttribute(row, 'data-settled')) === 'true';
      expect(verdict === 'PASS').toBe(settled && margin >= 0);
      expect(await page.getAttribute(row, 'data-pass')).toBe(String(verdict === 'PASS'));
    }
    // The verdict needs every corner (high and low line among them) and the loss budget.
    const overall = await page.getAttribute('#design-verdict', 'data-pass');
    const corners = await page.locator('#design-verification tbody tr').evaluateAll((rows) => rows.map((r) => (r as HTMLElement).dataset.pass));
    expect(corners.length).toBeGreaterThanOrEqual(2);
    const losses = (await page.textContent('#design-losses .verdict'))?.trim();
    expect(['PASS', 'FAIL']).toContain(losses);
    expect(overall).toBe(String(corners.every((p) => p === 'true') && losses === 'PASS'));
    // The worst case is the nominal leakage plus the default 20 % spread (25 µH in the file).
    const leakageCell = '#design-verification tr[data-corner="worstCase"] td:nth-child(3)';
    expect(await dataValue(leakageCell)).toBeCloseTo(1.2 * 25e-6, 12);
    nominalClampPeak = await dataValue('#design-verification tr[data-corner="nominal"] td[data-metric="clamp"]');
    nominalDampedPeak = await dataValue('#design-verification tr[data-corner="nominal"] td[data-metric="damped"]');

    // The worst-case drain voltage of the three variants, plain SVG scatter (no GPU), with the limit lines.
    const traces = await plotTraces('design-plot');
    const variants = traces.filter((t) => t.meta.startsWith('variant:'));
    expect(variants.map((t) => t.meta)).toEqual(['variant:bare', 'variant:clamp', 'variant:damped']);
    for (const t of traces) expect([t.type, t.mode]).toEqual(['scatter', 'lines']);
    for (const t of variants) expect(t.x.length).toBeGreaterThan(100);
    expect(traces.map((t) => t.meta)).toEqual(expect.arrayContaining(['limit:rating', 'limit:derated']));
    // The scenario's breakdown voltage as a level: the worst case breaks down at the same voltage.
    const scenario = JSON.parse(await readFile(join(root, 'scenarios', `${SCENARIO}.json`), 'utf8')) as { switch: { avalancheVoltage: number | string } };
    const avalancheLevel = traces.find((t) => t.meta === 'limit:avalanche');
    expect(avalancheLevel?.y).toEqual([si(String(scenario.switch.avalancheVoltage), 'V'), si(String(scenario.switch.avalancheVoltage), 'V')]);
    // The plotted worst-case peaks are the verified ones (the display reduction keeps each column's extremes).
    for (const v of VARIANTS) {
      const table = await dataValue(`#design-verification tr[data-corner="worstCase"] td[data-metric="${v}"]`);
      const plotted = Math.max(...(variants.find((t) => t.meta === `variant:${v}`)!.y as number[]));
      expect(Math.abs(plotted - table)).toBeLessThan(0.01 * table);
    }
    expect((await page.locator('#design-stresses tbody tr').count())).toBe(5);
    expect(await page.textContent('#design-notes')).toMatch(/not modelled/);
    expect(await page.textContent('#design-equations')).toMatch(/AN-4147/);

    // Zoomed to the first turn-off: the window holds the spike of every variant.
    await page.click('#design-zoom-turnoff');
    await page.waitForFunction(() => document.getElementById('design-plot')?.dataset.view === 'turn-off');
    const range = await page.evaluate(() => (document.getElementById('design-plot') as unknown as { layout: { xaxis: { range: number[] } } }).layout.xaxis.range);
    const whole = variants[0]!.x[variants[0]!.x.length - 1]!;
    expect(range[1]! - range[0]!).toBeLessThan(0.25 * whole);
    for (const t of variants) {
      const inside = t.y.filter((_, i) => t.x[i]! >= range[0]! && t.x[i]! <= range[1]!) as number[];
      expect(Math.max(...inside)).toBeGreaterThan(0.98 * Math.max(...(t.y as number[])));
    }
    await shoot('design-panel', 'design-panel.png');
    await page.click('#design-zoom-whole');
    await page.waitForFunction(() => document.getElementById('design-plot')?.dataset.view === 'whole');
  }, TEST_TIMEOUT_MS);

  it('loads the designed parts into the form; the main simulation then gives the nominal corner\'s peaks', async () => {
    const designed: Record<string, number> = {
      'clamp.resistance': await dataValue('#design-parts dd[data-part="clamp.resistance"]'),
      'clamp.capacitance': await dataValue('#design-parts dd[data-part="clamp.capacitance"]'),
    };
    if (damperFitted) {
      designed['damper.resistance'] = await dataValue('#design-parts dd[data-part="damper.resistance"]');
      designed['damper.capacitance'] = await dataValue('#design-parts dd[data-part="damper.capacitance"]');
    }
    await page.click('#design-use');
    const units: Record<string, string> = { 'clamp.resistance': 'Ω', 'clamp.capacitance': 'F', 'damper.resistance': 'Ω', 'damper.capacitance': 'F' };
    for (const [path, value] of Object.entries(designed)) {
      const typed = await page.inputValue(`[data-path="${path}"]`);
      expect(si(typed, units[path]!) / value).toBeCloseTo(1, 12);
    }
    expect(await page.isChecked('#use-clamp')).toBe(true);
    // A design without a damper switches the damper block off.
    expect(await page.isChecked('#use-damper')).toBe(damperFitted);

    // The nominal corner is the scenario itself with the designed parts: the same simulation.
    const before = await page.evaluate(() => Number(document.body.dataset.runCount));
    await page.click('#run');
    await page.waitForFunction((n) => Number(document.body.dataset.runCount) >= n && document.body.dataset.state !== 'busy', before + 1, { timeout: RUN_TIMEOUT_MS });
    expect(await page.evaluate(() => document.body.dataset.lastOutcome)).toBe('ok');
    const clamp = await dataValue('#metrics tr[data-variant="clamp"] td[data-metric="peakDrainVoltage"]');
    expect(clamp / nominalClampPeak).toBeCloseTo(1, 6);
    if (damperFitted) {
      const damped = await dataValue('#metrics tr[data-variant="damped"] td[data-metric="peakDrainVoltage"]');
      expect(damped / nominalDampedPeak).toBeCloseTo(1, 6);
    }
  }, TEST_TIMEOUT_MS);
});

describe('the study panel', () => {
  // The design panel's parts may have switched the damper off; the studies compare all three variants.
  beforeAll(async () => {
    if (!(await page.isChecked('#use-damper'))) await page.check('#use-damper');
  });

  it('sweeps the leakage −20 %..+20 % in 5 points: three variant traces whose peaks rise with leakage', async () => {
    expect(await page.inputValue('#sweep-field')).toBe(LEAKAGE);
    await page.fill('#sweep-from', '-20%');
    await page.fill('#sweep-to', '+20%');
    await page.fill('#sweep-steps', '5');
    // The page shows what the percentages resolve to before anything runs.
    expect(await page.textContent('#sweep-preview')).toMatch(/^20 µH to 30 µH, 5 points 2\.5 µH apart/);
    await watchBusy('sweep');
    const before = await panelRuns('sweep');
    await page.click('#sweep-run');
    await waitForPanel('sweep', before + 1);
    expect(await lastOutcome('sweep')).toBe('ok');
    const busy = await busySeen('sweep');
    expect(busy.disabled).toBe(true);
    expect(busy.timer).toMatch(/^\d+\.\d s$/);

    const traces = await plotTraces('sweep-plot');
    const variants = traces.filter((t) => t.meta.startsWith('variant:'));
    expect(variants.map((t) => t.meta)).toEqual(['variant:bare', 'variant:clamp', 'variant:damped']);
    // The scenario's transistor breaks down: the README holds the drain there, so a peak that has
    // reached it stays (to the solver's tolerance, 1e-7 relative, with slack for event location).
    const scenario = JSON.parse(await readFile(join(root, 'scenarios', `${SCENARIO}.json`), 'utf8')) as { switch: { avalancheVoltage: number | string } };
    const avalanche = si(String(scenario.switch.avalancheVoltage), 'V');
    const held = (y: number): boolean => Math.abs(y - avalanche) < 1e-6 * avalanche;
    for (const t of variants) {
      expect([t.type, t.mode]).toEqual(['scatter', 'lines+markers']);
      expect(t.y).toHaveLength(5);
      for (let i = 1; i < 5; i++) {
        expect(t.x[i]!).toBeGreaterThan(t.x[i - 1]!);
        if (held(t.y[i - 1]!)) expect(held(t.y[i]!)).toBe(true);
        else expect(t.y[i]!).toBeGreaterThan(t.y[i - 1]!);
      }
    }
    // The clamp keeps its variants below breakdown, so their peaks rise all the way.
    for (const v of ['clamp', 'damped']) expect(variants.find((t) => t.meta === `variant:${v}`)!.y.some((y) => held(y!))).toBe(false);
    expect(traces.map((t) => t.meta)).toEqual(expect.arrayContaining(['limit:rating', 'limit:derated']));

    // The points list holds the varied values (SI) and the same peaks.
    const leakages = await page.locator('#sweep-points tbody tr td:nth-of-type(1)').evaluateAll((cells) => cells.map((c) => Number((c as HTMLElement).dataset.value)));
    expect(leakages).toHaveLength(5);
    leakages.forEach((l, i) => expect(l).toBeCloseTo(20e-6 + 2.5e-6 * i, 12));
    for (const v of VARIANTS) {
      const peaks = await page.locator(`#sweep-points tbody td[data-variant="${v}"]`).evaluateAll((cells) => cells.map((c) => Number((c as HTMLElement).dataset.value)));
      expect(peaks).toEqual(variants.find((t) => t.meta === `variant:${v}`)!.y);
      // The worst point of each variant is the highest leakage (or, held at breakdown, as high as it).
      const worst = Number(await page.getAttribute(`#sweep-worst tr[data-variant="${v}"]`, 'data-index'));
      if (!held(peaks[4]!)) expect(worst).toBe(4);
      else expect(held(peaks[worst]!)).toBe(true);
    }
    // The middle point is the form's own scenario: the main simulation's peak, to the last digit of the run.
    const middle = await dataValue('#sweep-points tbody tr[data-index="2"] td[data-variant="bare"]');
    expect(middle / await dataValue('#metrics tr[data-variant="bare"] td[data-metric="peakDrainVoltage"]')).toBeCloseTo(1, 9);
    await shoot('sweep-panel', 'sweep-panel.png');
  }, TEST_TIMEOUT_MS);

  it('puts the server\'s complaint about a bad range beside the sweep inputs', async () => {
    const answers: number[] = [];
    const onResponse = (r: { url(): string; status(): number }): void => { if (r.url().endsWith('/api/sweep')) answers.push(r.status()); };
    page.on('response', onResponse);
    await page.fill('#sweep-from', 'twenty');
    const before = await panelRuns('sweep');
    await page.press('#sweep-from', 'Enter');
    await waitForPanel('sweep', before + 1);
    page.off('response', onResponse);
    expect(answers).toEqual([400]);
    expect(await lastOutcome('sweep')).toBe('invalid');
    const box = '#sweep-vary-error';
    await page.waitForSelector(box, { state: 'visible' });
    expect(await page.textContent(box)).toMatch(/expected FROM as a number .*found "twenty"/);
    expect(await page.getAttribute('#sweep-from', 'aria-invalid')).toBe('true');
    expect(await page.getAttribute('#sweep-to', 'aria-invalid')).toBeNull();
    const beside = await page.evaluate(() => document.getElementById('sweep-from')!.closest('.study-inputs')!.contains(document.getElementById('sweep-vary-error')));
    expect(beside).toBe(true);
    // The last good study stays, marked as not current; typing clears the mark on the input.
    expect(await page.getAttribute('#sweep-panel', 'class')).toContain('stale');
    await page.fill('#sweep-from', '-20%');
    expect(await page.getAttribute('#sweep-from', 'aria-invalid')).toBeNull();
  }, TEST_TIMEOUT_MS);

  it('runs a small Monte Carlo: a histogram per variant, the share over the derated limit and the percentiles', async () => {
    await page.check('#study-mc');
    await page.fill('#mc-samples', '6');
    await page.fill('#mc-seed', '7');
    const before = await panelRuns('sweep');
    await page.click('#sweep-run');
    await waitForPanel('sweep', before + 1);
    expect(await lastOutcome('sweep')).toBe('ok');
    const traces = await plotTraces('sweep-plot');
    expect(traces.map((t) => [t.meta, t.type])).toEqual([['variant:bare', 'histogram'], ['variant:clamp', 'histogram'], ['variant:damped', 'histogram']]);
    for (const t of traces) expect(t.x).toHaveLength(6);
    const derated = await page.evaluate(() => {
      const plot = document.getElementById('sweep-plot') as unknown as { layout: { shapes: Array<{ x0: number }> } };
      return plot.layout.shapes.map((s) => s.x0);
    });
    expect(derated.some((x) => Math.abs(x - 0.8 * 650) < 1e-9)).toBe(true);
    // The bare peaks (held at breakdown) sit far above the clamped ones: they get their own axis, so
    // the clamped spreads are not squeezed into thin bars by a scale that must reach them.
    const axes = await page.evaluate(() => {
      const plot = document.getElementById('sweep-plot') as unknown as { _fullLayout: { xaxis: { range: number[] }; xaxis2?: { range: number[] } } };
      // What was drawn: the width in pixels of the widest bar of each variant's histogram.
      const widths = [...document.querySelectorAll('#sweep-plot .barlayer .trace')].map((trace) =>
        Math.max(0, ...[...trace.querySelectorAll('.point path')].map((p) => (p as SVGGraphicsElement).getBBox().width)));
      return { x: plot._fullLayout.xaxis.range, x2: plot._fullLayout.xaxis2?.range, widths };
    });
    const barePeaks = traces.find((t) => t.meta === 'variant:bare')!.x;
    const clampedPeaks = traces.filter((t) => t.meta !== 'variant:bare').flatMap((t) => t.x);
    expect(axes.x[1]!).toBeLessThan(Math.min(...barePeaks));
    expect(axes.x[0]!).toBeLessThanOrEqual(Math.min(...clampedPeaks));
    expect(axes.x2![0]!).toBeLessThanOrEqual(Math.min(...barePeaks));
    expect(axes.x2![1]!).toBeGreaterThanOrEqual(Math.max(...barePeaks));
    expect(axes.widths).toHaveLength(3);
    for (const w of axes.widths) expect(w).toBeGreaterThan(3);
    for (const v of VARIANTS) {
      const peaks = traces.find((t) => t.meta === `variant:${v}`)!.x;
      const share = await dataValue(`#sweep-stats tr[data-variant="${v}"] td[data-metric="fractionOverDeratedLimit"]`);
      expect(share).toBeCloseTo(peaks.filter((p) => p > 520).length / 6, 12);
      expect(await dataValue(`#sweep-stats tr[data-variant="${v}"] td[data-metric="max"]`)).toBe(Math.max(...peaks));
    }
    expect(pageErrors).toEqual([]);
  }, TEST_TIMEOUT_MS);
});
