import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
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

  it('offers no cloud or chart-studio control on the drawn plots, and names the image export after the scenario', async () => {
    const titles = await page.evaluate(() => [...document.querySelectorAll('.modebar-btn')].map((b) => (b.getAttribute('data-title') ?? '').toLowerCase()));
    expect(titles.length).toBeGreaterThan(0);
    for (const t of titles) expect(t).not.toMatch(/cloud|chart studio|edit in|share/);
    const filename = await page.evaluate(() => (document.getElementById('drain-plot') as unknown as { _context: { toImageButtonOptions: { filename: string } } })._context.toImageButtonOptions.filename);
    const name = await page.inputValue('[data-path="name"]');
    // A file name cannot hold a slash: "12 V / 0.5 A" becomes "12 V 0.5 A".
    expect(filename).toBe(`${name.replace(/\s*\/\s*/g, ' ')} - drain voltage`);
  });
});
