/**
 * The shipped AudioWorklet processor (built with the package's tsup worklet entry) in real headless
 * Chromium, rendered in an OfflineAudioContext and read with the measure/ module in Node.
 * One browser launch for the file.
 */

import type { ViteDevServer } from 'vite';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { designNetwork } from '../../src/design/design-network.js';
import type { Network } from '../../src/design/network.js';
import { predictCarrierDbc, predictSuppressionDb } from '../../src/generate/prediction.js';
import { measureSideband } from '../../src/measure/sideband.js';
import type { RenderRequest, RenderResult } from './pages/worklet-page.js';
import { type Browser, launchChromium, startVite } from './support/chromium.js';
import { maxSecondDifference, sineSecondDifferenceBound } from './support/clicks.js';
import { buildWorklet, REPO_ROOT } from './support/worklet-build.js';

const FS = 48000;
let browser: Browser;
let vite: ViteDevServer;
let processorUrl = '';
const net60 = designNetwork({ sampleRate: FS, band: [300, 3000], method: 'allpass', targetDb: 60 });

beforeAll(async () => {
  await buildWorklet('worklet-browser');
  const v = await startVite({ root: REPO_ROOT, configFile: false });
  vite = v.server;
  processorUrl = `${v.url}/tests/artifacts/worklet-browser/worklet/processor.js`;
  browser = await launchChromium();
  await browser.page.goto(`${v.url}/tests/browser/pages/worklet.html`);
  await browser.page.waitForFunction(() => window.harness?.ready === true);
});

afterAll(async () => {
  await browser?.close();
  await vite?.close();
});

function render(req: Partial<RenderRequest>): Promise<RenderResult> {
  const full: RenderRequest = {
    processorUrl,
    network: net60,
    sampleRate: FS,
    seconds: 1,
    options: {},
    events: [],
    ...req,
  };
  return browser.page.evaluate((r) => window.harness.render(r), full);
}

function suppression(r: RenderResult, from: number, to: number, toneHz: number) {
  return measureSideband(r.i.subarray(from, to), r.q.subarray(from, to), FS, { toneHz });
}

describe('quadrature worklet in Chromium', () => {
  it('1 s of I/Q from the internal tone reads the suppression the design predicts within 0.5 dB', async () => {
    for (const toneHz of [700, 1800]) {
      const r = await render({ options: { source: { kind: 'tone', frequencyHz: toneHz }, levelDb: -6 } });
      expect(r.i.length).toBe(FS);
      // 1 s rendered; the reading skips the first 0.1 s while the all-pass sections fill.
      const m = suppression(r, 4800, FS, toneHz);
      const predicted = predictSuppressionDb(net60, toneHz);
      expect(predicted).toBeGreaterThan(59.5);
      expect(Math.abs(m.sidebandSuppressionDb - predicted)).toBeLessThan(0.5);
      // Carrier with zero DC trims: far below anything measured on a bench.
      expect(m.carrierDbc).toBeLessThan(-100);
    }
  });

  it('works with standardized-audio-context 25.3.77 (its OfflineAudioContext and AudioWorkletNode)', async () => {
    const toneHz = 1900;
    const r = await render({
      library: 'standardized-audio-context',
      options: { source: { kind: 'tone', frequencyHz: toneHz }, levelDb: -6 },
    });
    expect(r.i.length).toBe(FS);
    const m = suppression(r, 4800, FS, toneHz);
    expect(Math.abs(m.sidebandSuppressionDb - predictSuppressionDb(net60, toneHz))).toBeLessThan(0.5);
  });

  it('any source node can feed the input: an OscillatorNode gives the same reading', async () => {
    const toneHz = 1000;
    const r = await render({ oscillatorHz: toneHz, options: { source: { kind: 'input' }, levelDb: 0 } });
    const m = suppression(r, 4800, FS, toneHz);
    expect(Math.abs(m.sidebandSuppressionDb - predictSuppressionDb(net60, toneHz))).toBeLessThan(0.5);
    expect(m.wanted.levelDbfs).toBeCloseTo(0, 1); // OscillatorNode: peak 1 (0 dBFS, AES17)
  });

  it('lower sideband: the wanted tone moves to −f', async () => {
    const toneHz = 1200;
    const r = await render({ options: { source: { kind: 'tone', frequencyHz: toneHz }, sideband: 'lower' } });
    const m = measureSideband(r.i.subarray(4800), r.q.subarray(4800), FS, {
      toneHz,
      sideband: 'lower',
    });
    expect(Math.abs(m.sidebandSuppressionDb - predictSuppressionDb(net60, toneHz, {}, 'lower'))).toBeLessThan(
      0.5,
    );
  });

  it('trims changed through AudioParams take effect as predicted and without clicks', async () => {
    const toneHz = 1000;
    const amp = 10 ** (-6 / 20);
    const t1 = 0.5;
    const r = await render({
      options: { source: { kind: 'tone', frequencyHz: toneHz }, levelDb: -6 },
      events: [
        { param: 'gainDb', kind: 'set', value: 2, time: t1 },
        { param: 'phaseDeg', kind: 'set', value: 5, time: t1 },
        { param: 'dcI', kind: 'set', value: 0.001, time: t1 },
        { param: 'dcQ', kind: 'set', value: -0.0005, time: t1 },
      ],
    });
    const n1 = Math.round(t1 * FS);
    const before = suppression(r, 4800, n1, toneHz);
    const after = suppression(r, n1 + 4800, FS, toneHz);
    expect(Math.abs(before.sidebandSuppressionDb - predictSuppressionDb(net60, toneHz))).toBeLessThan(0.5);
    const trims = { gainDb: 2, phaseDeg: 5 };
    expect(after.sidebandSuppressionDb).toBeCloseTo(predictSuppressionDb(net60, toneHz, trims), 1);
    // Carrier: the DC trims appear as a complex DC of magnitude √(dcI² + dcQ²) (src/generate/trim-stage.ts, added
    // last), read relative to the wanted tone (computed: dI = 0.001A, dQ = 0.0005A → 20·log10(√(dI² + dQ²)/A) = −59.031 dBc).
    expect(predictCarrierDbc({ dcI: 0.001, dcQ: 0.0005 }, 1)).toBeCloseTo(-59.031, 2);
    expect(20 * Math.log10(after.carrier.amplitude / Math.hypot(0.001, 0.0005))).toBeCloseTo(0, 1);
    expect(after.carrierDbc).toBeCloseTo(
      predictCarrierDbc({ dcI: 0.001, dcQ: -0.0005 }, after.wanted.amplitude),
      1,
    );
    // No click: around the change, the second difference of Q stays within the bound of a sine of
    // the larger amplitude (gain 2 dB), and I (unchanged but for DC) within its own.
    const bound = sineSecondDifferenceBound(amp * 10 ** (2 / 20), toneHz, FS);
    const window = [n1 - 256, n1 + 4800] as const;
    expect(maxSecondDifference(r.q, ...window)).toBeLessThan(1.05 * bound);
    expect(maxSecondDifference(r.i, ...window)).toBeLessThan(
      1.05 * sineSecondDifferenceBound(amp, toneHz, FS),
    );
    // The same test catches a click: an unramped 2 dB / 5° step in a synthetic Q.
    const w = (2 * Math.PI * toneHz) / FS;
    const synth = Float32Array.from({ length: 2000 }, (_, n) =>
      n < 1000 ? amp * Math.sin(w * n) : amp * 10 ** (2 / 20) * Math.sin(w * n + (5 * Math.PI) / 180),
    );
    expect(maxSecondDifference(synth, 900, 1100)).toBeGreaterThan(1.5 * bound);
  });

  it('automation: a linear ramp of phaseDeg follows the schedule', async () => {
    const toneHz = 1500;
    const r = await render({
      options: { source: { kind: 'tone', frequencyHz: toneHz } },
      events: [
        { param: 'phaseDeg', kind: 'set', value: 0, time: 0.1 },
        { param: 'phaseDeg', kind: 'ramp', value: 3, time: 0.4 },
      ],
    });
    const m = suppression(r, 0.5 * FS, FS, toneHz);
    expect(m.sidebandSuppressionDb).toBeCloseTo(predictSuppressionDb(net60, toneHz, { phaseDeg: 3 }), 1);
  });

  it('a network sent by message is swapped at a quantum boundary, acknowledged, and then runs', async () => {
    const net40: Network = designNetwork({
      sampleRate: FS,
      band: [300, 3000],
      method: 'allpass',
      targetDb: 40,
    });
    const toneHz = 2900; // near the band edge, where the smaller network is worst
    const r = await render({
      options: { source: { kind: 'tone', frequencyHz: toneHz } },
      swapNetwork: net40,
      swapAt: 0.25,
    });
    expect(r.acks).toHaveLength(1);
    const frame = r.acks[0]!.frame;
    expect(frame % 128).toBe(0);
    expect(frame).toBeGreaterThanOrEqual(0.25 * FS);
    const after = suppression(r, frame + 9600, FS, toneHz);
    expect(Math.abs(after.sidebandSuppressionDb - predictSuppressionDb(net40, toneHz))).toBeLessThan(0.5);
    expect(predictSuppressionDb(net40, toneHz)).toBeLessThan(predictSuppressionDb(net60, toneHz) - 10);
    const stats = r.stats as { swaps: number; faults: number; blocks: number };
    expect(stats.faults).toBe(0);
    expect(stats.swaps).toBe(1);
  });
});
