import { describe, expect, it } from 'vitest';
import { artifactPath, type Browser, useDemoPage } from './support/chromium.js';

const demo = useDemoPage({ width: 1280, height: 1500 });

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m]! : (s[m - 1]! + s[m]!) / 2;
}

// No retry. The rare failure that a retry hid (1 run in 4 in CI; 1 in 12 here, reproduced by running
// the in-page multi-tone calibration 12 times in a row) was a real one: the correction filter designed
// from the per-tone nulls (designCorrection, then in src/calibrate/multitone.ts) was a least-squares fit over
// 300–3000 Hz only, nearly unconstrained elsewhere, so when noisy readings put curvature into the
// fitted model its 31 taps blow up ("correction absolute tap sum 21.2 exceeds 16") and the node refuses
// it. The readings differ from run to run because each capture starts at a different point of the
// tones. Fixed in the calibration code (issue 9): the ridge is raised until the tap sum is bounded
// (designCorrection, now src/design/correction.ts).
describe('demo page', () => {
  it('loads without console errors, shows the cautions, and designs a network', async () => {
    const { page, errors } = demo.browser;
    await page.goto(`${demo.base}/#design`);
    await page.waitForSelector('#panel-design .uplot');
    const cautions = await page.textContent('#cautions');
    expect(cautions).toContain('licence');
    expect(cautions).toContain('dummy load');
    expect(await page.isVisible('#cautions')).toBe(true);
    // A new spec: 40 dB, all-pass.
    await page.fill('#panel-design input[type=number] >> nth=2', '40');
    await page.selectOption('#panel-design select >> nth=1', 'allpass');
    await page.click('#design-run');
    await expect.poll(() => page.textContent('#panel-design .status')).toContain('Designed for');
    const worst = await page.textContent('#panel-design .figure.good .v');
    expect(Number.parseFloat(worst ?? '')).toBeGreaterThanOrEqual(40);
    await page.fill('#panel-design input[type=number] >> nth=2', '60');
    await page.click('#design-run');
    // The plots span the band and a little beyond it (an eighth of the band's octaves each side),
    // not whole decades.
    const range = JSON.parse((await page.getAttribute('#design-plots', 'data-x-range')) ?? '[]');
    expect(range[0]).toBeGreaterThan(250);
    expect(range[0]).toBeLessThan(300);
    expect(range[1]).toBeGreaterThan(3000);
    expect(range[1]).toBeLessThan(3600);
    await page.screenshot({ path: artifactPath('demo-design.png'), fullPage: false });
    expect(errors).toEqual([]);
  });

  it('generates: starts audio and the monitor reads the predicted suppression', async () => {
    const { page, errors } = demo.browser;
    await page.click('#design-use');
    await page.waitForSelector('#panel-generate:not([hidden])');
    await page.click('#gen-start');
    await expect
      .poll(
        async () =>
          Number.parseFloat((await page.textContent('#panel-generate .figure >> nth=1 >> .v')) ?? ''),
        {
          timeout: 10_000,
        },
      )
      .toBeGreaterThan(55);
    // The I/Q scope: a tone from a 60 dB network draws a circle (Q/I 0 dB, 90° between I and Q).
    const scopeFigures = async () =>
      JSON.parse((await page.getAttribute('#panel-generate .scope-box', 'data-figures')) ?? '{}') as {
        ratioDb: number;
        angleDeg: number;
      };
    // The 60 dB all-pass pair: phase error within ±0.077°, no gain error (panel 1's figures).
    await expect.poll(async () => (await scopeFigures()).angleDeg, { timeout: 5_000 }).toBeGreaterThan(89.9);
    const plain = await scopeFigures();
    expect(Math.abs(plain.ratioDb)).toBeLessThan(0.01);
    // The trace is drawn: the canvas holds pixels of the trace colour (#3fc1b4).
    const tracePixels = await page.evaluate(() => {
      const c = document.getElementById('gen-scope') as HTMLCanvasElement;
      const d = c.getContext('2d')!.getImageData(0, 0, c.width, c.height).data;
      let n = 0;
      for (let k = 0; k < d.length; k += 4) if (d[k]! < 110 && d[k + 1]! > 150 && d[k + 2]! > 140) n++;
      return n;
    });
    expect(tracePixels).toBeGreaterThan(500);
    // A 1° phase trim: Q' = Q·cos φ + I·sin φ (src/generate/trim-stage.ts) takes 1° off the angle between I and Q.
    await setRange(page, '#panel-generate .trim >> nth=1 >> input', 1);
    await expect
      .poll(async () => plain.angleDeg - (await scopeFigures()).angleDeg, { timeout: 5_000 })
      .toBeCloseTo(1, 1);
    await page.screenshot({ path: artifactPath('demo-generate.png'), fullPage: false });
    await setRange(page, '#panel-generate .trim >> nth=1 >> input', 0);
    expect(errors).toEqual([]);
  });

  it('reads a two-tone test in the monitor: each tone 6.02 dB below PEP, IMD3/IMD5 at the floor', async () => {
    const { page, errors } = demo.browser;
    // The trade's test tones 700 and 1900 Hz (common practice, no source).
    await page.selectOption('#gen-source', 'two-tone');
    await page.fill('#gen-f1', '1900');
    await page.fill('#gen-f2', '700');
    await page.dispatchEvent('#gen-f2', 'change');
    await page.waitForSelector('#gen-figs-two:not([hidden])');
    type Two = { tonesDbfs: number[]; pepDbfs: number; imd3Dbc: number; imd3DbPep: number; imd5Dbc: number };
    const reading = async () =>
      JSON.parse((await page.getAttribute('#gen-figs-two', 'data-reading')) ?? 'null') as Two | null;
    await expect.poll(async () => (await reading())?.tonesDbfs.length, { timeout: 5_000 }).toBe(2);
    await page.waitForTimeout(900); // a reading taken after the swap's cross-fade
    const r = (await reading())!;
    // Level −10 dBFS is the PEP; two equal tones are each 20·log10(2) = 6.02 dB below it
    // (Krauss, Bostian & Raab, Solid State Radio Engineering p. 509: Ppeak = n²·Ptone).
    expect(r.pepDbfs).toBeCloseTo(-10, 1);
    for (const t of r.tonesDbfs) expect(t).toBeCloseTo(-16.02, 1);
    // The generator is linear: its own products lie far below any exciter's (−30 dBc is a
    // typical transmitter figure; common practice, no source).
    expect(r.imd3Dbc).toBeLessThan(-100);
    expect(r.imd5Dbc).toBeLessThan(-100);
    expect(r.imd3DbPep).toBeCloseTo(r.imd3Dbc - 6.02, 1);
    await page.screenshot({ path: artifactPath('demo-two-tone.png'), fullPage: false });
    await page.selectOption('#gen-source', 'tone');
    expect(errors).toEqual([]);
  });

  it('calibrates against the virtual exciter: ≥ 70 dB sideband and carrier (median) within 10 readings', async () => {
    const { page, errors } = demo.browser;
    await page.goto(`${demo.base}/#calibrate`);
    const results: { readings: number; sidebandDb: number; carrierDb: number }[] = [];
    for (const seed of [711, 1, 2, 3, 4]) {
      await page.fill('#cal-seed', String(seed));
      await page.evaluate(() => delete document.getElementById('panel-calibrate')!.dataset['result']);
      await page.click('#cal-run');
      await page.waitForFunction(() => document.getElementById('panel-calibrate')!.dataset['result'], null, {
        timeout: 30_000,
      });
      const r = JSON.parse(
        (await page.getAttribute('#panel-calibrate', 'data-result')) ?? '{}',
      ) as (typeof results)[number];
      results.push(r);
      if (seed === 711) await page.screenshot({ path: artifactPath('demo-calibrate.png'), fullPage: false });
    }
    console.log('in-page calibration (virtual exciter), per unit:', JSON.stringify(results));
    for (const r of results) expect(r.readings).toBeLessThanOrEqual(10);
    expect(-median(results.map((r) => r.sidebandDb))).toBeGreaterThanOrEqual(70);
    expect(-median(results.map((r) => r.carrierDb))).toBeGreaterThanOrEqual(70);
    expect(errors).toEqual([]);
  });

  it('calibrates across the band: the correction filter beats the best single trims on a bench with skew', {
    timeout: 120_000,
  }, async () => {
    const { page, errors } = demo.browser;
    await page.selectOption('#cal-kind', 'multi');
    expect(await page.inputValue('#cal-bench')).toBe('skew-bench');
    await page.fill('#cal-seed', '5');
    await page.click('#cal-run');
    await page.waitForFunction(
      () =>
        document.getElementById('panel-calibrate')!.dataset['multitone'] ||
        document.querySelector('#cal-status.error'),
      null,
      { timeout: 60_000 },
    );
    expect(
      await page.getAttribute('#cal-status', 'class'),
      (await page.textContent('#cal-status')) ?? '',
    ).not.toContain('error');
    const r = JSON.parse((await page.getAttribute('#panel-calibrate', 'data-multitone')) ?? '{}') as {
      readings: number;
      verifyHz: number[];
      before: number[];
      single: number[];
      after: number[];
      taps: number;
    };
    console.log('in-page multi-tone calibration (virtual exciter with skew):', JSON.stringify(r));
    const worst = (x: number[]) => Math.min(...x);
    expect(r.readings).toBeLessThanOrEqual(24);
    expect(r.taps).toBe(31);
    expect(r.verifyHz[0]).toBe(300);
    expect(r.verifyHz[r.verifyHz.length - 1]).toBe(3000);
    // Skew τ gives a phase error 2πfτ (the phase of a delay, common practice, no source): one pair of trims cannot hold the whole
    // band; the filter follows it. Figures of the multi-tone calibration test (tests/calibrate):
    // ≥ 55 dB with the filter where single trims fall short; here the 60 dB network adds its own error.
    expect(worst(r.after)).toBeGreaterThanOrEqual(50);
    expect(worst(r.after)).toBeGreaterThan(worst(r.single) + 3);
    expect(worst(r.after)).toBeGreaterThan(worst(r.before) + 10);
    await page.screenshot({ path: artifactPath('demo-multitone.png'), fullPage: false });

    // The filter now runs in the generator: its own I/Q is unbalanced on purpose; bypassing the
    // filter gives the network's own suppression back.
    await page.click('a[data-panel=generate]');
    await page.waitForSelector('#gen-figs-multi:not([hidden])');
    expect(await page.isChecked('#gen-corr-on')).toBe(true);
    expect(await page.textContent('#gen-corr-text')).toContain('31 taps');
    const monitorWorst = async () => {
      const m = JSON.parse((await page.getAttribute('#gen-figs-multi', 'data-reading')) ?? 'null');
      return m ? Math.min(...(m.suppressionDb as number[])) : Number.NaN;
    };
    await page.waitForTimeout(900);
    const withFilter = await monitorWorst();
    await page.screenshot({ path: artifactPath('demo-correction.png'), fullPage: false });
    await page.uncheck('#gen-corr-on');
    await page.waitForTimeout(900);
    const without = await monitorWorst();
    console.log('generator monitor, worst tone suppression with / without the filter:', withFilter, without);
    expect(without).toBeGreaterThanOrEqual(58);
    expect(withFilter).toBeLessThan(without - 5);
    expect(errors).toEqual([]);
  });
});

/** Sets a range input's value and fires its input event, as dragging the slider would. */
async function setRange(page: Browser['page'], selector: string, value: number): Promise<void> {
  await page.locator(selector).evaluate((el, v) => {
    const input = el as HTMLInputElement;
    input.value = String(v);
    input.dispatchEvent(new Event('input', { bubbles: true }));
  }, value);
}
