import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { readFile } from 'node:fs/promises';
import { join } from 'node:path';
import { root, startPageSession, type PageSession } from '../support/page-session.js';
import { parseSiNumber } from '../../src/circuit/si-number.js';
import { captureCsv, scenarioFrom, syntheticCapture } from '../capture/synthetic-capture.js';

// The scope-capture panel in Debian's chromium against the real server (in-process, work in its
// worker pool). The capture is made by the simulator from the default scenario (bias-48v) with
// its leakage inductance raised by 15 %, measured as a bare drain (the clamp removed: its free ring
// is what carries the information, README "flyclamp fit", Limits) and degraded as a 10-bit scope
// would: noise, an offset, a sample interval unrelated to the ring. Acceptance (issue 13): the
// fitted leakage within 2 % of the truth.

/** A fit of the default scenario runs up to 40 settled simulations in one worker: about 15 s alone on two cores, more on a loaded machine. */
const FIT_TIMEOUT_MS = 150_000;
const TEST_TIMEOUT_MS = 240_000;
const LEAKAGE = 'transformer.leakageInductance';

let session: PageSession;
let page: Page;
let pageErrors: string[] = [];
let trueLeakageHenries = 0;
let csv = '';

/** Waits until the capture panel has finished `count` requests (failures count too). */
async function waitForCapturePanel(count: number, timeout = 30_000): Promise<string> {
  await page.waitForFunction((n) => {
    const el = document.getElementById('capture-panel')!;
    return Number(el.dataset.runCount) >= n && el.dataset.state !== 'busy';
  }, count, { timeout });
  return page.evaluate(() => document.getElementById('capture-panel')!.dataset.lastOutcome ?? '');
}

async function openCapture(name: string, text: string): Promise<void> {
  await page.setInputFiles('#capture-input', { name, mimeType: 'text/csv', buffer: Buffer.from(text) });
}

beforeAll(async () => {
  const json = JSON.parse(await readFile(join(root, 'scenarios', 'bias-48v.json'), 'utf8')) as unknown;
  const truth = scenarioFrom(json);
  truth.transformer.leakageInductance *= 1.15;
  trueLeakageHenries = truth.transformer.leakageInductance;
  const periodSeconds = 1 / truth.switch.frequency;
  csv = captureCsv(syntheticCapture(truth, 'bare', {
    sampleIntervalSeconds: 1.237e-9, spanSeconds: 2.5 * periodSeconds, preTriggerFraction: 0.2,
    noiseVolts: 0.1, offsetVolts: 0.3, bits: 10, fullScaleMin: -20, fullScaleMax: 200, seed: 7,
  }));
  session = await startPageSession();
  page = session.page;
  pageErrors = session.pageErrors;
  await page.goto(session.baseUrl);
  await page.waitForFunction(() => Number(document.body.dataset.runCount) >= 1 && document.body.dataset.state !== 'busy', null, { timeout: 60_000 });
}, TEST_TIMEOUT_MS);

afterAll(async () => { await session?.close(); });

describe('scope capture panel', () => {
  it('draws an opened capture on the drain plot as its fourth trace, in the SVG, and keeps it when zoomed to a turn-off', async () => {
    // The synthetic scope exports two channels: the drain is named before the file is opened.
    await page.fill('#capture-column', 'CH1');
    await openCapture('drain.csv', csv);
    expect(await waitForCapturePanel(1)).toBe('ok');
    const drawn = await page.evaluate(() => {
      const plot = document.getElementById('drain-plot') as unknown as { data: Array<{ meta: string; x: number[]; line: { color: string } }> };
      const index = plot.data.findIndex((d) => d.meta === 'capture');
      // Plotly keeps the traces' order in the scatter layer.
      const path = document.querySelectorAll('#drain-plot .scatterlayer .trace')[index]?.querySelector('path.js-line');
      return {
        index, metas: plot.data.slice(0, 4).map((d) => d.meta),
        segments: (path?.getAttribute('d') ?? '').split(/[LM]/).length - 1,
        stroke: path ? getComputedStyle(path).stroke : '',
      };
    });
    expect(drawn.metas).toEqual(['variant:bare', 'variant:clamp', 'variant:damped', 'capture']);
    expect(drawn.index).toBe(3);
    // Hundreds of points of line in the SVG, in the capture's colour (#1b1b1b).
    expect(drawn.segments).toBeGreaterThan(200);
    expect(drawn.stroke).toBe('rgb(27, 27, 27)');
    expect(await page.textContent('#capture-status')).toContain('column “CH1”');

    await page.click('#zoom-turnoff');
    await page.waitForFunction(() => document.getElementById('drain-plot')?.dataset.view === 'turn-off', null, { timeout: 60_000 });
    // Overlaid at the turn-off: at the instant the simulated bare drain rises through half its
    // plateau, the capture (a board with 15 % more leakage, same plateau) is within a tenth of the swing of it.
    const overlay = await page.evaluate(() => {
      const plot = document.getElementById('drain-plot') as unknown as { data: Array<{ meta: string; x: number[]; y: number[] }> };
      const bare = plot.data.find((d) => d.meta === 'variant:bare')!;
      const capture = plot.data.find((d) => d.meta === 'capture')!;
      const top = Math.max(...bare.y), half = top / 2;
      const k = bare.y.findIndex((v, i) => i > 0 && bare.y[i - 1]! < half && v >= half);
      const t = bare.x[k]!;
      const j = capture.x.findIndex((x) => x >= t);
      return { top, captureThere: capture.y[j]!, half, inView: capture.x.some((x) => x >= bare.x[0]! && x <= bare.x[bare.x.length - 1]!) };
    });
    expect(overlay.inView).toBe(true);
    expect(Math.abs(overlay.captureThere - overlay.half)).toBeLessThan(0.1 * overlay.top);
  }, TEST_TIMEOUT_MS);

  it('fits the capture: the fitted leakage within 2 % of the true value, and "Use these" puts it into the form', async () => {
    await page.click('#capture-fit');
    expect(await waitForCapturePanel(2, FIT_TIMEOUT_MS)).toBe('ok');
    const fitted = Number(await page.getAttribute(`#capture-fit-table tr[data-path="${LEAKAGE}"] td.fitted`, 'data-value'));
    expect(Math.abs(fitted / trueLeakageHenries - 1)).toBeLessThan(0.02);
    // The default scenario's Coss is a curve: its factor is shown, with the ring and the residual.
    expect(await page.$('#capture-fit-table tr[data-path="switch.drainCapacitanceScale"]')).not.toBeNull();
    expect(await page.textContent('#capture-fit-notes')).toMatch(/Ring .*Hz.*Residual/);
    // The fitted model is drawn over the capture (fifth trace), in the SVG.
    const fittedDrawn = await page.evaluate(() => {
      const plot = document.getElementById('drain-plot') as unknown as { data: Array<{ meta: string }> };
      const index = plot.data.findIndex((d) => d.meta === 'capture:fitted');
      const path = document.querySelectorAll('#drain-plot .scatterlayer .trace')[index]?.querySelector('path.js-line');
      return { index, segments: (path?.getAttribute('d') ?? '').split(/[LM]/).length - 1 };
    });
    expect(fittedDrawn.index).toBe(4);
    expect(fittedDrawn.segments).toBeGreaterThan(50);

    await page.click('#capture-use');
    const typed = await page.inputValue(`[data-path="${LEAKAGE}"]`);
    const parsed = parseSiNumber(typed, 'H');
    if (!parsed.ok) throw new Error(`the form's leakage "${typed}" does not parse`);
    // siForForm keeps 12 significant digits.
    expect(Math.abs(parsed.value / fitted - 1)).toBeLessThan(1e-9);
  }, TEST_TIMEOUT_MS);

  it('a malformed CSV shows the server\'s message next to the capture control', async () => {
    const before = await page.evaluate(() => Number(document.getElementById('capture-panel')!.dataset.runCount));
    await openCapture('broken.csv', 'Time,CH1\n0,1\n1e-9,2\n2e-9,oops\n');
    expect(await waitForCapturePanel(before + 1)).toBe('failed');
    const box = await page.evaluate(() => {
      const el = document.getElementById('capture-error')!;
      return { hidden: el.hidden, text: el.textContent, besideControls: el.previousElementSibling?.querySelector('#capture-open') !== null };
    });
    expect(box.hidden).toBe(false);
    expect(box.text).toBe('Capture: line 4: expected a number in column "CH1", found "oops"');
    expect(box.besideControls).toBe(true);
    expect(pageErrors).toEqual([]);
  }, TEST_TIMEOUT_MS);
});
