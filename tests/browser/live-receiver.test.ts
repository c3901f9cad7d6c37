/**
 * The demo page's live path — getUserMedia → MediaStreamAudioSourceNode → capture node →
 * measureSideband at the stated carrier offset — in headless Chromium, with Chromium's fake
 * microphone playing receiver audio made here by the library: a 700 Hz tone through the generator
 * (with trims that stand for a known imbalance), then the virtual exciter of simulate/, then a
 * receiver on its upper sideband tuned 1500 Hz below the carrier (audio = Re{z·e^{j2π·1500·t}}, what
 * `orthotone simulate --offset 1500` writes), saved as a 48 kHz 16-bit WAV.
 *
 * Chromium 156 (Debian) under playwright-core's launchPersistentContext accepts
 * `--use-file-for-fake-audio-capture=<abs path>`; its fake device runs at 44.1 kHz and loops the
 * file, so each file holds a whole number of periods of everything in it (100 Hz grid, 1 s) and the
 * loop joins without a click. The file is read when a capture device opens, so a new file is used
 * from the next getUserMedia call (each page reading opens one): one browser serves both files.
 *
 * What a fixed file cannot show: the closed loop. The file does not answer the trims the loop sets,
 * so this test can show that each step sets the trims on the live node, waits the settle time
 * (counted in audio frames), captures the receiver and reports a reading — and that every reading is
 * the file's — but not that the readings fall as the seeker nears the null, nor that the settle time
 * covers a real sound card's round trip and a receiver's AGC. The convergence of the same loop on
 * the same node is tested against the in-page virtual exciter in demo.test.ts; the real round trip
 * needs hardware.
 */
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import type { ViteDevServer } from 'vite';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { designNetwork } from '../../src/design/design-network.js';
import { createQuadratureGenerator } from '../../src/generate/quadrature-generator.js';
import { createSignalSource } from '../../src/generate/sources.js';
import { encodeWav } from '../../src/node/wav.js';
import { createVirtualExciter } from '../../src/simulate/exciter.js';
import { drawDevice, type ExciterModel, IDEAL_MODEL, TOLERANCE_PRESETS } from '../../src/simulate/model.js';
import { artifactPath, type Browser, launchChromium, startVite } from './support/chromium.js';
import { REPO_ROOT } from './support/worklet-build.js';

const FS = 48000;
const TONE_HZ = 700;
const OFFSET_HZ = 1500;
/** Tone peak, full scale (−6.02 dBFS). */
const A = 0.5;
const MIC = artifactPath('fake-microphone.wav');

/**
 * Receiver audio of the library's generator (trims `trims`) through a virtual exciter of `model`:
 * 1 s (a whole number of 100 Hz periods: tone 700, audio 800/1500/2200 Hz) after 0.2 s of settling.
 */
function receiverAudio(model: ExciterModel, trims: Record<string, number>): Uint8Array {
  // A network far better than the imbalance studied (all-pass pair, ≥ 100 dB over the band), so
  // the reading shows the trims' imbalance and the exciter's, not the network's own.
  const net = designNetwork({ sampleRate: FS, band: [300, 3000], method: 'allpass', targetDb: 100 });
  const settle = Math.round(0.2 * FS);
  const n = settle + FS;
  const x = new Float32Array(n);
  createSignalSource({ kind: 'tone', frequencyHz: TONE_HZ, levelDbfs: 20 * Math.log10(A) }, FS).fill(x);
  const i = new Float32Array(n);
  const q = new Float32Array(n);
  createQuadratureGenerator(net, { trims }).process(x, i, q);
  const re = new Float32Array(n);
  const im = new Float32Array(n);
  createVirtualExciter(model, { sampleRate: FS, seed: 5 }).process(i, q, re, im);
  const audio = new Float32Array(FS);
  const w = (2 * Math.PI * OFFSET_HZ) / FS;
  for (let k = 0; k < FS; k++) {
    const m = settle + k;
    audio[k] = re[m]! * Math.cos(w * m) - im[m]! * Math.sin(w * m);
  }
  const wav = encodeWav([audio], FS, 'int16');
  expect(wav.clippedSamples).toBe(0);
  return wav.bytes;
}

let browser: Browser;
let vite: ViteDevServer;
let base = '';

beforeAll(async () => {
  writeFileSync(MIC, receiverAudio(IDEAL_MODEL, {}));
  const v = await startVite({ configFile: join(REPO_ROOT, 'demo/vite.config.ts') });
  vite = v.server;
  base = v.url;
  browser = await launchChromium({ fakeAudioCapture: MIC });
  await browser.page.setViewportSize({ width: 1280, height: 1500 });
});

afterAll(async () => {
  await browser?.close();
  await vite?.close();
});

interface PageReading {
  sidebandDb: number;
  carrierDb: number;
  wantedDbfs: number;
  frequencyErrorHz: number;
}

/** Clicks "Read the receiver once" on the calibration panel and returns what the page read. */
async function readOnce(): Promise<PageReading> {
  const { page } = browser;
  await page.evaluate(() => delete document.getElementById('panel-calibrate')!.dataset['reading']);
  await page.click('#cal-read');
  await page.waitForFunction(() => document.getElementById('panel-calibrate')!.dataset['reading'], null, {
    timeout: 15_000,
  });
  return JSON.parse((await page.getAttribute('#panel-calibrate', 'data-reading')) ?? '{}') as PageReading;
}

/**
 * Reads until two readings in a row agree within 0.05 dB (at most 6 readings) and returns the later
 * one; fails, listing every reading, when no two in a row agree. Chromium's fake microphone picks up a
 * newly written file while a capture may still be running, so the first reading after a file change
 * can straddle both files: a property of the test bench, not of the page. Readings that never settle
 * are a fault of the page (or of the path), never an answer.
 */
async function readSettled(read: () => Promise<PageReading> = readOnce): Promise<PageReading> {
  const seen: PageReading[] = [await read()];
  while (seen.length < 6) {
    const again = await read();
    const prev = seen[seen.length - 1]!;
    seen.push(again);
    if (settled(prev, again)) return again;
  }
  throw new Error(
    `readings never settled within 0.05 dB over ${seen.length} readings: ${JSON.stringify(seen)}`,
  );
}

/** Two readings agree within 0.05 dB in sideband and carrier. */
function settled(a: PageReading, b: PageReading): boolean {
  return Math.abs(a.sidebandDb - b.sidebandDb) < 0.05 && Math.abs(a.carrierDb - b.carrierDb) < 0.05;
}

// No retry: readings that straddle a file change are read again by readSettled (the bench's only
// known source of variation) and readings that never settle fail; the demo page's rare failure was
// the multi-tone correction design (see demo.test.ts).
describe('demo page, live receiver path (fake microphone)', () => {
  it('readSettled fails when readings never settle, and returns the settled reading otherwise', async () => {
    const seq = (xs: number[]) => {
      let k = 0;
      return async (): Promise<PageReading> => {
        const v = xs[Math.min(k++, xs.length - 1)]!;
        return { sidebandDb: v, carrierDb: 40, wantedDbfs: -6, frequencyErrorHz: 0 };
      };
    };
    await expect(readSettled(seq([30, 30.2, 30.4, 30.6, 30.8, 31, 31.2]))).rejects.toThrow(/never settled/);
    expect((await readSettled(seq([30, 35, 35.01, 40]))).sidebandDb).toBe(35.01);
  });
  it('reads the sideband and carrier suppression the formulas predict, within 0.5 dB', async () => {
    const { page, errors } = browser;
    await page.goto(`${base}/#calibrate`);
    await page.selectOption('#cal-mode', 'live');
    await page.fill('#cal-tone', String(TONE_HZ));
    await page.fill('#cal-offset', String(OFFSET_HZ));
    await page.selectOption('#cal-rxside', 'upper');
    await page.fill('#cal-settle', '100');

    // File 1: an ideal exciter; the imbalance is the generator's trims. 0.1 dB and 1°: K. Schmidt,
    // QEX Aug 1994 §2, IRR = (1 + 2g·cosφ + g²)/(1 − 2g·cosφ + g²) = 39.614 dB
    // (computed from that formula). Carrier: computed from the signal model, |dI + j·dQ| over the wanted
    // tone's amplitude A·|1 + g·e^{jφ}|/2 (the same model's wanted term).
    const g = 10 ** (0.1 / 20);
    const phi = Math.PI / 180;
    const dcI = 0.001 * A;
    const dcQ = 0.0005 * A;
    writeFileSync(MIC, receiverAudio(IDEAL_MODEL, { gainDb: 0.1, phaseDeg: 1, dcI, dcQ }));
    const irrDb = 10 * Math.log10((1 + 2 * g * Math.cos(phi) + g * g) / (1 - 2 * g * Math.cos(phi) + g * g));
    expect(irrDb).toBeCloseTo(39.614, 3); // Schmidt's formula, 0.1 dB and 1°
    const wantedAmp = (A * Math.hypot(1 + g * Math.cos(phi), g * Math.sin(phi))) / 2;
    const carrierDb = -20 * Math.log10(Math.hypot(dcI, dcQ) / wantedAmp);
    const r1 = await readSettled();
    console.log('fake microphone, formula case:', JSON.stringify(r1), { irrDb, carrierDb });
    expect(Math.abs(r1.sidebandDb - irrDb)).toBeLessThanOrEqual(0.5);
    expect(Math.abs(r1.carrierDb - carrierDb)).toBeLessThanOrEqual(0.5);
    // The wanted tone: A·|1 + g·e^{jφ}|/2 in the audio, give or take the fake device's resampling.
    expect(Math.abs(r1.wantedDbfs - 20 * Math.log10(wantedAmp))).toBeLessThanOrEqual(0.5);
    expect(Math.abs(r1.frequencyErrorHz)).toBeLessThan(1);
    await page.screenshot({ path: artifactPath('demo-live-reading.png'), fullPage: false });

    // File 2: the invented hand-built bench (homebrew-bench, seed 711; about 44 dB sideband and
    // 34 dB carrier at full scale, common practice, no source) with zero trims. Expected: the
    // exciter's analytic steady-state response (simulate/response.ts), not the sampled simulation.
    const bench = drawDevice(TOLERANCE_PRESETS['homebrew-bench']!, 711);
    writeFileSync(MIC, receiverAudio(bench, {}));
    const predicted = createVirtualExciter(bench, { sampleRate: FS, seed: 1 }).response(TONE_HZ, {}, A);
    const r2 = await readSettled();
    console.log('fake microphone, hand-built bench:', JSON.stringify(r2), predicted);
    expect(Math.abs(r2.sidebandDb + predicted.unwantedDbc)).toBeLessThanOrEqual(0.5);
    expect(Math.abs(r2.carrierDb + predicted.carrierDbc)).toBeLessThanOrEqual(0.5);
    expect(errors).toEqual([]);
  });

  it('drives live calibration steps: sets the trims, waits the settle time, captures, reports the reading', async () => {
    const { page, errors } = browser;
    // Still file 2: whatever trims the loop sets, the receiver plays the same hand-built bench.
    const bench = drawDevice(TOLERANCE_PRESETS['homebrew-bench']!, 711);
    const fixed = createVirtualExciter(bench, { sampleRate: FS, seed: 1 }).response(TONE_HZ, {}, A);
    const settleMs = 100;
    await page.fill('#cal-settle', String(settleMs));
    await page.fill('#cal-budget', '4');
    await page.evaluate(() => delete document.getElementById('panel-calibrate')!.dataset['result']);
    await page.click('#cal-run');
    await page.waitForFunction(() => document.getElementById('panel-calibrate')!.dataset['result'], null, {
      timeout: 30_000,
    });
    const steps = await page.$$eval('#cal-table tbody tr', (rows) =>
      rows.map((r) => JSON.parse((r as HTMLElement).dataset['step'] ?? '{}')),
    );
    const result = JSON.parse((await page.getAttribute('#panel-calibrate', 'data-result')) ?? '{}');
    console.log('live calibration against a fixed file:', JSON.stringify({ steps, result }));
    expect(steps).toHaveLength(4);
    expect(result.readings).toBe(4);
    const keys = ['gainDb', 'phaseDeg', 'dcI', 'dcQ'] as const;
    for (const s of steps) {
      // The trims of the step are on the live node when its reading is reported.
      for (const k of keys) expect(s.applied[k]).toBeCloseTo(s.trims[k], 6);
      // Captured no sooner than the settle time after the trims were set (one 128-frame quantum of
      // slack for where in a quantum the trims were set), and without a long stall.
      expect(s.waitedMs).toBeGreaterThanOrEqual(settleMs - (1000 * 128) / FS);
      expect(s.waitedMs).toBeLessThan(settleMs + 250);
      // The file does not answer the trims: every reading is the file's.
      expect(Math.abs(s.sidebandDb - fixed.unwantedDbc)).toBeLessThanOrEqual(0.5);
      expect(Math.abs(s.carrierDb - fixed.carrierDbc)).toBeLessThanOrEqual(0.5);
    }
    // The seeker moved the trims between readings (probes), so each reading was a new setting.
    const distinct = new Set(steps.map((s) => keys.map((k) => s.trims[k].toFixed(6)).join()));
    expect(distinct.size).toBe(4);
    expect(Math.abs(-result.sidebandDb + fixed.unwantedDbc)).toBeLessThanOrEqual(0.5);
    // The page says the loop looks open (readings that do not follow the trims).
    expect(result.notes).toMatch(/hardly changed while the trims moved/);
    await page.screenshot({ path: artifactPath('demo-live-calibrate.png'), fullPage: false });
    expect(errors).toEqual([]);
  });
  it('refuses to calibrate when the receiver brings no tone: says what to check, keeps the trims', async () => {
    const { page, errors } = browser;
    // A receiver tuned off the transmission: its audio is low noise (-70 dBFS RMS), no tone. Noise
    // is read while the device opens, so the file changes before the run opens its input.
    const n = FS;
    const noise = new Float32Array(n);
    let seed = 12345;
    for (let k = 0; k < n; k++) {
      seed = (seed * 1103515245 + 12345) % 2147483648;
      noise[k] = (seed / 2147483648 - 0.5) * 2 * Math.sqrt(3) * 10 ** (-70 / 20);
    }
    writeFileSync(MIC, encodeWav([noise], FS, 'int16').bytes);
    await page.goto(`${base}/#calibrate`);
    await page.selectOption('#cal-mode', 'live');
    await page.fill('#cal-tone', String(TONE_HZ));
    await page.fill('#cal-offset', String(OFFSET_HZ));
    await page.fill('#cal-settle', '100');
    await page.fill('#cal-budget', '8');
    await page.fill('#cal-min-wanted', '-60');
    await page.evaluate(() => delete document.getElementById('panel-calibrate')!.dataset['result']);
    await page.click('#cal-run');
    await page.waitForFunction(
      () => /check/.test(document.getElementById('cal-status')?.textContent ?? ''),
      null,
      {
        timeout: 30_000,
      },
    );
    const status = (await page.textContent('#cal-status')) ?? '';
    // liveGuard's words (src/calibrate/session.ts): the wanted tone is missing or below the limit.
    expect(status).toMatch(/wanted tone reads .* below -60 dBFS|gave no level/);
    expect(status).toMatch(/restored/);
    // At most the first reading was taken, and no trim moved.
    expect(await page.$$eval('#cal-table tbody tr', (rows) => rows.length)).toBeLessThanOrEqual(1);
    expect(await page.getAttribute('#panel-calibrate', 'data-result')).toBeNull();
    expect(errors).toEqual([]);
  });
});
