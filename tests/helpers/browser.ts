import fs from 'node:fs';
import path from 'node:path';
import { createRequire } from 'node:module';
import { chromium, type Browser, type BrowserContext, type Page } from 'playwright-core';
import { expect } from 'vitest';

const ROOT = path.resolve(import.meta.dirname, '../..');
export const SCREENSHOT_DIR = path.join(ROOT, '.artifacts/screenshots');

export const DESKTOP = { width: 1280, height: 860 };
export const PHONE = { width: 360, height: 740 };

/** Debian's Chromium, headless, with no background network traffic; playwright gives each launch a fresh profile. */
export async function launchBrowser(): Promise<{ browser: Browser; close: () => Promise<void> }> {
  const browser = await chromium.launch({
    executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium',
    args: [
      '--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run',
      '--disable-background-networking', '--disable-component-update', '--disable-sync',
    ],
  });
  return {
    browser,
    close: () => browser.close(),
  };
}

export interface WatchedPage {
  page: Page;
  context: BrowserContext;
  /** Console errors and CSP violations seen so far. */
  problems: string[];
}

export async function openPage(browser: Browser, viewport = DESKTOP, colorScheme: 'light' | 'dark' = 'light'): Promise<WatchedPage> {
  const context = await browser.newContext({ viewport, colorScheme });
  const page = await context.newPage();
  const problems: string[] = [];
  page.on('console', (msg) => {
    if (msg.type() === 'error' && !/Failed to load resource: the server responded with a status of 40[13]/.test(msg.text())) problems.push(msg.text());
  });
  page.on('pageerror', (err) => problems.push(`page error: ${err.message}`));
  return { page, context, problems };
}

export async function screenshot(page: Page, name: string) {
  fs.mkdirSync(SCREENSHOT_DIR, { recursive: true });
  const file = path.join(SCREENSHOT_DIR, `${name}.png`);
  await page.screenshot({ path: file, fullPage: true });
  return file;
}

const axeSource = fs.readFileSync(createRequire(import.meta.url).resolve('axe-core/axe.min.js'), 'utf8');

/** Runs axe-core on the page and fails on any serious or critical violation. */
export async function expectAccessible(page: Page, label: string) {
  // Evaluated through the debugging protocol, so our own no-inline-script CSP stays fully in force.
  await page.evaluate(axeSource);
  const results = await page.evaluate(async () => {
    const axe = (window as unknown as { axe: { run: (ctx: Document, opts: object) => Promise<{ violations: { id: string; impact: string; help: string; nodes: { target: string[] }[] }[] }> } }).axe;
    return axe.run(document, { resultTypes: ['violations'] });
  });
  const serious = results.violations.filter((v) => v.impact === 'serious' || v.impact === 'critical');
  expect(serious.map((v) => `${v.id} (${v.impact}): ${v.help} at ${v.nodes.map((n) => n.target.join(' ')).slice(0, 3).join(', ')}`), `axe on ${label}`).toEqual([]);
}
