// The bench report written by the CLI, opened in headless Chromium (Debian's /usr/bin/chromium via
// playwright-core): no console error, no request beyond the file itself, every plot drawn, printable.
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { describe, expect, it } from 'vitest';
import { designNetwork } from '../../src/design/design-network.js';
import { networkToJson } from '../../src/export/network-json.js';
import { launchChromium } from '../browser/support/chromium.js';
import { cli } from '../support/cli.js';

describe('bench report in Chromium', () => {
  it('opens offline with its plots, no console error and no network request; prints to PDF', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'orthotone-report-'));
    const net = join(dir, 'net.json');
    writeFileSync(
      net,
      networkToJson(designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'allpass', targetDb: 60 })),
    );
    const cal = join(dir, 'cal.json');
    const flt = join(dir, 'filter.json');
    const html = join(dir, 'report.html');
    expect(cli(['calibrate', '--simulate', '--network', net, '--profile', cal]).status).toBe(0);
    expect(
      cli(['output-filter', '--cutoff', '16e6', '--carrier-hz', '14.2e6', '--series', 'E12', '--out', flt])
        .status,
    ).toBe(0);
    const r = cli([
      'emissions',
      '--preset',
      'homebrew-bench',
      '--profile',
      cal,
      '--carrier-hz',
      '14.2e6',
      '--filter',
      flt,
      '--report',
      html,
    ]);
    expect(r.status).toBe(0);

    const b = await launchChromium();
    try {
      const requests: string[] = [];
      b.page.on('request', (q) => requests.push(q.url()));
      const url = pathToFileURL(html).href;
      await b.page.goto(url);
      expect(b.errors).toEqual([]);
      expect(requests.filter((u) => u !== url && !u.startsWith('data:'))).toEqual([]);
      for (const id of ['convergence', 'filter', 'network', 'emissions']) {
        const marks = await b.page
          .locator(`svg[data-plot="${id}"] path, svg[data-plot="${id}"] circle`)
          .count();
        expect(marks, id).toBeGreaterThan(0);
        const box = await b.page.locator(`svg[data-plot="${id}"]`).boundingBox();
        expect(box!.width, id).toBeGreaterThan(300);
      }
      const text = (await b.page.locator('body').textContent()) ?? '';
      expect(text).toMatch(/Every product is within its limit/);
      expect(text).toMatch(/dummy load/);
      expect(text).toMatch(/local regulations/);
      expect(await b.page.locator('#emissions tbody tr').count()).toBeGreaterThan(10);
      const pdf = await b.page.pdf({ format: 'A4' });
      expect(pdf.byteLength).toBeGreaterThan(10_000);
    } finally {
      await b.close();
    }
  });
});
