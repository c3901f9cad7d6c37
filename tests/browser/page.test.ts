/**
 * The demo page as a newcomer meets it (issue 13), in headless Chromium at 1366×768: the package's
 * own entries, cautions that fold but never cover a status line, status lines beside their buttons
 * and above the fold, stale figures cleared, design off the main thread, whole option texts, plots
 * with a readout, zoom and text alternatives, the CLI's names and default tone, and a session that
 * saves and opens again. One browser launch for the file.
 */
import { mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
// The package's public entry (files move between folders; the public names stay).
import { createProfile, designNetwork, profileToJson, TOLERANCE_PRESETS } from '../../src/index.js';
import { type Browser, useDemoPage } from './support/chromium.js';
import { REPO_ROOT } from './support/worklet-build.js';

const W = 1366;
const H = 768;
const demo = useDemoPage({ width: W, height: H });

type Page = Browser['page'];

/** Bounding box of an element in the viewport (page scrolled to the top). */
async function box(page: Page, sel: string) {
  const b = await page.locator(sel).boundingBox();
  if (!b) throw new Error(`${sel} is not shown`);
  return b;
}

let visits = 0;
/** Loads the page afresh (a new query string: a hash change alone would keep the old page) on `panel`. */
async function open(page: Page, panel: string): Promise<void> {
  visits += 1;
  await page.goto(`${demo.base}/?visit=${visits}#${panel}`);
  await page.waitForSelector(`#panel-${panel}:not([hidden])`);
  await page.evaluate(() => window.scrollTo(0, 0));
}

describe('the demo uses the package as a user would', () => {
  it('imports only the package entries orthotone and orthotone/worklet?url, no src/ module', () => {
    const dir = join(REPO_ROOT, 'demo/src');
    const specifiers = new Set<string>();
    for (const f of readdirSync(dir).filter((n) => n.endsWith('.ts'))) {
      const text = readFileSync(join(dir, f), 'utf8');
      for (const m of text.matchAll(/(?:from|import)\s+'([^']+)'/g)) specifiers.add(m[1]!);
    }
    const outside = [...specifiers].filter(
      (s) => !s.startsWith('./') && s !== 'uplot' && !s.startsWith('uplot/'),
    );
    expect(outside.sort()).toEqual(['orthotone', 'orthotone/worklet?url']);
    expect([...specifiers].filter((s) => s.includes('src/'))).toEqual([]);
  });
});

describe('demo page at 1366×768', () => {
  it('shows the cautions, folds them to one line on request, remembers it, and covers nothing', async () => {
    const { page, errors } = demo.browser;
    await page.goto(`${demo.base}/#design`);
    await page.evaluate(() => localStorage.clear());
    await open(page, 'design');
    const text = await page.textContent('#cautions');
    expect(text).toContain('licence');
    expect(text).toContain('dummy load');
    expect(await page.isVisible('#cautions-list')).toBe(true);
    expect(await page.getAttribute('#cautions-toggle', 'aria-expanded')).toBe('true');
    // In the page's flow: not fixed over the content.
    expect(await page.$eval('#cautions', (e) => getComputedStyle(e).position)).not.toBe('fixed');
    await page.click('#cautions-toggle');
    const folded = await box(page, '#cautions');
    expect(folded.height).toBeLessThan(40);
    expect(await page.isVisible('#cautions-list')).toBe(false);
    expect(await page.textContent('#cautions')).toContain('dummy load'); // the one line names it
    await page.reload();
    await page.waitForSelector('#panel-design:not([hidden])');
    expect((await box(page, '#cautions')).height).toBeLessThan(40);
    await page.click('#cautions-toggle');
    expect(await page.isVisible('#cautions-list')).toBe(true);
    await page.reload();
    await page.waitForSelector('#panel-design:not([hidden])');
    expect(await page.isVisible('#cautions-list')).toBe(true);
    expect(errors).toEqual([]);
  });

  it('marks the active tab with aria-current, names every control, and announces every status line', async () => {
    const { page, errors } = demo.browser;
    for (const panel of ['design', 'generate', 'calibrate']) {
      await open(page, panel);
      const current = await page.$$eval('.tabs a[aria-current=page]', (a) =>
        a.map((e) => (e as HTMLElement).dataset['panel']),
      );
      expect(current).toEqual([panel]);
      // Every visible control has a label tied to it (or an aria name) — axe checks the same rule.
      const unnamed = await page.$$eval(`#panel-${panel} input, #panel-${panel} select`, (list) =>
        list
          .filter((c) => (c as HTMLElement).offsetParent && (c as HTMLInputElement).type !== 'file')
          .filter(
            (c) =>
              !(
                (c as HTMLInputElement).labels?.length ||
                c.getAttribute('aria-label') ||
                c.getAttribute('aria-labelledby')
              ),
          )
          .map((c) => c.id || c.outerHTML.slice(0, 60)),
      );
      expect(unnamed, panel).toEqual([]);
      const quiet = await page.$$eval(`#panel-${panel} .status`, (list) =>
        list
          .filter((e) => e.getAttribute('aria-live') !== 'polite' || e.getAttribute('role') !== 'status')
          .map((e) => e.id),
      );
      expect(quiet, panel).toEqual([]);
    }
    expect(errors).toEqual([]);
  });

  for (const folded of [false, true]) {
    it(`keeps each button's status line beside it and above the fold (cautions ${folded ? 'folded' : 'open'})`, async () => {
      const { page, errors } = demo.browser;
      await page.goto(`${demo.base}/#design`);
      await page.evaluate((f) => localStorage.setItem('orthotone.cautions.collapsed', f ? '1' : '0'), folded);
      const pairs: [string, string, string][] = [
        ['design', '#design-run', '#design-status'],
        ['generate', '#gen-start', '#gen-status'],
        ['calibrate', '#cal-run', '#cal-status'],
      ];
      for (const [panel, button, status] of pairs) {
        await open(page, panel);
        const b = await box(page, button);
        // An empty status line still has its height: give it text to measure where it shows.
        await page.$eval(status, (e) => {
          if (!e.textContent) e.textContent = 'x';
        });
        const s = await box(page, status);
        expect(b.y + b.height, `${button} above the fold`).toBeLessThanOrEqual(H);
        expect(s.y + s.height, `${status} above the fold`).toBeLessThanOrEqual(H);
        expect(s.y - (b.y + b.height), `${status} right under ${button}`).toBeLessThan(60);
        expect(s.y - (b.y + b.height)).toBeGreaterThanOrEqual(-2);
      }
      expect(errors).toEqual([]);
    });
  }

  it('clears stale figures when a design fails, and shows the error beside the Design button', async () => {
    const { page, errors } = demo.browser;
    await open(page, 'design');
    await expect.poll(() => page.textContent('#design-status')).toContain('300–3000');
    expect(await page.textContent('#design-figures')).toContain('dB');
    await page.fill('#design-hi', '30000'); // above Nyquist at 48 kHz
    await page.click('#design-run');
    await page.waitForSelector('#design-status.error');
    const err = await page.textContent('#design-status');
    expect(err).toMatch(/Error/);
    const figs = await page.$$eval('#design-figures .figure .v', (v) => v.map((e) => e.textContent));
    expect(figs.every((t) => t === '—')).toBe(true);
    expect(await page.isDisabled('#design-use')).toBe(true);
    const alts = await page.$$eval('#design-plots .plot-alt', (v) => v.map((e) => e.textContent ?? ''));
    for (const a of alts) expect(a).toMatch(/^No design/);
    const s = await box(page, '#design-status');
    expect(s.y + s.height).toBeLessThanOrEqual(H);
    await page.fill('#design-hi', '3000');
    await page.click('#design-run');
    await expect.poll(() => page.textContent('#design-status')).toContain('Designed for');
    expect(await page.isDisabled('#design-use')).toBe(false);
    expect(errors).toEqual([]);
  });

  it('designs off the main thread: a busy sign, and the page answers while a long design runs', async () => {
    const { page, errors } = demo.browser;
    await open(page, 'design');
    await expect.poll(() => page.textContent('#design-status')).toContain('300–3000');
    // Q15 coefficients with a deep target: the length search takes seconds (it then fails).
    await page.selectOption('#design-method', 'allpass');
    await page.selectOption('#design-format', 'q15');
    await page.fill('#design-target', '120');
    await page.click('#design-run');
    expect(await page.getAttribute('#design-status', 'class')).toContain('busy');
    expect(await page.getAttribute('#design-status', 'aria-busy')).toBe('true');
    expect(await page.isDisabled('#design-run')).toBe(true);
    // The main thread is free: a round trip through the page's event loop takes milliseconds.
    const waits: number[] = [];
    for (let k = 0; k < 5; k++) {
      const t0 = Date.now();
      await page.evaluate(() => new Promise((r) => setTimeout(r, 0)));
      waits.push(Date.now() - t0);
    }
    expect(await page.getAttribute('#design-status', 'class')).toContain('busy');
    expect(Math.max(...waits)).toBeLessThan(500);
    await page.waitForFunction(() => !document.querySelector('#design-status.busy'), null, {
      timeout: 30_000,
    });
    await page.selectOption('#design-format', 'float64');
    await page.selectOption('#design-method', 'auto');
    await page.fill('#design-target', '60');
    await page.click('#design-run');
    await expect.poll(() => page.textContent('#design-status')).toContain('Designed for');
    expect(errors).toEqual([]);
  });

  it('shows every option text whole, with the 24 and 32 kHz rates and the coefficient formats', async () => {
    const { page } = demo.browser;
    for (const panel of ['design', 'generate', 'calibrate']) {
      await open(page, panel);
      const cut = await page.$$eval(`#panel-${panel} select`, (list) => {
        const g = document.createElement('canvas').getContext('2d')!;
        const out: string[] = [];
        for (const s of list as HTMLSelectElement[]) {
          if (!s.offsetParent) continue; // hidden
          const cs = getComputedStyle(s);
          g.font = `${cs.fontWeight} ${cs.fontSize} ${cs.fontFamily}`;
          // Room for text: the box less its padding, borders and the drop-down arrow (about 24 px).
          const room =
            s.clientWidth - Number.parseFloat(cs.paddingLeft) - Number.parseFloat(cs.paddingRight) - 24;
          for (const o of s.options) if (g.measureText(o.text).width > room) out.push(`${s.id}: ${o.text}`);
        }
        return out;
      });
      expect(cut, panel).toEqual([]);
    }
    await open(page, 'design');
    const rates = await page.$$eval('#design-rate option', (o) =>
      o.map((e) => (e as HTMLOptionElement).value),
    );
    expect(rates).toEqual(expect.arrayContaining(['24000', '32000']));
    const formats = await page.$$eval('#design-format option', (o) =>
      o.map((e) => (e as HTMLOptionElement).value),
    );
    // The command line's --coefficients choices.
    expect(formats).toEqual(['float64', 'float32', 'q31', 'q15']);
  });

  it('plots: a readout under the pointer, drag to zoom, reset, and a text alternative from the data', async () => {
    const { page, errors } = demo.browser;
    await open(page, 'design');
    await expect.poll(() => page.textContent('#design-status')).toContain('300–3000');
    const plot = page.locator('#design-plots figure.plot').first();
    const over = plot.locator('.u-over');
    const o = (await over.boundingBox())!;
    await page.mouse.move(o.x + o.width / 2, o.y + o.height / 2);
    const legend = (await plot.locator('.u-legend').textContent()) ?? '';
    // Frequency and phase error under the pointer (mid-plot: about 1 kHz on a log axis).
    expect(legend).toMatch(/\d[\d,]* Hz/);
    expect(legend).toMatch(/-?\d+\.\d+ °/);
    // Drag across the left half: the x scale narrows to it.
    await page.mouse.move(o.x + o.width * 0.1, o.y + o.height / 2);
    await page.mouse.down();
    await page.mouse.move(o.x + o.width * 0.4, o.y + o.height / 2, { steps: 5 });
    await page.mouse.up();
    const zoom = JSON.parse((await plot.getAttribute('data-zoom')) ?? 'null') as [number, number] | null;
    expect(zoom).not.toBeNull();
    const full = JSON.parse((await page.getAttribute('#design-plots', 'data-x-range')) ?? '[]') as number[];
    expect(zoom![0]).toBeGreaterThan(full[0]!);
    expect(zoom![1]).toBeLessThan(1000);
    await plot.getByRole('button', { name: /Reset zoom/ }).click();
    expect(await plot.getAttribute('data-zoom')).toBeNull();
    // From the keyboard: the overlay is a slider whose value text is the readout; + zooms, 0 resets.
    const cursor = plot.getByRole('slider');
    await cursor.focus();
    await page.keyboard.press('Home');
    const first = (await cursor.getAttribute('aria-valuetext')) ?? '';
    expect(first).toMatch(new RegExp(`^${Math.round(full[0]!)} Hz: phase error -?\\d+\\.\\d+ °$`));
    await page.keyboard.press('ArrowRight');
    expect(await cursor.getAttribute('aria-valuenow')).toBe('1');
    expect(await cursor.getAttribute('aria-valuetext')).not.toBe(first);
    await page.keyboard.press('+');
    const kz = JSON.parse((await plot.getAttribute('data-zoom')) ?? 'null') as [number, number] | null;
    expect(kz![1] - kz![0]).toBeLessThan(full[1]! - full[0]!);
    await page.keyboard.press('0');
    expect(await plot.getAttribute('data-zoom')).toBeNull();
    // Text alternatives: each plot canvas is an image named by its title and described by its data.
    const alts = await page.$$eval('#panel-design canvas[role=img]', (cs) =>
      cs.map((c) => ({
        name: document.getElementById(c.getAttribute('aria-labelledby') ?? '')?.textContent ?? '',
        text: document.getElementById(c.getAttribute('aria-describedby') ?? '')?.textContent ?? '',
      })),
    );
    expect(alts.length).toBe(2);
    for (const a of alts) {
      expect(a.name.length).toBeGreaterThan(10);
      expect(a.text).toMatch(/lowest .* at .* Hz, highest/);
    }
    // The suppression plot's text names the worst figure in the band, as the tile shows it.
    const worst = (await page.textContent('#design-figures .figure .v')) ?? '';
    expect(alts[1]!.text).toContain(`Worst in the band ${worst}`);
    expect(errors).toEqual([]);
  });

  it('uses the command line names: presets, the skew trim and the 1000 Hz default tone', async () => {
    const { page } = demo.browser;
    await open(page, 'calibrate');
    const benches = await page.$$eval('#cal-bench option', (o) =>
      o.map((e) => ({ value: (e as HTMLOptionElement).value, text: e.textContent ?? '' })),
    );
    expect(benches.length).toBeGreaterThanOrEqual(4);
    for (const b of benches) {
      expect(Object.keys(TOLERANCE_PRESETS)).toContain(b.value);
      expect(b.text).toContain(b.value);
    }
    expect(benches.map((b) => b.value)).toContain('skew-bench');
    // The CLI's default test tone, read from its help text.
    const help = readFileSync(join(REPO_ROOT, 'src/cli/calibrate.ts'), 'utf8');
    const cliTone = Number(/--tone HZ\s+test tone \(default (\d+)\)/.exec(help)?.[1]);
    expect(cliTone).toBe(1000);
    expect(Number(await page.inputValue('#cal-tone'))).toBe(cliTone);
    await open(page, 'generate');
    expect(Number(await page.inputValue('#gen-f1'))).toBe(cliTone);
    const labels = (await page.textContent('#panel-generate')) ?? '';
    expect(labels).toContain('Skew');
    for (const word of ['Q delay', 'smp', 'bowl', 'Unit (seed)', 'dBc per bin'])
      expect(labels).not.toContain(word);
  });

  it('saves the session and opens it again; a file of the wrong kind gets a one-line error', async () => {
    const { page, errors } = demo.browser;
    await open(page, 'design');
    await expect.poll(() => page.textContent('#design-status')).toContain('300–3000');
    await page.selectOption('#design-rate', '32000');
    await page.selectOption('#design-method', 'fir');
    await page.fill('#design-target', '50');
    await page.click('#design-run');
    await expect.poll(() => page.textContent('#design-status')).toContain('at 32000 Hz');
    await page.click('#design-use');
    await page.waitForSelector('#panel-generate:not([hidden])');
    await page.fill('#gen-f1', '1234');
    await page.dispatchEvent('#gen-f1', 'change');
    await page.locator('#gen-trim-phaseDeg').evaluate((el) => {
      (el as HTMLInputElement).value = '1.5';
      el.dispatchEvent(new Event('input', { bubbles: true }));
    });
    const [dl] = await Promise.all([page.waitForEvent('download'), page.click('#file-save')]);
    const saved = JSON.parse(readFileSync((await dl.path())!, 'utf8'));
    expect(saved.format).toBe('orthotone-session');
    expect(saved.profile.network.sampleRate).toBe(32000);
    expect(saved.profile.trims.phaseDeg).toBe(1.5);
    expect(saved.generator.toneHz).toBe(1234);

    // A fresh page: back to the defaults, then open the session.
    await page.goto(`${demo.base}/#generate`);
    await page.reload();
    await page.waitForSelector('#panel-generate:not([hidden])');
    expect(Number(await page.inputValue('#gen-f1'))).toBe(1000);
    const [chooser] = await Promise.all([page.waitForEvent('filechooser'), page.click('#file-open')]);
    await chooser.setFiles((await dl.path())!);
    await expect.poll(() => page.textContent('#file-status')).toContain('session restored');
    expect(Number(await page.inputValue('#gen-f1'))).toBe(1234);
    expect(Number(await page.inputValue('#gen-trim-phaseDeg'))).toBe(1.5);
    expect(await page.inputValue('#design-rate')).toBe('32000');
    expect(await page.inputValue('#design-method')).toBe('fir');
    expect(await page.inputValue('#design-target')).toBe('50');
    await expect.poll(() => page.textContent('#design-load-status')).toContain('32000 Hz');

    // A calibration profile is not a network: opening it as the wrong thing says what to open.
    const [c2] = await Promise.all([page.waitForEvent('filechooser'), page.click('#file-open')]);
    await c2.setFiles({
      name: 'notes.json',
      mimeType: 'application/json',
      buffer: Buffer.from('{"format":"x"}'),
    });
    await page.waitForSelector('#file-status.error');
    expect(await page.textContent('#file-status')).toContain('open an orthotone network, profile or session');
    expect(errors).toEqual([]);
  });

  it('opens a calibration profile: its network shown and used, its trims and correction filter applied', async () => {
    const { page, errors } = demo.browser;
    // A profile as the command line or the page writes it: a 24 kHz FIR network, trims and a
    // 15-tap correction pair (an identity filter: a centre tap of 1 on Q, nothing from I).
    const net = designNetwork({ sampleRate: 24000, band: [300, 3000], method: 'fir', targetDb: 40 });
    const taps = 15;
    const qFromQ = Array.from({ length: taps }, (_, k) => (k === (taps - 1) / 2 ? 1 : 0));
    const profile = createProfile({
      sampleRate: 24000,
      toneHz: 1000,
      sideband: 'lower',
      trims: { gainDb: 0.25, phaseDeg: -0.75, skewSamples: 0.1, dcI: 0.001, dcQ: -0.002 },
      correction: { qFromQ, qFromI: qFromQ.map(() => 0) },
      network: net,
    });
    const dir = mkdtempSync(join(tmpdir(), 'orthotone-profile-'));
    const file = join(dir, 'bench-profile.json');
    writeFileSync(file, profileToJson(profile));
    try {
      await open(page, 'generate');
      const [chooser] = await Promise.all([page.waitForEvent('filechooser'), page.click('#file-open')]);
      await chooser.setFiles(file);
      await expect.poll(() => page.textContent('#file-status')).toContain('profile applied');
      const said = (await page.textContent('#file-status')) ?? '';
      expect(said).toContain('network at 24000 Hz');
      expect(said).toContain('15-tap correction filter');
      expect(Number(await page.inputValue('#gen-trim-gainDb'))).toBe(0.25);
      expect(Number(await page.inputValue('#gen-trim-phaseDeg'))).toBe(-0.75);
      expect(await page.inputValue('#gen-sideband')).toBe('lower');
      expect(await page.textContent('#gen-corr-text')).toContain('15 taps');
      expect(await page.inputValue('#design-rate')).toBe('24000');
      await expect.poll(() => page.textContent('#design-load-status')).toContain('Hilbert FIR');
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
    expect(errors).toEqual([]);
  });
});
