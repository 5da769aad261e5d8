import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import type { Page } from 'playwright-core';
import { readFile } from 'node:fs/promises';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { startPageSession, type PageSession } from '../support/page-session.js';
import { parseSiNumber } from '../../src/circuit/si-number.js';

// The default scenario's real parts on the page: the drain capacitance as datasheet points (the
// editor, its C(v) plot, the server's complaints per point, the saved file), the new metrics and
// the avalanche level. Debian's chromium against the real server, as the other browser tests.

const root = fileURLToPath(new URL('../../', import.meta.url));
const COSS = 'switch.drainCapacitance';
const RUN_TIMEOUT_MS = 60_000;
const TEST_TIMEOUT_MS = 120_000;

type Raw = number | string;
interface Demo {
  supply: { voltage: Raw };
  transformer: { turnsRatio: Raw };
  output: { voltage: Raw; diodeDrop: Raw };
  switch: { drainCapacitance: Array<[Raw, Raw]>; avalancheVoltage: Raw };
  [block: string]: unknown;
}

function si(value: Raw, unit: string): number {
  const parsed = parseSiNumber(value, unit);
  if (!parsed.ok) throw new Error(`${String(value)} does not parse as ${unit}`);
  return parsed.value;
}

let session: PageSession;
let page: Page;
let demo: Demo;
/** The demo's points as numbers, [V, F]. */
let points: Array<[number, number]>;

async function runs(): Promise<number> { return page.evaluate(() => Number(document.body.dataset.runCount)); }

async function runAndWait(start: () => Promise<void>): Promise<string | undefined> {
  const before = await runs();
  await start();
  await page.waitForFunction((n) => Number(document.body.dataset.runCount) >= n && document.body.dataset.state !== 'busy', before + 1, { timeout: RUN_TIMEOUT_MS });
  return page.evaluate(() => document.body.dataset.lastOutcome);
}

async function metric(variant: string, name: string): Promise<number | null> {
  const text = await page.getAttribute(`#metrics tr[data-variant="${variant}"] td[data-metric="${name}"]`, 'data-value');
  return text === null ? null : Number(text);
}

const pointInput = (i: number, j: 0 | 1): string => `[data-path="${COSS}[${i}][${j}]"]`;

async function editorRows(): Promise<Array<[string, string]>> {
  return page.locator('.curve-point').evaluateAll((rows) => rows.map((r) => [
    (r.querySelector('.curve-voltage') as HTMLInputElement).value,
    (r.querySelector('.curve-capacitance') as HTMLInputElement).value,
  ] as [string, string]));
}

/** The C(v) plot as handed to Plotly: the interpolated line and the points. */
async function curveData(): Promise<Array<{ meta: string; x: number[]; y: number[] }>> {
  return page.evaluate(() => {
    const plot = document.getElementById('cv-plot') as unknown as { data?: Array<{ meta: string; x: number[]; y: number[] }> };
    return (plot.data ?? []).map((d) => ({ meta: d.meta, x: Array.from(d.x), y: Array.from(d.y) }));
  });
}

/** Vertices of an SVG path's M/L commands, in the plot area's pixels. */
function vertices(d: string): Array<[number, number]> {
  return [...d.matchAll(/[ML]\s*(-?[\d.]+(?:e-?\d+)?),\s*(-?[\d.]+(?:e-?\d+)?)/g)].map((m) => [Number(m[1]), Number(m[2])]);
}

function distanceToPolyline([px, py]: [number, number], line: Array<[number, number]>): number {
  let best = Infinity;
  for (let i = 0; i + 1 < line.length; i++) {
    const [ax, ay] = line[i]!, [bx, by] = line[i + 1]!;
    const len2 = (bx - ax) ** 2 + (by - ay) ** 2;
    const t = len2 === 0 ? 0 : Math.max(0, Math.min(1, ((px - ax) * (bx - ax) + (py - ay) * (by - ay)) / len2));
    best = Math.min(best, Math.hypot(px - (ax + t * (bx - ax)), py - (ay + t * (by - ay))));
  }
  return best;
}

/** Plain decimal texts as numbers, as the page writes a saved file (like the bundled ones). */
function plainNumbers(value: unknown): unknown {
  if (typeof value === 'string' && /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/.test(value.trim())) return Number(value);
  if (Array.isArray(value)) return value.map(plainNumbers);
  if (value && typeof value === 'object') return Object.fromEntries(Object.entries(value).map(([k, v]) => [k, plainNumbers(v)]));
  return value;
}

beforeAll(async () => {
  demo = JSON.parse(await readFile(join(root, 'scenarios', 'bias-48v.json'), 'utf8')) as Demo;
  points = demo.switch.drainCapacitance.map(([v, c]) => [si(v, 'V'), si(c, 'F')]);
  session = await startPageSession();
  page = session.page;
  // No ?scenario=: the page opens its default, the README's bias-48v.
  await page.goto(`${session.baseUrl}/`, { timeout: RUN_TIMEOUT_MS });
  await page.waitForFunction(() => Number(document.body.dataset.runCount) >= 1 && document.body.dataset.state !== 'busy', null, { timeout: RUN_TIMEOUT_MS });
}, TEST_TIMEOUT_MS);

afterAll(async () => {
  await session?.close();
});

describe('the drain capacitance curve', () => {
  it('opens the default scenario with its datasheet points in the editor and draws C(v) in SVG', async () => {
    expect(await page.evaluate(() => document.body.dataset.lastOutcome)).toBe('ok');
    expect(await page.inputValue('#scenario-select')).toBe('bias-48v');
    expect(await page.isChecked('#f-switch-drainCapacitance-mode-curve')).toBe(true);
    expect(await page.isVisible('[data-path="switch.drainCapacitance"]')).toBe(false);
    expect(await editorRows()).toEqual(demo.switch.drainCapacitance.map(([v, c]) => [String(v), String(c)]));
    // Each input is named with its point and unit, for a screen reader.
    expect(await page.getByLabel('Point 3, capacitance, in farads').inputValue()).toBe(String(demo.switch.drainCapacitance[2]![1]));

    // The line as handed to Plotly: ln C linear between points, so halfway between two points C is
    // their geometric mean (README, switch.drainCapacitance); flat beyond the last point.
    const [line, marks] = await curveData();
    expect(line?.meta).toBe('curve:interpolated');
    expect(marks?.meta).toBe('curve:points');
    expect(marks?.x).toEqual(points.map(([v]) => v));
    for (let i = 0; i + 1 < points.length; i++) {
      const [v0, c0] = points[i]!, [v1, c1] = points[i + 1]!;
      const k = line!.x.findIndex((x) => Math.abs(x - (v0 + v1) / 2) < 1e-9);
      expect(k).toBeGreaterThan(-1);
      expect(line!.y[k]! / Math.sqrt(c0 * c1)).toBeCloseTo(1, 12);
    }
    const last = points[points.length - 1]!;
    expect(line!.x[line!.x.length - 1]!).toBeGreaterThan(last[0]);
    expect(line!.y[line!.y.length - 1]).toBe(last[1]);

    // What the browser drew: a log axis, an SVG line, one marker per point, and the line through
    // every marker (Plotly drops vertices that are within a pixel of straight, so "on the line").
    const drawn = await page.evaluate(() => {
      const plot = document.getElementById('cv-plot') as unknown as { _fullLayout: { yaxis: { type: string } } };
      const traces = [...document.querySelectorAll('#cv-plot .scatterlayer .trace')];
      return {
        yType: plot._fullLayout.yaxis.type,
        line: traces[0]?.querySelector('path.js-line')?.getAttribute('d') ?? '',
        markers: [...(traces[1]?.querySelectorAll('path.point') ?? [])].map((p) => p.getAttribute('transform') ?? ''),
      };
    });
    expect(drawn.yType).toBe('log');
    const polyline = vertices(drawn.line);
    expect(polyline.length).toBeGreaterThanOrEqual(3);
    expect(drawn.markers).toHaveLength(points.length);
    const markers = drawn.markers.map((t) => {
      const m = /translate\((-?[\d.]+),\s*(-?[\d.]+)\)/.exec(t);
      if (!m) throw new Error(`marker transform "${t}"`);
      return [Number(m[1]), Number(m[2])] as [number, number];
    });
    for (const p of markers) expect(distanceToPolyline(p, polyline)).toBeLessThan(1);
    // The flat part: the line goes on past the last marker at its height.
    const end = polyline[polyline.length - 1]!, lastMarker = markers[markers.length - 1]!;
    expect(end[0] - lastMarker[0]).toBeGreaterThan(10);
    expect(Math.abs(end[1] - lastMarker[1])).toBeLessThan(0.5);
    // And it is not a straight line from the first point to the last: it bends with the data.
    expect(distanceToPolyline(markers[1]!, [markers[0]!, lastMarker])).toBeGreaterThan(10);
  }, TEST_TIMEOUT_MS);

  it('shows the new metrics and the datasheet equivalents of the curve', async () => {
    // Peak above the clamp level (README, Metrics): the drain peak minus Vin + vc at that instant,
    // and vc stays within the clamp's ripple band around its mean.
    const vin = si(demo.supply.voltage, 'V');
    for (const v of ['clamp', 'damped']) {
      const above = (await metric(v, 'peakAboveClamp'))!;
      const peak = (await metric(v, 'peakDrainVoltage'))!;
      const mean = (await metric(v, 'clampVoltageMean'))!;
      const ripple = (await metric(v, 'clampVoltageRipple'))!;
      expect(above).toBeGreaterThan(0);
      expect(peak - above - vin).toBeGreaterThanOrEqual(mean - ripple);
      expect(peak - above - vin).toBeLessThanOrEqual(mean + ripple);
      // The demo's clamp diode has a recovery time, so it conducts backwards every cycle.
      expect(await metric(v, 'clampDiodeReverseCharge')).toBeGreaterThan(0);
    }
    expect(await page.textContent('#metrics tr[data-variant="bare"] td[data-metric="peakAboveClamp"]')).toBe('—');
    // The comparator delay lets the current overshoot the limit by about Vin·td/(Lm + Llk) (README).
    const turnOff = (await metric('bare', 'turnOffCurrent'))!;
    // 30 %: "about" — the winding and channel resistances and the ring at turn-on move it a little.
    const sw = demo.switch as unknown as Record<string, Raw>, tr = demo.transformer as unknown as Record<string, Raw>;
    const limit = si(sw.peakCurrent!, 'A');
    const overshoot = vin * si(sw.turnOffDelay!, 's') / (si(tr.magnetizingInductance!, 'H') + si(tr.leakageInductance!, 'H'));
    expect(turnOff - limit).toBeGreaterThan(0.7 * overshoot);
    expect(turnOff - limit).toBeLessThan(1.3 * overshoot);
    expect(await page.textContent('#metrics thead')).toMatch(/Avalanche/);
    expect(await page.getAttribute('#metrics tr[data-variant="bare"] [data-metric="avalanchePower"]', 'data-value')).not.toBeNull();

    // Co(er) and Co(tr) over 0…Vin + VR: the README's integrals, here by Simpson's rule on the
    // ln-linear curve (a general-purpose quadrature; 20,000 panels put it within 1e-9 relative).
    const vr = si(demo.transformer.turnsRatio, '') * (si(demo.output.voltage, 'V') + si(demo.output.diodeDrop, 'V'));
    const top = vin + vr;
    const c = (v: number): number => {
      for (let i = 0; i + 1 < points.length; i++) {
        const [v0, c0] = points[i]!, [v1, c1] = points[i + 1]!;
        if (v <= v1) return c0 * Math.exp(Math.log(c1 / c0) * (v - v0) / (v1 - v0));
      }
      return points[points.length - 1]![1];
    };
    const simpson = (f: (v: number) => number): number => {
      const n = 20_000, h = top / n;
      let sum = f(0) + f(top);
      for (let i = 1; i < n; i++) sum += (i % 2 ? 4 : 2) * f(i * h);
      return (sum * h) / 3;
    };
    const energyEquivalent = (2 * simpson((v) => v * c(v))) / top ** 2;
    const chargeEquivalent = simpson(c) / top;
    const shown = async (m: string): Promise<number> => Number(await page.getAttribute(`#coss-equivalents [data-metric="${m}"]`, 'data-value'));
    // Slack: the kinks at the points cost Simpson's rule its order; 1e-6 relative is still far tighter than the 3 digits shown.
    expect(await shown('drainCapacitanceEnergyEquivalent') / energyEquivalent).toBeCloseTo(1, 6);
    expect(await shown('drainCapacitanceChargeEquivalent') / chargeEquivalent).toBeCloseTo(1, 6);
    expect(await page.textContent('#coss-equivalents')).toMatch(/Co\(er\) \d+(\.\d+)? pF .*Co\(tr\) \d+(\.\d+)? pF/);
  }, TEST_TIMEOUT_MS);

  it('draws the breakdown voltage as a labelled level on the drain plot (in the SVG)', async () => {
    const avalanche = si(demo.switch.avalancheVoltage, 'V');
    const drawn = await page.evaluate((level) => {
      const plot = document.getElementById('drain-plot') as unknown as {
        data: Array<{ meta: string; line: { color: string } }>;
        _fullLayout: { yaxis: { l2p(v: number): number } };
      };
      const index = plot.data.findIndex((d) => d.meta === 'limit:avalanche');
      // Plotly keeps the traces' order in the scatter layer.
      const trace = document.querySelectorAll('#drain-plot .scatterlayer .trace')[index];
      const path = trace?.querySelector('path.js-line');
      return {
        index,
        d: path?.getAttribute('d') ?? '',
        stroke: path ? getComputedStyle(path).stroke : '',
        dash: path ? getComputedStyle(path).strokeDasharray : '',
        colour: index >= 0 ? plot.data[index]!.line.color : '',
        labels: [...document.querySelectorAll('#drain-plot .annotation-text')].map((t) => t.textContent ?? ''),
        yAt: plot._fullLayout.yaxis.l2p(level),
      };
    }, avalanche);
    expect(drawn.index).toBeGreaterThan(-1);
    const ends = vertices(drawn.d);
    expect(ends.length).toBeGreaterThanOrEqual(2);
    // A level: every vertex at the pixel row of the breakdown voltage on the plot's own axis.
    for (const [, y] of ends) expect(Math.abs(y - drawn.yAt)).toBeLessThan(0.6);
    expect(ends[ends.length - 1]![0] - ends[0]![0]).toBeGreaterThan(100);
    expect(drawn.dash).not.toBe('none');
    const hex = drawn.colour.replace('#', '');
    const rgb = [0, 2, 4].map((i) => parseInt(hex.slice(i, i + 2), 16));
    expect(drawn.stroke).toBe(`rgb(${rgb.join(', ')})`);
    expect(drawn.labels.some((t) => t.startsWith(`avalanche ${avalanche} V`))).toBe(true);
  }, TEST_TIMEOUT_MS);

  it('runs an edited point: the request carries the points as typed and the table shows the peak above the clamp', async () => {
    const bodies: string[] = [];
    const onRequest = (r: { url(): string; postData(): string | null }): void => { if (r.url().endsWith('/api/simulate')) bodies.push(r.postData() ?? ''); };
    page.on('request', onRequest);
    await page.fill(pointInput(2, 1), '300pF');
    // The plot follows the typing before any run.
    await page.waitForFunction(() => {
      const plot = document.getElementById('cv-plot') as unknown as { data?: Array<{ meta: string; x: number[]; y: number[] }> };
      const marks = plot.data?.find((d) => d.meta === 'curve:points');
      return Boolean(marks && Math.abs(marks.y[2]! - 300e-12) < 1e-21);
    });
    const before = (await metric('clamp', 'peakDrainVoltage'))!;
    expect(await runAndWait(() => page.press(pointInput(2, 1), 'Enter'))).toBe('ok');
    page.off('request', onRequest);
    const sent = JSON.parse(bodies[bodies.length - 1]!) as { scenario: Demo };
    expect(sent.scenario.switch.drainCapacitance).toEqual(demo.switch.drainCapacitance.map(([v, c], i) => [String(v), i === 2 ? '300pF' : String(c)]));
    const above = await metric('clamp', 'peakAboveClamp');
    expect(above).not.toBeNull();
    expect(above!).toBeGreaterThan(0);
    expect(await page.isVisible('#metrics thead th[data-metric="peakAboveClamp"]')).toBe(true);
    // More capacitance at 25 V is a different circuit: the run is a new one, not the old numbers.
    expect(await metric('clamp', 'peakDrainVoltage')).not.toBe(before);
  }, TEST_TIMEOUT_MS);

  it('puts the server\'s complaint about voltages that do not increase beside that point', async () => {
    await page.fill(pointInput(3, 0), '20');
    expect(await runAndWait(() => page.click('#run'))).toBe('invalid');
    const row = page.locator('.curve-point').nth(3);
    const box = row.locator('.field-error');
    await box.waitFor({ state: 'visible' });
    // The server's message (src/circuit/validate-scenario.ts) names the previous point's voltage.
    expect(await box.textContent()).toMatch(/strictly increasing.*found "20"/);
    expect(await page.getAttribute(pointInput(3, 0), 'aria-invalid')).toBe('true');
    expect(await page.getAttribute(pointInput(3, 1), 'aria-invalid')).toBeNull();
    expect(await page.getAttribute(pointInput(3, 0), 'aria-describedby')).toBe(await box.getAttribute('id'));
    // Only that point is marked.
    expect(await page.locator('.curve-point .field-error:not([hidden])').count()).toBe(1);
    // The plot does not draw a line the simulator would refuse.
    expect((await curveData()).map((d) => d.meta)).toEqual(['curve:points']);
    await page.fill(pointInput(3, 0), String(demo.switch.drainCapacitance[3]![0]));
    expect(await box.isVisible()).toBe(false);
    expect(await page.getAttribute(pointInput(3, 0), 'aria-invalid')).toBeNull();
  }, TEST_TIMEOUT_MS);

  it('adds and removes points, down to the two the simulator needs', async () => {
    await page.getByRole('button', { name: 'Add point' }).click();
    expect(await page.locator('.curve-point').count()).toBe(points.length + 1);
    expect(await page.getAttribute(`.curve-point >> nth=${points.length} >> .curve-voltage`, 'data-path')).toBe(`${COSS}[${points.length}][0]`);
    await page.getByRole('button', { name: `Remove point ${points.length + 1}` }).click();
    expect(await page.locator('.curve-point').count()).toBe(points.length);
    // Removing the second point renumbers the rest, so the server's paths still find their rows.
    const third = await page.inputValue(pointInput(2, 0));
    await page.getByRole('button', { name: 'Remove point 2' }).click();
    expect(await page.inputValue(pointInput(1, 0))).toBe(third);
    expect(await page.locator('.curve-point').count()).toBe(points.length - 1);
    // Put the demo's points back for the tests below.
    expect(await runAndWait(() => page.selectOption('#scenario-select', 'bias-48v').then(() => undefined))).toBe('ok');
    expect(await editorRows()).toEqual(demo.switch.drainCapacitance.map(([v, c]) => [String(v), String(c)]));
    const removable = await page.locator('.curve-remove:not([disabled])').count();
    expect(removable).toBe(points.length);
  }, TEST_TIMEOUT_MS);

  it('saves the points as [[V, C], …] and opens them again', async () => {
    await page.waitForFunction(() => document.body.dataset.state !== 'busy', null, { timeout: RUN_TIMEOUT_MS });
    const [download] = await Promise.all([page.waitForEvent('download'), page.click('#save-file')]);
    const saved = JSON.parse(await readFile((await download.path())!, 'utf8')) as Demo;
    // As in the bundled file: plain numbers as numbers, prefixed values as typed.
    expect(saved.switch.drainCapacitance).toEqual(demo.switch.drainCapacitance);
    // Every other field as in the file (texts like "0.12" come back as numbers); the bundled file's
    // "$schema" (a path beside it, for editors) is not sent to the page, so a saved copy has none.
    const { $schema: _forEditors, ...fields } = demo as Demo & { $schema?: string };
    expect(saved).toEqual(plainNumbers(fields));

    // Opened again: the editor holds the points and the run succeeds.
    expect(await runAndWait(() => page.selectOption('#scenario-select', 'gate-drive-24v').then(() => undefined))).toBe('ok');
    expect(await page.isChecked('#f-switch-drainCapacitance-mode-constant')).toBe(true);
    expect(await runAndWait(() => page.setInputFiles('#file-input', { name: 'saved.json', mimeType: 'application/json', buffer: Buffer.from(JSON.stringify(saved)) }))).toBe('ok');
    expect(await page.isChecked('#f-switch-drainCapacitance-mode-curve')).toBe(true);
    expect(await editorRows()).toEqual(demo.switch.drainCapacitance.map(([v, c]) => [String(v), String(c)]));
  }, TEST_TIMEOUT_MS);

  it('switches to one constant, filled with the curve\'s C at Vin + VR, and saves it as one value', async () => {
    await page.check('#f-switch-drainCapacitance-mode-constant');
    const vr = si(demo.transformer.turnsRatio, '') * (si(demo.output.voltage, 'V') + si(demo.output.diodeDrop, 'V'));
    const at = si(demo.supply.voltage, 'V') + vr;
    // ln-linear between the two points around Vin + VR (README, switch.drainCapacitance).
    const i = points.findIndex(([v]) => v > at) - 1;
    const [v0, c0] = points[i]!, [v1, c1] = points[i + 1]!;
    const expected = c0 * (c1 / c0) ** ((at - v0) / (v1 - v0));
    const typed = await page.inputValue('[data-path="switch.drainCapacitance"]');
    expect(si(typed, 'F') / expected).toBeCloseTo(1, 2);
    expect(await page.isVisible('#cv-plot')).toBe(false);
    const [download] = await Promise.all([page.waitForEvent('download'), page.click('#save-file')]);
    const saved = JSON.parse(await readFile((await download.path())!, 'utf8')) as { switch: { drainCapacitance: unknown } };
    expect(saved.switch.drainCapacitance).toBe(typed);
    expect(session.pageErrors).toEqual([]);
  }, TEST_TIMEOUT_MS);
});

describe('the form against the README', () => {
  // The page builds its form from its list of scenario fields (web/src/fields.ts); the README's tables are
  // the documented format. Every documented field has an input with the documented unit and
  // default, and the form has no field the format lacks.
  interface Documented { path: string; unit?: string; fallback?: string }
  const SPOKEN: Record<string, string> = { V: 'volts', A: 'amperes', H: 'henries', F: 'farads', Hz: 'hertz', s: 'seconds', 'Ω': 'ohms', 'A/s': 'amperes per second' };

  function tableRows(text: string, from: string, to: string): string[][] {
    const start = text.indexOf(from), end = text.indexOf(to, start);
    expect(start).toBeGreaterThan(-1);
    return text.slice(start, end).split('\n').filter((l) => l.startsWith('| `'))
      .map((l) => l.slice(1, -1).split(' | ').map((c) => c.trim()));
  }

  function paths(cell: string): string[] {
    const out: string[] = [];
    for (const [, token] of cell.matchAll(/`([^`]+)`/g)) {
      // ".frequencyWithAddedCapacitor" continues the block of the path before it.
      out.push(token!.startsWith('.') ? `${out[out.length - 1]!.replace(/\.[^.]+$/, '')}${token}` : token!);
    }
    return out;
  }

  async function documented(): Promise<Documented[]> {
    const readme = await readFile(join(root, 'README.md'), 'utf8');
    const out: Documented[] = [];
    for (const [fields, unit, notes] of tableRows(readme, '## Scenario files', '\nVariants:')) {
      const ps = paths(fields!);
      const units = ps.length > 1 ? unit!.split(', ') : [unit!.replace(/, or points$/, '')];
      // "optional, 0.9" gives a default; "optional:" or "optional, together" means absent; in a row
      // of several fields, "diode drop optional, 1.0 V" gives one of them its default.
      const fallback = /^optional, (-?[\d.]+(?:e-?\d+)?)\b/.exec(notes ?? '')?.[1];
      const named = /\(([a-z][a-z ]*?) optional, (-?[\d.]+)/.exec(notes ?? '');
      const words = (path: string): string => path.split('.').pop()!.replace(/([A-Z])/g, ' $1').toLowerCase();
      ps.forEach((path, i) => {
        const value = fallback ?? (named && words(path) === named[1] ? named[2] : undefined);
        out.push({ path, unit: (units[i] ?? units[0])!, ...(value !== undefined ? { fallback: value } : {}) });
      });
    }
    for (const [fields, defaults] of tableRows(readme, 'The `design` block', '### `flyclamp sweep')) {
      const ps = paths(fields!);
      const values = defaults === '—' ? [] : defaults!.replace(/`/g, '').split(', ');
      ps.forEach((path, i) => out.push({ path, ...(values.length ? { fallback: values[i] ?? values[0] } : {}) }));
    }
    return out;
  }

  it('has an input for every documented field, with its unit and default, and no other', async () => {
    const fields = await documented();
    // The tables hold every block of the format (a parse that found little would prove nothing).
    expect(fields.length).toBeGreaterThan(40);
    expect(fields.map((f) => f.path)).toEqual(expect.arrayContaining(['switch.drainCapacitance', 'clamp.diodeForwardRecoveryRate', 'design.measuredRing.addedCapacitance']));
    const inForm = await page.evaluate(() => [...document.querySelectorAll('#params [data-path]')]
      .map((e) => (e as HTMLElement).dataset.path!).filter((p) => !p.includes('[')));
    expect([...inForm].sort()).toEqual(fields.map((f) => f.path).sort());

    for (const f of fields) {
      const shown = await page.evaluate((path) => {
        const input = document.querySelector(`#params [data-path="${path}"]`) as HTMLInputElement | HTMLSelectElement;
        return {
          unit: input.closest('.entry')?.querySelector('.unit')?.textContent ?? null,
          placeholder: input instanceof HTMLInputElement ? input.placeholder : input.options[0]!.textContent ?? '',
          label: (input as HTMLInputElement).labels?.[0]?.textContent ?? '',
        };
      }, f.path);
      if (f.unit !== undefined && f.path !== 'name') {
        const expected = f.unit === '—' ? '—' : f.unit;
        expect(shown.unit, f.path).toBe(expected);
        // The label speaks the unit, since the visible one after the input is not part of it.
        if (SPOKEN[f.unit]) expect(shown.label, f.path).toContain(`in ${SPOKEN[f.unit]}`);
      }
      if (f.fallback === undefined) {
        expect(shown.placeholder, f.path).not.toMatch(/^default/);
      } else if (f.fallback === 'supply.voltage') {
        expect(shown.placeholder, f.path).toBe('default: supply');
      } else if (f.fallback.endsWith('%')) {
        expect(shown.placeholder, f.path).toBe(`default ${f.fallback}`);
      } else if (/^E\d+$/.test(f.fallback)) {
        expect(shown.placeholder, f.path).toBe(`default (${f.fallback})`);
      } else {
        const m = /^default (\S+)$/.exec(shown.placeholder);
        expect(m, `${f.path} placeholder "${shown.placeholder}"`).not.toBeNull();
        expect(Number(m![1]), f.path).toBe(Number(f.fallback));
      }
    }
  }, TEST_TIMEOUT_MS);
});
