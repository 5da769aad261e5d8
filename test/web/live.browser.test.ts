import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { startPageSession, type PageSession } from '../support/page-session.js';
import { formatSi, parseSiNumber } from '../../src/circuit/si-number.js';

// Live editing, the shareable address, the drain plot's cursors and peak markers, the reporting of a
// misspelt field and the accessibility basics, in Debian's chromium against the real server. What
// is checked is what the browser drew (SVG paths and their pixel positions), not only what the page
// handed to plotly.

const LEAKAGE = 'transformer.leakageInductance';
const RUN_TIMEOUT_MS = 60_000;
const TEST_TIMEOUT_MS = 120_000;

let session: PageSession;
let page: Page;

const runCount = (p: Page = page): Promise<number> => p.evaluate(() => Number(document.body.dataset.runCount));

async function waitForRuns(count: number, p: Page = page): Promise<string | undefined> {
  await p.waitForFunction((n) => Number(document.body.dataset.runCount) >= n && document.body.dataset.state !== 'busy', count, { timeout: RUN_TIMEOUT_MS });
  return p.evaluate(() => document.body.dataset.lastOutcome);
}

async function openBundled(id: string): Promise<void> {
  const before = await runCount();
  await page.selectOption('#scenario-select', id);
  expect(await waitForRuns(before + 1)).toBe('ok');
}

/** The SVG path plotly drew for a trace of the drain plot, by the trace's position in its data. */
async function drawnLine(meta: string): Promise<string> {
  return page.evaluate((m) => {
    const plot = document.getElementById('drain-plot') as unknown as { data: Array<{ meta: string }> };
    const index = plot.data.findIndex((d) => d.meta === m);
    const trace = document.querySelectorAll('#drain-plot .scatterlayer .trace')[index];
    return trace?.querySelector('path.js-line')?.getAttribute('d') ?? '';
  }, meta);
}

async function tableValue(variant: string, metric: string): Promise<number> {
  return Number(await page.getAttribute(`#metrics tr[data-variant="${variant}"] td[data-metric="${metric}"]`, 'data-value'));
}

function si(text: string | number, unit: string): number {
  const parsed = parseSiNumber(text, unit);
  if (!parsed.ok) throw new Error(`${String(text)} does not read in ${unit}`);
  return parsed.value;
}

/** Every form value and switch: what a link must bring back. */
async function formState(p: Page): Promise<Record<string, string | boolean>> {
  return p.evaluate(() => {
    const out: Record<string, string | boolean> = {};
    for (const e of document.querySelectorAll<HTMLInputElement | HTMLSelectElement>('#params input, #params select')) {
      const key = e.dataset.path ?? e.id ?? e.name;
      out[key] = e instanceof HTMLInputElement && (e.type === 'checkbox' || e.type === 'radio') ? e.checked : e.value;
    }
    return out;
  });
}

beforeAll(async () => {
  session = await startPageSession();
  page = session.page;
  await page.goto(`${session.baseUrl}/?scenario=bias-48v`, { timeout: RUN_TIMEOUT_MS });
  expect(await waitForRuns(1)).toBe('ok');
}, TEST_TIMEOUT_MS);

afterAll(async () => { await session?.close(); });

describe('live editing', () => {
  it('re-simulates a short pause after a valid edit, without a click, and redraws the traces', async () => {
    const timings: number[] = [];
    /** The request's own time, as the status line reports it. */
    const requests: number[] = [];
    const leakage = si(await page.inputValue(`[data-path="${LEAKAGE}"]`), 'H');
    for (const factor of [1.3, 1.6, 1.9]) {
      const before = await runCount();
      const line = await drawnLine('variant:bare');
      const peak = await tableValue('clamp', 'peakDrainVoltage');
      const started = Date.now();
      await page.fill(`[data-path="${LEAKAGE}"]`, formatSi(leakage * factor, 'H'));
      // No click and no Enter: the page runs by itself.
      await page.waitForFunction((old) => {
        const plot = document.getElementById('drain-plot') as unknown as { data: Array<{ meta: string }> };
        const index = plot.data.findIndex((d) => d.meta === 'variant:bare');
        const d = document.querySelectorAll('#drain-plot .scatterlayer .trace')[index]?.querySelector('path.js-line')?.getAttribute('d');
        return d !== undefined && d !== null && d !== old;
      }, line, { timeout: RUN_TIMEOUT_MS });
      timings.push(Date.now() - started);
      expect(await waitForRuns(before + 1)).toBe('ok');
      requests.push(Number(/in ([\d.]+) s/.exec(await page.textContent('#status') ?? '')?.[1]) * 1000);
      // More leakage stores more energy at turn-off: the clamp variant's peak rises (½·L·I², the
      // clamp capacitor takes it; common practice).
      expect(await tableValue('clamp', 'peakDrainVoltage')).toBeGreaterThan(peak);
    }
    timings.sort((a, b) => a - b);
    requests.sort((a, b) => a - b);
    // Reported, not asserted (speed goals live in the benchmark).
    console.log(`edit → redrawn drain plot, ms (300 ms pause included): ${timings.join(', ')}; median ${timings[1]}; the simulate requests alone: median ${requests[1]} ms`);
  }, TEST_TIMEOUT_MS);

  it('sends the shown answer\'s startStates with an edit of the same design, and none with a newly loaded one', async () => {
    const bodies: Array<{ startStates?: Record<string, number[]> }> = [];
    const onRequest = (request: { url(): string; postData(): string | null }): void => {
      if (request.url().endsWith('/api/simulate')) bodies.push(JSON.parse(request.postData() ?? '{}') as { startStates?: Record<string, number[]> });
    };
    page.on('request', onRequest);
    try {
      const before = await runCount();
      const leakage = si(await page.inputValue(`[data-path="${LEAKAGE}"]`), 'H');
      await page.fill(`[data-path="${LEAKAGE}"]`, formatSi(leakage * 0.9, 'H'));
      expect(await waitForRuns(before + 1)).toBe('ok');
      const edit = bodies.at(-1)!;
      expect(Object.keys(edit.startStates ?? {})).toEqual(['bare', 'clamp', 'damped']);
      for (const state of Object.values(edit.startStates!)) expect(state.every(Number.isFinite)).toBe(true);
      await openBundled('gate-drive-24v');
      expect(bodies.at(-1)!.startStates).toBeUndefined();
      await openBundled('bias-48v'); // as the tests below expect it
    } finally {
      page.off('request', onRequest);
    }
  }, TEST_TIMEOUT_MS);

  it('does not send a value that does not read as a number, and says why', async () => {
    const before = await runCount();
    await page.fill(`[data-path="${LEAKAGE}"]`, '2.4 uu');
    await page.waitForFunction(() => /does not read as a number/.test(document.getElementById('status')?.textContent ?? ''), null, { timeout: RUN_TIMEOUT_MS });
    expect(await runCount()).toBe(before);
  }, TEST_TIMEOUT_MS);

  it('sends a valid edit at the keystroke, and shows the newest answer only once the form has been still for the pause', async () => {
    await openBundled('gate-drive-24v'); // its answers come well inside the pause
    const LIVE_PAUSE_MS = 300; // web/src/simulate.ts
    await page.evaluate((path) => {
      const w = window as unknown as { editedAt: number; drawnAt: number };
      w.editedAt = 0; w.drawnAt = 0;
      document.querySelector(`[data-path="${path}"]`)!.addEventListener('input', () => { w.editedAt = performance.now(); });
      new MutationObserver(() => { w.drawnAt = performance.now(); }).observe(document.body, { attributes: true, attributeFilter: ['data-run-count'] });
    }, LEAKAGE);
    const sent: string[] = [];
    let releaseFirst = (): void => undefined;
    const firstHeld = new Promise<void>((ok) => { releaseFirst = ok; });
    await page.route('**/api/simulate', async (route) => {
      sent.push(route.request().postData() ?? '');
      if (sent.length === 1) await firstHeld;
      await route.continue().catch(() => undefined);
    });
    try {
      const leakage = si(await page.inputValue(`[data-path="${LEAKAGE}"]`), 'H');
      const before = await runCount();
      await page.fill(`[data-path="${LEAKAGE}"]`, formatSi(2 * leakage, 'H'));
      // Sent at once: the page is busy before any pause could have passed…
      expect(await page.evaluate(() => document.body.dataset.state)).toBe('busy');
      for (let k = 0; k < 200 && sent.length < 1; k++) await page.waitForTimeout(25);
      expect(sent).toHaveLength(1);
      // …and a second edit within the pause sends again, dropping the first.
      await page.fill(`[data-path="${LEAKAGE}"]`, formatSi(0.5 * leakage, 'H'));
      releaseFirst();
      expect(await waitForRuns(before + 1)).toBe('ok');
      await page.waitForTimeout(500);
      expect(sent).toHaveLength(2);
      expect(await runCount()).toBe(before + 1);
      const { editedAt, drawnAt } = await page.evaluate(() => { const w = window as unknown as { editedAt: number; drawnAt: number }; return { editedAt: w.editedAt, drawnAt: w.drawnAt }; });
      // Shown no sooner than the pause after the last keystroke, whenever its answer came.
      expect(drawnAt - editedAt).toBeGreaterThanOrEqual(LIVE_PAUSE_MS);
      // The answer shown is the newest edit's: half the leakage, a lower bare peak than the demo's.
      const half = await tableValue('bare', 'peakDrainVoltage');
      await page.unroute('**/api/simulate');
      await openBundled('gate-drive-24v');
      expect(half).toBeLessThan(await tableValue('bare', 'peakDrainVoltage'));
    } finally {
      releaseFirst();
      await page.unroute('**/api/simulate').catch(() => undefined);
    }
    await openBundled('bias-48v'); // as the tests below expect it
  }, TEST_TIMEOUT_MS);

  it('cancels an older request when a newer edit comes, and shows only the newest answer', async () => {
    await openBundled('bias-48v');
    const failed: string[] = [];
    const onFailed = (r: { url(): string }): void => { if (r.url().endsWith('/api/simulate')) failed.push(r.url()); };
    page.on('requestfailed', onFailed);
    // The first answer is held back by a second, so the newer edit overtakes it.
    let held = true;
    await page.route('**/api/simulate', async (route) => {
      if (held) { held = false; await new Promise((r) => setTimeout(r, 1500)); }
      await route.continue().catch(() => undefined);
    });
    const leakage = si(await page.inputValue(`[data-path="${LEAKAGE}"]`), 'H');
    const before = await runCount();
    await page.fill(`[data-path="${LEAKAGE}"]`, formatSi(2 * leakage, 'H'));
    await page.waitForFunction(() => document.body.dataset.state === 'busy', null, { timeout: RUN_TIMEOUT_MS });
    await page.fill(`[data-path="${LEAKAGE}"]`, formatSi(0.5 * leakage, 'H'));
    expect(await waitForRuns(before + 1)).toBe('ok');
    await page.waitForTimeout(2000);
    await page.unroute('**/api/simulate');
    page.off('requestfailed', onFailed);
    expect(failed.length).toBeGreaterThanOrEqual(1);
    // One finished run only (the cancelled one does not count), showing the half leakage: its bare
    // peak is below the demo's (less energy in the leakage).
    expect(await runCount()).toBe(before + 1);
    const half = await tableValue('bare', 'peakDrainVoltage');
    await openBundled('bias-48v');
    expect(half).toBeLessThan(await tableValue('bare', 'peakDrainVoltage'));
  }, TEST_TIMEOUT_MS);
});

describe('the address holds the edited design', () => {
  it('restores every field of an edited scenario in a fresh page from the fragment', async () => {
    await openBundled('bias-48v');
    const before = await runCount();
    await page.fill(`[data-path="${LEAKAGE}"]`, '1.7uH');
    await page.uncheck('#use-damper');
    await page.fill('[data-path="switch.turnOffDelay"]', '');
    await page.fill('[data-path="clamp.capacitance"]', '3.3n');
    expect(await waitForRuns(before + 1)).toBe('ok');
    await page.waitForFunction(() => window.location.hash.startsWith('#s1.'));
    const url = page.url();
    // Only the change travels (compressed), not the whole scenario; never in the query, so never in a server log.
    expect(new URL(url).search).toBe('?scenario=bias-48v');
    expect(new URL(url).hash.length).toBeLessThan(200);
    const edited = await formState(page);

    const fresh = await page.context().browser()!.newPage({ viewport: { width: 1440, height: 1000 } });
    try {
      await fresh.goto(url, { timeout: RUN_TIMEOUT_MS });
      expect(await waitForRuns(1, fresh)).toBe('ok');
      expect(await formState(fresh)).toEqual(edited);
      expect(await fresh.inputValue(`[data-path="${LEAKAGE}"]`)).toBe('1.7uH');
      expect(await fresh.isChecked('#use-damper')).toBe(false);
      // The fresh page simulated what it restored: no damper row.
      expect(await fresh.getAttribute('#metrics tr[data-variant="damped"]', 'class')).toBe('absent');
    } finally {
      await fresh.close();
    }
  }, TEST_TIMEOUT_MS);
});

describe('the drain plot', () => {
  it('marks the peak of each variant where the table puts it', async () => {
    await openBundled('bias-48v');
    const drawn = await page.evaluate(() => {
      const plot = document.getElementById('drain-plot') as unknown as { data: Array<{ meta: string }>; _fullLayout: { yaxis: { l2p(v: number): number } } };
      const traces = document.querySelectorAll('#drain-plot .scatterlayer .trace');
      return ['bare', 'clamp', 'damped'].map((v) => {
        const index = plot.data.findIndex((d) => d.meta === `peak:${v}`);
        const marker = traces[index]?.querySelector('.points path');
        const m = /translate\(([-\d.]+),\s*([-\d.]+)\)/.exec(marker?.getAttribute('transform') ?? '');
        return { variant: v, y: m ? Number(m[2]) : NaN, toPixel: (value: number) => value };
      });
    });
    for (const { variant, y } of drawn) {
      const peak = await tableValue(variant, 'peakDrainVoltage');
      const expectedY = await page.evaluate((value) => (document.getElementById('drain-plot') as unknown as { _fullLayout: { yaxis: { l2p(v: number): number } } })._fullLayout.yaxis.l2p(value), peak);
      // Within a pixel of the table's peak on the plot's own axis.
      expect(Math.abs(y - expectedY), variant).toBeLessThan(1);
    }
  }, TEST_TIMEOUT_MS);

  it('reads the period of the bare ring between two crests with the cursors, within 2 % of the LC resonance', async () => {
    // A scenario of constant parts, its bare variant alone, at a duty that keeps the first swing
    // above 0 V (no body-diode clipping): after turn-off the leakage inductance rings with the drain
    // capacitance while the output diode holds the magnetizing inductance (README, "The model").
    await openBundled('gate-drive-24v');
    let before = await runCount();
    await page.uncheck('#use-clamp');
    await page.uncheck('#use-damper');
    await page.fill('[data-path="switch.dutyCycle"]', '0.2');
    await page.press('[data-path="switch.dutyCycle"]', 'Enter');
    expect(await waitForRuns(before + 1)).toBe('ok');
    before = await runCount();
    await page.click('#zoom-turnoff');
    expect(await waitForRuns(before + 1)).toBe('ok');
    await page.waitForFunction(() => document.getElementById('drain-plot')?.dataset.view === 'turn-off');

    // Crests of the drawn bare trace: the highest point of each excursion above Vin + VR.
    const plateau = 30 + 1 * (15 + 0.4);
    const crests = await page.evaluate((level) => {
      const plot = document.getElementById('drain-plot') as unknown as { data: Array<{ meta: string; x: number[]; y: number[] }> };
      const bare = plot.data.find((d) => d.meta === 'variant:bare')!;
      const out: Array<{ x: number; y: number }> = [];
      let best: { x: number; y: number } | null = null;
      for (let i = 0; i < bare.y.length; i++) {
        if (bare.y[i]! > level) { if (!best || bare.y[i]! > best.y) best = { x: bare.x[i]!, y: bare.y[i]! }; }
        else if (best) { out.push(best); best = null; }
      }
      return out;
    }, plateau);
    expect(crests.length).toBeGreaterThanOrEqual(4);
    const click = async (c: { x: number; y: number }): Promise<void> => {
      const at = await page.evaluate((p) => {
        const el = document.getElementById('drain-plot')!;
        const plot = el as unknown as { _fullLayout: { xaxis: { l2p(v: number): number }; yaxis: { l2p(v: number): number }; _size: { l: number; t: number } } };
        const box = el.querySelector('.main-svg')!.getBoundingClientRect();
        const L = plot._fullLayout;
        return { x: box.left + L._size.l + L.xaxis.l2p(p.x), y: box.top + L._size.t + L.yaxis.l2p(p.y) };
      }, c);
      await page.mouse.move(at.x, at.y);
      await page.mouse.click(at.x, at.y);
    };
    await click(crests[1]!);
    await page.waitForFunction(() => /click a second point/.test(document.getElementById('cursor-readout')?.textContent ?? ''));
    // Plotly takes two clicks within its double-click delay (300 ms by default) for a double-click
    // (it resets the axes and reports no click), as it does for a person clicking that fast.
    await page.waitForTimeout(400);
    await click(crests[2]!);
    await page.waitForFunction(() => document.getElementById('cursor-readout')?.dataset.dt !== undefined);
    const dt = Number(await page.getAttribute('#cursor-readout', 'data-dt'));
    const frequency = Number(await page.getAttribute('#cursor-readout', 'data-frequency'));
    // LC resonance: T = 2π·√(L·C), L the leakage inductance, C the drain capacitance (the winding
    // resistance, 50 mΩ against √(L/C) = 32 Ω, moves it by far less than 2 %).
    const period = 2 * Math.PI * Math.sqrt(400e-9 * 400e-12);
    expect(Math.abs(dt / period - 1)).toBeLessThan(0.02);
    expect(frequency * dt).toBeCloseTo(1, 9);
    expect(await page.textContent('#cursor-readout')).toMatch(/Δt = [\d.]+ ns, ΔV = .*V, 1\/Δt = [\d.]+ MHz/);
    // Drawn: two dotted vertical lines at the clicked times, and the two ringed points.
    const lines = await page.evaluate(() => [...document.querySelectorAll('#drain-plot .shapelayer path')].map((p) => p.getAttribute('d') ?? ''));
    expect(lines).toHaveLength(2);
    const marks = await page.locator('#drain-plot .scatterlayer .trace:last-child .points path').count();
    expect(marks).toBe(2);
    expect(session.pageErrors).toEqual([]);
  }, TEST_TIMEOUT_MS);
});

describe('opened files and errors', () => {
  it('reports a misspelt field of an opened file instead of dropping it', async () => {
    const raw = {
      name: 'misspelt', supply: { voltage: 30 },
      transformer: { magnetizingInductance: '20u', leakageInductanse: '400n', turnsRatio: 1 },
      output: { voltage: 15, diodeDrop: 0.4 },
      switch: { frequency: '250k', dutyCycle: 0.2, drainCapacitance: '400p', onResistance: '30m', voltageRating: 100 },
    };
    const before = await runCount();
    await page.setInputFiles('#file-input', { name: 'misspelt.json', mimeType: 'application/json', buffer: Buffer.from(JSON.stringify(raw)) });
    expect(await waitForRuns(before + 1)).toBe('invalid');
    const text = await page.textContent('#general-error');
    expect(await page.isVisible('#general-error')).toBe(true);
    // The page's line with the value, and the server's own message naming the path.
    expect(text).toContain('transformer.leakageInductanse = "400n"');
    expect(text).toMatch(/transformer\.leakageInductanse\s*unknown field/);
    // The field it was meant for is reported as missing, beside its input.
    expect(await page.textContent(`.field-error[data-for="${LEAKAGE}"]`)).not.toBe('');
  }, TEST_TIMEOUT_MS);

  it('moves the focus to the first field in error after an explicit run', async () => {
    await openBundled('bias-48v');
    await page.fill('[data-path="supply.voltage"]', '-5');
    const before = await runCount();
    await page.click('#run');
    expect(await waitForRuns(before + 1)).toBe('invalid');
    expect(await page.evaluate(() => (document.activeElement as HTMLElement | null)?.dataset.path)).toBe('supply.voltage');
  }, TEST_TIMEOUT_MS);

  it('takes down the design panel\'s complaint once the field it named is fixed', async () => {
    await page.fill('[data-path="supply.voltage"]', '-5');
    const before = Number(await page.getAttribute('#design-panel', 'data-run-count'));
    await page.click('#design-run');
    await page.waitForFunction((n) => Number(document.getElementById('design-panel')!.dataset.runCount) >= n && document.getElementById('design-panel')!.dataset.state !== 'busy', before + 1, { timeout: RUN_TIMEOUT_MS });
    expect(await page.getAttribute('#design-panel', 'data-last-outcome')).toBe('invalid');
    expect(await page.isVisible('#design-error')).toBe(true);
    await page.fill('[data-path="supply.voltage"]', '48');
    expect(await page.isVisible('#design-error')).toBe(false);
  }, TEST_TIMEOUT_MS);
  it('reports a design it cannot draw as a failure, not as done with an empty table', async () => {
    // An answer that says ok but lacks the design's parts: drawing it fails, and the panel must say so.
    await page.route('**/api/design', (route) => route.fulfill({ status: 200, contentType: 'application/json', body: JSON.stringify({ ok: true, design: {}, worstCaseTraces: {}, warnings: [] }) }));
    const before = Number(await page.getAttribute('#design-panel', 'data-run-count'));
    await page.click('#design-run');
    await page.waitForFunction((n) => Number(document.getElementById('design-panel')!.dataset.runCount) >= n && document.getElementById('design-panel')!.dataset.state !== 'busy', before + 1, { timeout: RUN_TIMEOUT_MS });
    await page.unroute('**/api/design');
    expect(await page.getAttribute('#design-panel', 'data-last-outcome')).toBe('failed');
    expect(await page.textContent('#design-error')).toMatch(/could not show the design/);
    expect(await page.textContent('#design-status')).toMatch(/^Not designed/);
  }, TEST_TIMEOUT_MS);
});

describe('accessibility', () => {
  /** WCAG 2.1 contrast ratio from relative luminance (W3C, WCAG 2.1 §1.4.3 definitions). */
  function contrast(a: number[], b: number[]): number {
    const lum = (c: number[]): number => {
      const [r, g, bl] = c.map((v) => { const s = v / 255; return s <= 0.03928 ? s / 12.92 : ((s + 0.055) / 1.055) ** 2.4; });
      return 0.2126 * r! + 0.7152 * g! + 0.0722 * bl!;
    };
    const [hi, lo] = [lum(a), lum(b)].sort((x, y) => y - x);
    return (hi! + 0.05) / (lo! + 0.05);
  }

  it('has one h1, named plots with a description, units in the labels, and readable placeholders and notes', async () => {
    await openBundled('bias-48v');
    expect(await page.locator('h1').count()).toBe(1);
    for (const id of ['drain-plot', 'clamp-plot']) {
      const named = await page.evaluate((plotId) => {
        const el = document.getElementById(plotId)!;
        const described = document.getElementById(el.getAttribute('aria-describedby') ?? '');
        return { role: el.getAttribute('role'), label: el.getAttribute('aria-label') ?? '', description: described?.textContent ?? '' };
      }, id);
      expect(named.role).toMatch(/^(img|figure)$/);
      expect(named.label.length).toBeGreaterThan(10);
      expect(named.description).toMatch(/\d+(\.\d+)? V/);
    }
    expect(await page.getByLabel('Leakage inductance, primary side, in henries').count()).toBe(1);
    const colours = await page.evaluate(() => {
      const rgb = (text: string): number[] => (text.match(/[\d.]+/g) ?? []).slice(0, 3).map(Number);
      const input = document.querySelector<HTMLInputElement>('[data-path="transformer.primaryResistance"]')!;
      const pairs: Array<{ what: string; fg: number[]; bg: number[] }> = [
        { what: 'placeholder', fg: rgb(getComputedStyle(input, '::placeholder').color), bg: rgb(getComputedStyle(input).backgroundColor) },
      ];
      for (const selector of ['.hint', '.group-note', '.status', '.view-label', '.unit', '#metrics thead th .u']) {
        const e = document.querySelector(selector)!;
        // The nearest painted background behind it.
        let b: Element | null = e;
        let bg = 'rgba(0, 0, 0, 0)';
        while (b && /rgba\(0, 0, 0, 0\)|transparent/.test(bg)) { bg = getComputedStyle(b).backgroundColor; b = b.parentElement; }
        pairs.push({ what: selector, fg: rgb(getComputedStyle(e).color), bg: rgb(bg) });
      }
      return pairs;
    });
    for (const { what, fg, bg } of colours) expect(contrast(fg, bg), what).toBeGreaterThanOrEqual(4.5);
  }, TEST_TIMEOUT_MS);
});
