// The demo page offers the bench report as a download: click, receive one self-contained HTML file
// with the emission table and plots (headless Chromium, Vite started programmatically).
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { useDemoPage } from '../browser/support/chromium.js';

const demo = useDemoPage();

describe('demo: download the bench report', () => {
  it('writes a self-contained report of the page network and trims at the given carrier', async () => {
    const { page, errors } = demo.browser;
    await page.goto(`${demo.base}/#design`);
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
