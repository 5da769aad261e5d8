// The real server in-process (work in its worker pool) and Debian's chromium driven by
// playwright-core, for the browser tests. Never downloads a browser: CI installs
// /usr/bin/chromium (.ci/run).

import { chromium, type Browser, type Page } from 'playwright-core';
import { existsSync } from 'node:fs';
import type { Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { createServer, type FlyclampServer } from '../../src/server/app.js';

export const root = fileURLToPath(new URL('../../', import.meta.url));
const CHROMIUM = '/usr/bin/chromium';

export interface PageSession {
  baseUrl: string;
  page: Page;
  /** Script errors the page threw. */
  pageErrors: string[];
  close(): Promise<void>;
}

export async function startPageSession(): Promise<PageSession> {
  if (!existsSync(CHROMIUM)) {
    throw new Error(`${CHROMIUM} is missing: apt-get update && apt-get install -y --no-install-recommends chromium`);
  }
  // The page as built by `npm run build` (vite, web/ → dist/web); `npm test` builds it first.
  const webDir = join(root, 'dist', 'web');
  if (!existsSync(join(webDir, 'index.html'))) throw new Error(`${webDir}/index.html is missing: run npm run build (it builds the page)`);
  const server: FlyclampServer = createServer({ scenariosDir: join(root, 'scenarios'), webDir, readmeFile: join(root, 'README.md') });
  const listener: Server = server.app.listen(0, '127.0.0.1');
  await new Promise<void>((ok, fail) => { listener.once('listening', ok); listener.once('error', fail); });
  const baseUrl = `http://127.0.0.1:${(listener.address() as AddressInfo).port}`;
  const browser: Browser = await chromium.launch({
    executablePath: CHROMIUM,
    args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run',
      '--disable-background-networking', '--disable-component-update', '--disable-sync'],
  });
  const page = await browser.newPage({ viewport: { width: 1440, height: 1000 } });
  const pageErrors: string[] = [];
  page.on('pageerror', (error) => pageErrors.push(error.message));
  return {
    baseUrl, page, pageErrors,
    close: async () => {
      await browser.close();
      await new Promise<void>((ok) => listener.close(() => ok()));
      await server.close();
    },
  };
}
