// A real browser for the page tests: playwright-core driving Debian's Chromium, against the real
// server (createApp on the test database, built web app) on a free loopback port.
import { mkdirSync, mkdtempSync, rmSync } from 'node:fs';
import type { Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { chromium, type BrowserContext, type Page } from 'playwright-core';
import { ROOT } from '../../api/src/config.js';
import { testApp } from './api.js';
import { FIXTURE_PASSWORD } from './fixtures.js';

export const SCREENSHOTS = join(ROOT, 'test-output', 'screenshots');

export interface BrowserSession {
  baseUrl: string;
  context: BrowserContext;
  close(): Promise<void>;
}

export async function openBrowser(): Promise<BrowserSession> {
  const server: Server = await new Promise((resolve) => {
    const s = testApp().listen(0, '127.0.0.1', () => resolve(s));
  });
  const { port } = server.address() as AddressInfo;
  const profile = mkdtempSync(join(tmpdir(), 'ligandry-chromium-'));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: '/usr/bin/chromium',
    headless: true,
    viewport: { width: 1360, height: 820 },
    args: ['--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
  });
  mkdirSync(SCREENSHOTS, { recursive: true });
  return {
    baseUrl: `http://127.0.0.1:${port}`,
    context,
    async close() {
      await context.close();
      await new Promise((resolve) => server.close(resolve));
      rmSync(profile, { recursive: true, force: true });
    },
  };
}

export async function signIn(page: Page, baseUrl: string, email: string, password = FIXTURE_PASSWORD): Promise<void> {
  await page.goto(`${baseUrl}/sign-in`);
  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password', { exact: true }).fill(password);
  await page.getByRole('button', { name: 'Sign in' }).click();
}

/** The whole page: the shell scrolls inside its content area, so grow the viewport to fit it first. */
export async function shootFullPage(page: Page, name: string): Promise<void> {
  const height = await page.evaluate(() => {
    const content = document.querySelector('mat-sidenav-content');
    return content ? content.getBoundingClientRect().top + content.scrollHeight : document.body.scrollHeight;
  });
  const viewport = page.viewportSize()!;
  await page.setViewportSize({ width: viewport.width, height: Math.min(Math.max(viewport.height, Math.ceil(height)), 2400) });
  await page.screenshot({ path: join(SCREENSHOTS, name) });
  await page.setViewportSize(viewport);
}

/**
 * A new page signed in as `email`, then on the Compounds page, recording requests to other hosts and
 * uncaught page errors into the given lists (the tests assert both stay empty).
 */
export async function signedInPage(session: BrowserSession, email: string, foreign: string[], pageErrors: string[]): Promise<Page> {
  const page = await session.context.newPage();
  page.on('request', (r) => {
    if (!r.url().startsWith(session.baseUrl) && !r.url().startsWith('data:') && !r.url().startsWith('blob:')) foreign.push(r.url());
  });
  page.on('pageerror', (e) => pageErrors.push(e.message));
  await page.goto(`${session.baseUrl}/sign-in`);
  await page.evaluate(() => localStorage.clear());
  await signIn(page, session.baseUrl, email);
  // Sign-in lands on the SAR table; these pages start from the registry.
  await page.waitForURL(/\/sar(\?|$)/);
  await page.goto(`${session.baseUrl}/compounds`);
  await page.getByRole('heading', { name: 'Compounds', exact: true }).waitFor();
  return page;
}
