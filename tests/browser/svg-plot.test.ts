/**
 * The `--plot FILE.svg` pictures opened as a user opens them: in a browser (headless Chromium).
 * The SVG must parse as XML, every label must lie inside the picture, and the plotted points must
 * sit where the axes say (a point read back through the tick labels gives its own value).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { analyzeNetwork } from '../../src/design/analysis.js';
import { designNetwork } from '../../src/design/design-network.js';
import { analysisToSvg, plotToSvg } from '../../src/export/svg-plot.js';
import { type Browser, launchChromium } from './support/chromium.js';

let browser: Browser;

beforeAll(async () => {
  browser = await launchChromium();
});

afterAll(async () => {
  await browser?.close();
});

interface Parsed {
  error: string | null;
  width: number;
  height: number;
  outside: string[];
  texts: string[];
  title: string;
  desc: string;
}

async function parse(svg: string): Promise<Parsed> {
  await browser.page.setContent(
    `<!doctype html><html><head><link rel="icon" href="data:,"></head><body style="margin:0">${svg}</body></html>`,
  );
  return browser.page.evaluate((text) => {
    const doc = new DOMParser().parseFromString(text, 'image/svg+xml');
    const err = doc.querySelector('parsererror');
    const root = document.querySelector('svg')!;
    const w = Number(root.getAttribute('width'));
    const h = Number(root.getAttribute('height'));
    const outside: string[] = [];
    const texts: string[] = [];
    for (const t of Array.from(root.querySelectorAll('text'))) {
      const b = (t as SVGGraphicsElement).getBBox();
      texts.push(t.textContent ?? '');
      const m = (t as SVGGraphicsElement).getCTM();
      // rotated y-axis title: check its transformed box
      const x0 = m ? m.a * b.x + m.c * b.y + m.e : b.x;
      const y0 = m ? m.b * b.x + m.d * b.y + m.f : b.y;
      const x1 = m ? m.a * (b.x + b.width) + m.c * (b.y + b.height) + m.e : b.x + b.width;
      const y1 = m ? m.b * (b.x + b.width) + m.d * (b.y + b.height) + m.f : b.y + b.height;
      if (
        Math.min(x0, x1) < -0.5 ||
        Math.max(x0, x1) > w + 0.5 ||
        Math.min(y0, y1) < -0.5 ||
        Math.max(y0, y1) > h + 0.5
      )
        outside.push(t.textContent ?? '');
    }
    return {
      error: err ? (err.textContent ?? 'parsererror') : null,
      width: w,
      height: h,
      outside,
      texts,
      title: root.querySelector('title')?.textContent ?? '',
      desc: root.querySelector('desc')?.textContent ?? '',
    };
  }, svg);
}

describe('SVG plots in Chromium', () => {
  it('a plot parses, keeps every label inside, and puts points where its axes say', async () => {
    const svg = plotToSvg({
      title: 'Check <&> plot',
      xLabel: 'time (s)',
      yLabel: 'level (dB)',
      series: [
        { label: 'rising', x: [0, 1, 2, 3, 4], y: [-40, -30, -20, -10, 0], markers: true },
        { label: 'flat', x: [0, 4], y: [-25, -25] },
      ],
    });
    const p = await parse(svg);
    expect(p.error).toBeNull();
    expect(p.outside).toEqual([]);
    expect(p.title).toBe('Check <&> plot');
    expect(p.texts).toEqual(expect.arrayContaining(['time (s)', 'level (dB)', 'rising', 'flat', '-40', '0']));
    // Read the middle marker (2 s, −20 dB) back through the tick labels' positions.
    const back = await browser.page.evaluate(() => {
      const root = document.querySelector('svg')!;
      const ticks = (anchor: string) =>
        Array.from(root.querySelectorAll(`text[text-anchor="${anchor}"]`))
          .map((t) => ({
            v: Number(t.textContent),
            x: Number(t.getAttribute('x')),
            y: Number(t.getAttribute('y')),
          }))
          .filter((t) => Number.isFinite(t.v));
      const yt = ticks('end');
      const xt = ticks('middle').filter((t) => t.y > 300 && t.y < 400);
      const dot = Array.from(root.querySelectorAll('circle'))[2]!;
      const cx = Number(dot.getAttribute('cx'));
      const cy = Number(dot.getAttribute('cy'));
      const lin = (p: number, a: { v: number; q: number }, b: { v: number; q: number }) =>
        a.v + ((p - a.q) * (b.v - a.v)) / (b.q - a.q);
      // every marker inside the plot frame (the frame is the rect with a stroke and no fill)
      const f = root.querySelector('rect[fill="none"]')!;
      const fx = Number(f.getAttribute('x'));
      const fy = Number(f.getAttribute('y'));
      const fw = Number(f.getAttribute('width'));
      const fh = Number(f.getAttribute('height'));
      const inside = Array.from(root.querySelectorAll('circle')).every((c) => {
        const x = Number(c.getAttribute('cx'));
        const y = Number(c.getAttribute('cy'));
        return x >= fx - 0.05 && x <= fx + fw + 0.05 && y >= fy - 0.05 && y <= fy + fh + 0.05;
      });
      return {
        inside,
        x: lin(cx, { v: xt[0]!.v, q: xt[0]!.x }, { v: xt.at(-1)!.v, q: xt.at(-1)!.x }),
        y: lin(cy, { v: yt[0]!.v, q: yt[0]!.y }, { v: yt.at(-1)!.v, q: yt.at(-1)!.y }),
      };
    });
    expect(back.inside).toBe(true);
    expect(back.x).toBeCloseTo(2, 1);
    expect(back.y).toBeCloseTo(-20, 0);
  });

  it('a network response plot parses and names the worst figure computed from the analysis', async () => {
    const net = designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'allpass', targetDb: 60 });
    const a = analyzeNetwork(net, { points: 256 });
    const p = await parse(analysisToSvg(a));
    expect(p.error).toBeNull();
    expect(p.outside).toEqual([]);
    expect(p.title).toContain(`worst ${a.worst.suppressionDb.toFixed(1)} dB`);
    expect(p.texts).toEqual(expect.arrayContaining(['frequency (Hz)', 'opposite-sideband suppression (dB)']));
    expect(p.desc).toMatch(/suppression \(dB\): 256 points/);
  });
});
