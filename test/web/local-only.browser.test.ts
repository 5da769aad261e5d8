import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { readFile } from 'node:fs/promises';
import { startPageSession, type PageSession } from '../support/page-session.js';

// Nothing of a user's design may leave the machine (the product's rule): no control on the page
// reaches another origin, and the plots offer no send-to-cloud or chart-studio control.

const RUN_TIMEOUT_MS = 60_000;
let session: PageSession;
let page: Page;

beforeAll(async () => {
  session = await startPageSession();
  page = session.page;
  await page.goto(`${session.baseUrl}/`, { timeout: RUN_TIMEOUT_MS });
  await page.waitForFunction(() => Number(document.body.dataset.runCount) >= 1 && document.body.dataset.state !== 'busy', null, { timeout: RUN_TIMEOUT_MS });
}, 120_000);

afterAll(async () => { await session?.close(); });

describe('the page keeps the design on this machine', () => {
  it('has no link, form or frame aimed at another origin', async () => {
    const targets = await page.evaluate(() => [
      ...[...document.querySelectorAll('a[href]')].map((a) => (a as HTMLAnchorElement).href),
      ...[...document.querySelectorAll('form[action]')].map((f) => (f as HTMLFormElement).action),
      ...[...document.querySelectorAll('iframe[src], script[src], link[href], img[src]')].map((e) => (e as HTMLIFrameElement).src || (e as HTMLLinkElement).href),
    ]);
    expect(targets.length).toBeGreaterThan(0);
    for (const t of targets) {
      if (t.startsWith('data:') || t.startsWith('blob:')) continue;
      expect(new URL(t).origin, t).toBe(session.baseUrl);
    }
  });

  it('offers no cloud or chart-studio control on the drawn plots, and exports a titled image named after the scenario and variants', async () => {
    const titles = await page.evaluate(() => [...document.querySelectorAll('.modebar-btn')].map((b) => (b.getAttribute('data-title') ?? '').toLowerCase()));
    expect(titles.length).toBeGreaterThan(0);
    for (const t of titles) expect(t).not.toMatch(/cloud|chart studio|edit in|share/);
    const name = await page.inputValue('[data-path="name"]');
    // A file name cannot hold a slash: "12 V / 0.5 A" becomes "12 V 0.5 A".
    const expected = `${name.replace(/\s*\/\s*/g, ' ')} - drain voltage - bare, clamp, damped`;
    await page.hover('#drain-plot');
    const [download] = await Promise.all([
      page.waitForEvent('download'),
      page.click('#drain-plot .modebar-btn[data-title="Download plot as PNG, titled"]'),
    ]);
    expect(download.suggestedFilename()).toBe(`${expected}.png`);
    // Made in the browser: a data: URL, never a request to anywhere.
    expect(download.url()).toMatch(/^data:image\/png;base64,/);
    const png = await readFile((await download.path())!);
    expect([...png.subarray(1, 4)].map((b) => String.fromCharCode(b)).join('')).toBe('PNG');
    // The image is taller than the plot by the title's strip (IHDR height, at scale 2).
    const { height } = await page.evaluate(() => ({ height: document.getElementById('drain-plot')!.clientHeight }));
    expect(png.readUInt32BE(20)).toBe(2 * (height + 46));
    expect(await page.getAttribute('#drain-plot', 'data-exported')).toBe(`${name.replace(/\s*\/\s*/g, ' ')} — drain voltage (bare, clamp, damped)`);
  });
});
