import { execFileSync, spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { imageRejectionDb } from '../../src/core/units.js';
import { decodeWav, encodeWav } from '../../src/node/wav.js';
import { dftBinIq } from '../generate/dft.js';
import { kaiserHilbertNetwork, niemitaloNetwork } from '../generate/reference-networks.js';

// Runs the built CLI (npm run build first, as `npm test` does).
const cli = join(__dirname, '../../dist/cli.js');
const dir = mkdtempSync(join(tmpdir(), 'orthotone-render-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
beforeAll(() => {
  if (!existsSync(cli))
    execFileSync('npm', ['run', 'build'], { cwd: join(__dirname, '../..'), stdio: 'ignore' });
});

function render(args: string[]) {
  const r = spawnSync(process.execPath, [cli, 'render', ...args], { encoding: 'utf8' });
  return { code: r.status, out: r.stdout, err: r.stderr };
}

describe('orthotone render', () => {
  const netFile = join(dir, 'fir.json');
  writeFileSync(netFile, JSON.stringify(kaiserHilbertNetwork(511, 12, [2000, 22000], 48000)));

  it('two-tone from a network file: levels, PEP, predicted and read suppression, cautions', () => {
    const out = join(dir, 'two.wav');
    const r = render([
      netFile,
      '--two-tone',
      '6000,9000',
      '--level',
      '-7',
      '--phase-deg',
      '1',
      '--duration',
      '1',
      '--out',
      out,
      '--format',
      'json',
    ]);
    expect(r.code).toBe(0);
    // stdout is the JSON alone; the cautions go to stderr (issue 13: machine output stays clean).
    const json = JSON.parse(r.out);
    // Two equal tones at −7 dBFS: PEP −0.98 dBFS (docs/REFERENCES.md §5: each tone 6.02 dB below PEP).
    expect(json.signalLevels.pepDbfs).toBeCloseTo(-7 + 6.0206, 3);
    for (const t of json.realised.tones) {
      expect(t.wantedDbfs).toBeCloseTo(-7, 2);
      // 1° phase trim alone: 41.183 dB (docs/REFERENCES.md §1); the 511-tap FIR's own error is negligible.
      expect(Math.abs(-t.unwantedDbc - imageRejectionDb(1, Math.PI / 180))).toBeLessThan(0.05);
      expect(Math.abs(t.predictedSuppressionDb - 41.183)).toBeLessThan(0.01);
    }
    expect(r.err).toMatch(/licence/);
    expect(r.err).toMatch(/dummy load/);
    expect(r.out).not.toMatch(/licence/);
    const d = decodeWav(new Uint8Array(require('node:fs').readFileSync(out)));
    expect(d.channels.length).toBe(2);
    expect(d.sampleRate).toBe(48000);
    expect(d.channels[0]!.length).toBe(48000);
    // Read the file independently: the image of the 6 kHz tone in I + jQ.
    const [i, q] = d.channels as [Float32Array, Float32Array];
    const w = dftBinIq(i, q, 4800, 38400, 6000, 48000);
    const u = dftBinIq(i, q, 4800, 38400, -6000, 48000);
    const v = dftBinIq(i, q, 4800, 38400, -9000, 48000); // 9 kHz image, separate bin
    expect(Math.abs(20 * Math.log10(Math.hypot(w.re, w.im) / Math.hypot(u.re, u.im)) - 41.183)).toBeLessThan(
      0.01,
    );
    expect(Math.hypot(v.re, v.im)).toBeGreaterThan(0);
  });

  it('table output with design options; warns (never silently clips) when signal plus trims exceed full scale', () => {
    const out = join(dir, 'hot.wav');
    const r = render([
      '--tone',
      '1000',
      '--level',
      '-1',
      '--gain-db',
      '2',
      '--duration',
      '0.5',
      '--rate',
      '48000',
      '--band',
      '300:3000',
      '--method',
      'allpass',
      '--target',
      '40',
      '--encoding',
      'int16',
      '--out',
      out,
    ]);
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/^network +allpass, band 300-3000 Hz at 48000 Hz/m);
    // Wanted component of I + jQ: (1 + g)/2 of the tone with Q at gain g = 2 dB: −1 + 1.06 dB.
    expect(r.out).toMatch(
      new RegExp(`tone 1000 Hz +wanted ${(-1 + 20 * Math.log10((1 + 10 ** 0.1) / 2)).toFixed(2)} dBFS`),
    );
    expect(r.err).toMatch(/WARNING: signal plus trims exceed full scale: predicted peak 1.00 dBFS/);
    expect(r.err).toMatch(/samples were clipped in the int16 file/);
  });

  it('lower sideband and DC trims: the carrier is where the formula puts it', () => {
    const out = join(dir, 'lsb.wav');
    const net = join(dir, 'ap.json');
    writeFileSync(net, JSON.stringify(niemitaloNetwork(false, 48000)));
    const r = render([
      net,
      '--tone',
      '1000',
      '--level',
      '-6.0206',
      '--sideband',
      'lower',
      '--dc-i',
      '0.0005',
      '--dc-q',
      '0.00025',
      '--duration',
      '1',
      '--out',
      out,
      '--format',
      'json',
    ]);
    expect(r.code).toBe(0);
    const json = JSON.parse(r.out);
    // docs/REFERENCES.md §1: dI = 0.001A, dQ = 0.0005A → −59.031 dBc (A = 0.5).
    expect(json.realised.tones[0].predictedCarrierDbc).toBeCloseTo(-59.031, 3);
    expect(json.realised.carrierDbfs - json.realised.tones[0].wantedDbfs).toBeCloseTo(-59.031, 2);
    expect(json.realised.tones[0].wantedDbfs).toBeCloseTo(-6.02, 2);
  });

  it('input file through the network', () => {
    const inp = join(dir, 'in.wav');
    const x = new Float32Array(48000);
    for (let k = 0; k < x.length; k++) x[k] = 0.25 * Math.cos((2 * Math.PI * 1500 * k) / 48000);
    writeFileSync(inp, encodeWav([x], 48000, 'int24').bytes);
    const r = render([
      '--input',
      inp,
      '--level',
      '-3',
      '--band',
      '300:3000',
      '--method',
      'allpass',
      '--target',
      '40',
      '--out',
      join(dir, 'in-iq.wav'),
    ]);
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/signal +input .*peak -3.00 dBFS/);
    expect(r.out).toMatch(/48000 frames/);
  });

  it('--vectors: the CSV holds the input and exactly the I/Q samples written to the WAV', () => {
    const wav = join(dir, 'vec.wav');
    const csv = join(dir, 'vec.csv');
    const r = render([
      netFile,
      '--tone',
      '1000',
      '--duration',
      '0.05',
      '--phase-deg',
      '1',
      '--out',
      wav,
      '--vectors',
      csv,
    ]);
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/vectors +.*vec\.csv \(2400 rows: n,input,i,q\)/);
    const rows = readFileSync(csv, 'utf8').trim().split('\n');
    expect(rows[0]).toBe('n,input,i,q');
    expect(rows).toHaveLength(2401);
    const { channels } = decodeWav(readFileSync(wav));
    for (const k of [0, 1, 777, 2399]) {
      const [n, x, i, q] = rows[k + 1]!.split(',').map(Number);
      expect(n).toBe(k);
      // 9 significant digits round-trip binary32 exactly (IEEE 754-2019 §5.12.2).
      expect(Math.fround(i!)).toBe(channels[0]![k]);
      expect(Math.fround(q!)).toBe(channels[1]![k]);
      // The default tone level is -6 dBFS (AES17: peak 10^(-6/20)).
      expect(x).toBeCloseTo(10 ** (-6 / 20) * Math.cos((2 * Math.PI * 1000 * k) / 48000), 6);
    }
  });

  it('usage errors: one line, exit 2', () => {
    for (const [args, re] of [
      [['--tone', '1000'], /--out FILE.wav/],
      [['--out', 'x.wav'], /choose a signal/],
      [['--tone', '1000', '--noise', '--out', 'x.wav'], /choose one signal/],
      [['--tone', '1000', '--phase-deg', '50', '--out', 'x.wav'], /--phase-deg 50 degrees is out of range/],
      [['--tone', '1000', '--gain-db', 'abc', '--out', 'x.wav'], /--gain-db "abc" is not a number/],
      [['--tone', '1000', '--sideband', 'both', '--out', 'x.wav'], /--sideband "both"/],
      [[netFile, '--tone', '1000', '--band', '300:3000', '--out', 'x.wav'], /drop the design options/],
    ] as const) {
      const r = render([...args]);
      expect(r.code).toBe(2);
      expect(r.err).toMatch(re);
      expect(r.err.trim().split('\n').length).toBe(1);
    }
  });
});
