// The demo page offers the bench report as a download: click, receive one self-contained HTML file
// with the emission table and plots (headless Chromium, Vite started programmatically).
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { ViteDevServer } from 'vite';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { type Browser, launchChromium, startVite } from '../browser/support/chromium.js';
import { REPO_ROOT } from '../browser/support/worklet-build.js';

let browser: Browser;
let vite: ViteDevServer;
let base = '';

beforeAll(async () => {
  const v = await startVite({ configFile: join(REPO_ROOT, 'demo/vite.config.ts') });
  vite = v.server;
  base = v.url;
  browser = await launchChromium();
});

afterAll(async () => {
  await browser?.close();
  await vite?.close();
});

describe('demo: download the bench report', () => {
  it('writes a self-contained report of the page network and trims at the given carrier', async () => {
    const { page, errors } = browser;
    await page.goto(`${base}/#design`);
    await page.waitForSelector('#report-download');
    await page.fill('#report-carrier', '7.1');
    const [dl] = await Promise.all([
      page.waitForEvent('download', { timeout: 60_000 }),
      page.click('#report-download'),
    ]);
    expect(dl.suggestedFilename()).toBe('orthotone-report.html');
    const html = readFileSync((await dl.path())!, 'utf8');
    expect(html).toMatch(/^<!doctype html>/);
    expect(html).not.toMatch(/<script|src="http|href="http/);
    expect(html).toContain('7.1 MHz');
    for (const id of ['filter', 'network', 'emissions']) expect(html).toContain(`data-plot="${id}"`);
    await expect.poll(() => page.textContent('#report-status')).toMatch(/Report saved/);
    expect(errors).toEqual([]);
  });
});
