/**
 * Accessibility of the demo page: axe-core 4.14 (Deque's rule engine, the general-purpose checker
 * behind browser accessibility audits; rules map to WCAG 2.x success criteria) run in headless
 * Chromium on each of the three panels, before and after they show results. Goal of issue 13: no
 * serious or critical violation. One browser launch for the file.
 */
import { createRequire } from 'node:module';
import { describe, expect, it } from 'vitest';
import { useDemoPage } from './support/chromium.js';

const AXE_PATH = createRequire(import.meta.url).resolve('axe-core/axe.min.js');

const demo = useDemoPage({ width: 1366, height: 768 });

interface Finding {
  id: string;
  impact: string | null;
  help: string;
  nodes: string[];
}

/** Runs axe on the whole document (hidden panels are skipped by axe itself) and returns its findings. */
async function audit(): Promise<Finding[]> {
  const { page } = demo.browser;
  if (!(await page.evaluate(() => 'axe' in window))) await page.addScriptTag({ path: AXE_PATH });
  return page.evaluate(async () => {
    const axe = (window as unknown as { axe: { run(ctx: Document): Promise<{ violations: unknown[] }> } })
      .axe;
    const r = await axe.run(document);
    return (
      r.violations as {
        id: string;
        impact: string | null;
        help: string;
        nodes: { target: string[] }[];
      }[]
    ).map((v) => ({
      id: v.id,
      impact: v.impact,
      help: v.help,
      nodes: v.nodes.map((n) => n.target.join(' ')),
    }));
  });
}

const serious = (f: Finding[]) => f.filter((v) => v.impact === 'serious' || v.impact === 'critical');

describe('demo page accessibility (axe-core in Chromium)', () => {
  it('panel 1, design: no serious or critical violation, before and after a design', async () => {
    const { page, errors } = demo.browser;
    await page.goto(`${demo.base}/#design`);
    await page.waitForSelector('#panel-design .uplot');
    const first = await audit();
    console.log('axe, design panel:', JSON.stringify(first.map((v) => [v.id, v.impact, v.nodes.length])));
    expect(serious(first)).toEqual([]);
    await page.fill('#design-target', '40');
    await page.click('#design-run');
    await expect.poll(() => page.textContent('#design-status')).toContain('Designed for');
    expect(serious(await audit())).toEqual([]);
    // While a long design runs (busy sign shown): Q15 all-pass at 120 dB searches for seconds.
    await page.selectOption('#design-method', 'allpass');
    await page.selectOption('#design-format', 'q15');
    await page.fill('#design-target', '120');
    await page.click('#design-run');
    expect(await page.getAttribute('#design-status', 'class')).toContain('busy');
    expect(serious(await audit())).toEqual([]);
    await page.waitForSelector('#design-status.error', { timeout: 30_000 });
    // After a failed design (figures cleared, error shown).
    expect(serious(await audit())).toEqual([]);
    expect(errors).toEqual([]);
  });

  it('panel 2, generate: no serious or critical violation, stopped and running', async () => {
    const { page, errors } = demo.browser;
    await page.goto(`${demo.base}/#generate`);
    await page.waitForSelector('#panel-generate:not([hidden])');
    const first = await audit();
    console.log('axe, generate panel:', JSON.stringify(first.map((v) => [v.id, v.impact, v.nodes.length])));
    expect(serious(first)).toEqual([]);
    await page.click('#gen-start');
    await expect.poll(() => page.textContent('#gen-status'), { timeout: 10_000 }).toContain('Running');
    expect(serious(await audit())).toEqual([]);
    await page.click('#gen-start');
    expect(errors).toEqual([]);
  });

  it('panel 3, calibrate: no serious or critical violation, before and after a run', async () => {
    const { page, errors } = demo.browser;
    await page.goto(`${demo.base}/#calibrate`);
    await page.waitForSelector('#panel-calibrate:not([hidden])');
    const first = await audit();
    console.log('axe, calibrate panel:', JSON.stringify(first.map((v) => [v.id, v.impact, v.nodes.length])));
    expect(serious(first)).toEqual([]);
    await page.click('#cal-run');
    await page.waitForFunction(() => document.getElementById('panel-calibrate')!.dataset['result'], null, {
      timeout: 30_000,
    });
    expect(serious(await audit())).toEqual([]);
    expect(errors).toEqual([]);
  });
});
