/**
 * The page's own link code in headless Chromium: the demo's device block connects through the
 * WebSocket bridge (src/node/bridge.ts, the `ws` package) to the compiled virtual device on a real
 * pty; a generator trim moved on the page lands in the firmware (its state file). Web Serial cannot
 * be driven headless: its adapter (webSerialConnector) runs here on in-page streams with a small
 * in-page responder as the port (a stand-in, beside the real bridge test; the manual check is in
 * docs/protocol.md).
 */
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import type { ViteDevServer } from 'vite';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { type Bridge, startBridge } from '../../src/node/bridge.js';
import { type Browser, launchChromium, startVite } from '../browser/support/chromium.js';
import { buildFirmware, killAllDevices, type RunningDevice, startDevice } from './virtual-device.js';

let browser: Browser;
let vite: ViteDevServer;
let base: string;
let bridge: Bridge;
let dev: RunningDevice;
let state: string;

beforeAll(async () => {
  const fw = buildFirmware();
  state = join(mkdtempSync(join(tmpdir(), 'ot-br-')), 'state.json');
  dev = await startDevice(fw, ['--state-file', state]);
  bridge = await startBridge({ devicePath: dev.path, port: 0 });
  const v = await startVite({ configFile: resolve('demo/vite.config.ts') });
  vite = v.server;
  base = v.url;
  browser = await launchChromium();
});
afterAll(async () => {
  await browser?.close();
  await vite?.close();
  await bridge?.close();
  await killAllDevices();
});

const gainOnDevice = () => (JSON.parse(readFileSync(state, 'utf8')) as { gainDb: number }).gainDb;

describe('device link in the page', () => {
  it('connects through the bridge and sets the generator trims on the virtual device', async () => {
    const { page } = browser;
    await page.goto(`${base}/#generate`);
    expect(bridge.url).toMatch(/^ws:\/\/127\.0\.0\.1:\d+$/);
    await page.fill('#device-bridge-url', bridge.url);
    await page.click('#device-bridge');
    await page.waitForSelector('#device-info[data-info]', { timeout: 10_000 });
    const info = JSON.parse((await page.getAttribute('#device-info', 'data-info'))!);
    expect(info).toEqual({ link: 1, sampleRate: 48000, arithmetic: 'q15' });
    // move the generator's gain trim: the engine sets it, the device block sends it on
    await page.evaluate(() => {
      const s = document.getElementById('gen-trim-gainDb') as HTMLInputElement;
      s.value = '0.5';
      s.dispatchEvent(new Event('input'));
    });
    await expect.poll(gainOnDevice, { timeout: 5000 }).toBeCloseTo(0.5, 3);
    // what the page shows is the device's read-back (Q2.14 rounding of 0.5 dB), not the slider's value
    const shown = async () =>
      JSON.parse((await page.getAttribute('#device-trims', 'data-trims')) ?? '{}').gainDb;
    await expect.poll(shown, { timeout: 5000 }).toBe(gainOnDevice());
    expect(gainOnDevice()).not.toBe(0.5);
    // a calibration run on the page sets each reading's trims on the generator node: the device
    // block sends them on, so the device ends with the calibration's trims, not the slider's
    await page.goto(`${base}/#calibrate`);
    await page.click('#cal-run');
    await page.waitForFunction(() => document.getElementById('panel-calibrate')!.dataset['result'], null, {
      timeout: 30_000,
    });
    await expect
      .poll(async () => JSON.parse((await page.getAttribute('#device-trims', 'data-trims')) ?? '{}').gainDb, {
        timeout: 5000,
      })
      .toBe(gainOnDevice());
    expect(Math.abs(gainOnDevice() - 0.5)).toBeGreaterThan(0.01);
    await page.goto(`${base}/#generate`);
    await page.click('#device-close');
    expect(browser.errors).toEqual([]);
  });

  it('runs the Web Serial adapter over in-page streams', async () => {
    const { page } = browser;
    const path = `/@fs${resolve('src/device/index.ts')}`;
    const r = await page.evaluate(async (modPath) => {
      // (a dynamic import written as text: the test runner rewrites import() in functions it ships)
      type Mod = typeof import('../../src/device/index.js');
      const m = await (new Function('p', 'return import(p)') as (p: string) => Promise<Mod>)(modPath);
      // An in-page port: the host writes into `toDevice`, the responder answers into `fromDevice`.
      const toDevice = new TransformStream<Uint8Array, Uint8Array>();
      const fromDevice = new TransformStream<Uint8Array, Uint8Array>();
      const out = fromDevice.writable.getWriter();
      const enc = new TextEncoder();
      let trims = 'gain=0 phase=0 dci=0 dcq=0';
      (async () => {
        const rd = toDevice.readable.getReader();
        const dec = new TextDecoder();
        let buf = '';
        for (;;) {
          const { done, value } = await rd.read();
          if (done) return;
          buf += dec.decode(value);
          let nl = buf.indexOf('\n');
          while (nl >= 0) {
            const [tag, verb, ...rest] = buf.slice(0, nl).split(' ');
            buf = buf.slice(nl + 1);
            nl = buf.indexOf('\n');
            let reply = `${tag} err UNKNOWN no`;
            if (verb === 'hello')
              reply = `${tag} ok hello link=1 rate=48000 arith=q15 gres=0.00053 pres=0.0035 dres=0.0000305 gmax=6 pmax=45 dmax=1 ramp=20 taps=127 secs=12 name=in-page`;
            if (verb === 'set') {
              trims = `gain=${rest.find((w) => w.startsWith('gain='))?.slice(5) ?? 0} phase=0 dci=0 dcq=0`;
            }
            if (verb === 'set' || verb === 'trims') reply = `${tag} ok trims ${trims}`;
            await out.write(enc.encode(`garbage\u0001line\n${reply}\n`));
          }
        }
      })();
      const port = {
        readable: null as unknown,
        writable: null as unknown,
        async open() {
          this.readable = fromDevice.readable;
          this.writable = toDevice.writable;
        },
        async close() {},
      };
      const link = await m.openDeviceLink(
        m.webSerialConnector(port as unknown as Parameters<Mod['webSerialConnector']>[0]),
      );
      const applied = await link.setTrims({ gainDb: 0.25 });
      const back = await link.readTrims();
      const garbage = link.garbageLines;
      await link.close();
      return { name: link.info.name, applied: applied.gainDb, back: back.gainDb, garbage };
    }, path);
    expect(r).toEqual({ name: 'in-page', applied: 0.25, back: 0.25, garbage: 3 });
  });
});
