/**
 * The virtual device built inside a kit made by `orthotone firmware` (`make -C DIR`): it runs the
 * kit's own kernel and trim stage (its compiled-in network, its arithmetic, its trim values). Its
 * I/Q output (--iq) is read back here and the unwanted sideband measured by direct DFT bins:
 * with zero trims it is the kit network's image rejection; with a gain trim g it follows the
 * textbook image ratio |g − 1| / (g + 1) (amplitude imbalance alone; e.g. Razavi, RF
 * Microelectronics, 2nd ed., §4.2.3, image rejection ratio with gain error only).
 * Needs `npm run build` and the `firmware` command (issue 10).
 */
import { execFileSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { designNetwork } from '../../src/design/design-network.js';
import { openDeviceLink } from '../../src/device/link.js';
import { serialConnector } from '../../src/node/serial-transport.js';
import { killAllDevices, startDevice } from './virtual-device.js';

afterAll(killAllDevices);

/** Image level relative to the wanted tone (dB) over whole cycles of `hz` in `iq` from `at`. */
function imageDbc(iq: Float32Array, at: number, n: number, hz: number, fs: number): number {
  let wr = 0;
  let wi = 0;
  let ur = 0;
  let ui = 0;
  for (let k = 0; k < n; k++) {
    const i = iq[2 * (at + k)]!;
    const q = iq[2 * (at + k) + 1]!;
    const ph = (2 * Math.PI * hz * k) / fs;
    const c = Math.cos(ph);
    const s = Math.sin(ph);
    // wanted: (i + jq)·e^{-jωk}; image: (i + jq)·e^{+jωk}
    wr += i * c + q * s;
    wi += q * c - i * s;
    ur += i * c - q * s;
    ui += q * c + i * s;
  }
  return 20 * Math.log10(Math.hypot(ur, ui) / Math.hypot(wr, wi));
}

describe('virtual device inside a generated kit', () => {
  it('runs the kit kernel: image rejection with zero trims, textbook image with a gain trim', async () => {
    const work = mkdtempSync(join(tmpdir(), 'ot-kit-'));
    const net = designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'allpass', targetDb: 50 });
    writeFileSync(join(work, 'net.json'), JSON.stringify(net));
    const kit = join(work, 'kit');
    execFileSync('node', [
      'dist/cli.js',
      'firmware',
      join(work, 'net.json'),
      '--arithmetic',
      'q15',
      '--out',
      kit,
    ]);
    execFileSync('make', ['-s', '-C', kit], { stdio: 'pipe' });
    expect(existsSync(join(kit, 'virtual-device'))).toBe(true);
    const iqFile = join(work, 'iq.f32');
    const dev = await startDevice(kit, ['--iq', iqFile, '--state-file', join(work, 'state.json')]);
    const link = await openDeviceLink(serialConnector(dev.path));
    expect(link.info.arithmetic).toBe('q15');
    await link.setSource({ kind: 'tone', toneHz: 1000, amplitude: 0.5 });
    await new Promise((r) => setTimeout(r, 400));
    const g = await link.setTrims({ gainDb: 1 });
    await new Promise((r) => setTimeout(r, 400));
    await link.close();
    await dev.kill();
    const b = readFileSync(iqFile);
    const iq = new Float32Array(b.buffer, b.byteOffset, b.length / 4);
    const frames = iq.length / 2;
    const zero = imageDbc(iq, 9600, 4800, 1000, 48000); // 0.2–0.3 s: zero trims, settled
    const gain = imageDbc(iq, frames - 4800, 4800, 1000, 48000); // the last 0.1 s: gain trim
    expect(zero).toBeLessThan(-50); // the network was designed for 50 dB over the band
    const lin = 10 ** (g.gainDb / 20);
    expect(gain).toBeCloseTo(20 * Math.log10((lin - 1) / (lin + 1)), 1);
    const st = JSON.parse(readFileSync(join(work, 'state.json'), 'utf8'));
    expect(st.gainDb).toBe(g.gainDb);
  });
});
