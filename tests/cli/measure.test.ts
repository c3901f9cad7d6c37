// Runs the built CLI (npm test builds first) as a user would: WAV files in, table or JSON out.
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { cli, writeTestWav } from '../support/cli.js';

const dir = mkdtempSync(join(tmpdir(), 'orthotone-measure-'));
const fs = 48000;

function wav(name: string, channels: Float64Array[], depth = '32f'): string {
  const data =
    depth === '16' ? channels.map((c) => Int16Array.from(c, (x) => Math.round(x * 32767))) : channels;
  const p = join(dir, name);
  writeTestWav(p, data, fs, depth);
  return p;
}

/** I = A cos ωt + dI, Q = g·A·sin(ωt + φ) + dQ (docs/REFERENCES.md §1). */
function iqFile(
  name: string,
  len: number,
  hz: number,
  gDb: number,
  phDeg: number,
  dI: number,
  dQ: number,
  depth = '32f',
) {
  const i = new Float64Array(len);
  const q = new Float64Array(len);
  const g = 10 ** (gDb / 20);
  for (let n = 0; n < len; n++) {
    const w = (2 * Math.PI * hz * n) / fs;
    i[n] = 0.5 * Math.cos(w) + dI;
    q[n] = g * 0.5 * Math.sin(w + (phDeg * Math.PI) / 180) + dQ;
  }
  return wav(name, [i, q], depth);
}

describe('orthotone measure', () => {
  it('--tone --iq --format json: 1° phase error reads 41.183 dB, carrier −59.031 dBc (docs/REFERENCES.md §1)', () => {
    const f = iqFile('one-degree.wav', 65536, 1000, 0, 1, 0.0005, 0.00025);
    const r = cli(['measure', f, '--tone', '1000', '--iq', '--format', 'json']);
    expect(r.status).toBe(0);
    const j = JSON.parse(r.stdout);
    expect(j.sidebandSuppressionDb).toBeCloseTo(41.183, 2);
    expect(j.carrierDbc).toBeCloseTo(-59.031, 1);
    expect(j.wanted.levelDbfs).toBeCloseTo(-6.02, 2);
  });
  it('reads 16-bit files too, and prints a table with the cautions', () => {
    const f = iqFile('gain16.wav', 65536, 700, 0.1, 0, 0, 0, '16');
    const r = cli(['measure', f, '--tone', '700', '--iq']);
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/opposite-sideband suppression\s+44\.[78]\d dB/);
    expect(r.stdout).toMatch(/dummy load/);
  });
  it('--offset: receiver audio with the carrier at 1500 Hz', () => {
    const len = 65536;
    const x = new Float64Array(len);
    for (let n = 0; n < len; n++) {
      const t = n / fs;
      x[n] =
        0.5 * Math.sin(2 * Math.PI * 2300 * t) +
        0.005 * Math.sin(2 * Math.PI * 700 * t) +
        0.001 * Math.sin(2 * Math.PI * 1500 * t);
    }
    const r = cli([
      'measure',
      wav('audio.wav', [x]),
      '--tone',
      '800',
      '--offset',
      '1500',
      '--format',
      'json',
    ]);
    expect(r.status).toBe(0);
    const j = JSON.parse(r.stdout);
    expect(j.sidebandSuppressionDb).toBeCloseTo(40, 2);
    expect(j.carrierSuppressionDb).toBeCloseTo(53.98, 2);
  });
  it('--two-tone: PEP and 3rd-order products of a cubic', () => {
    const len = 65536;
    const x = new Float64Array(len);
    for (let n = 0; n < len; n++) {
      const s = 0.25 * (Math.sin((2 * Math.PI * 700 * n) / fs) + Math.sin((2 * Math.PI * 1900 * n) / fs));
      x[n] = s - 0.3 * s ** 3;
    }
    const r = cli(['measure', wav('two.wav', [x]), '--two-tone', '700,1900', '--format', 'json']);
    expect(r.status).toBe(0);
    const j = JSON.parse(r.stdout);
    // (3/4)k·a³ against a − (9/4)k·a³ with a = 0.25, k = 0.3 (expansion of (sin A + sin B)³).
    expect(j.imd3Dbc).toBeCloseTo(
      20 * Math.log10((0.75 * 0.3 * 0.25 ** 3) / (0.25 - 2.25 * 0.3 * 0.25 ** 3)),
      2,
    );
    expect(j.pepDbfs - j.toneDbfs).toBeCloseTo(6.02, 2);
  });
  it('bad input: one-line messages and exit status 2', () => {
    const f = iqFile('short.wav', 2000, 1000, 0, 0, 0, 0);
    const none = cli(['measure', f, '--tone', '1000']);
    expect(none.status).toBe(2);
    expect(none.stderr).toMatch(/--tone needs --iq .* or --offset HZ/);
    const short = cli(['measure', f, '--tone', '1000', '--iq', '--resolution', '1']);
    expect(short.status).toBe(2);
    expect(short.stderr).toMatch(/capture of 2000 samples .* needs at least 48000 samples \(1 s\)/);
    const nyq = cli(['measure', f, '--tones', '30000', '--iq']);
    expect(nyq.status).toBe(2);
    expect(nyq.stderr).toMatch(/--tones 30000 Hz must lie between -24000 and 24000 Hz/);
    const close = cli(['measure', f, '--tones', '1000,1010', '--iq']);
    expect(close.status).toBe(2);
    expect(close.stderr).toMatch(/too short .* needs at least 38400 samples/);
    expect(cli(['measure', join(dir, 'missing.wav'), '--tone', '1', '--iq']).stderr).toMatch(
      /cannot read WAV file/,
    );
  });
});
