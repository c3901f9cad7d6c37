// Runs the built CLI as a user would: an I/Q file through the virtual exciter, read back by measure.
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { imageRejectionDb } from '../../src/core/units.js';
import { homebrewBenchDevice } from '../../src/simulate/model.js';
import { predictedSuppression } from '../../src/simulate/response.js';
import { cli, writeTestWav } from '../support/cli.js';

const dir = mkdtempSync(join(tmpdir(), 'orthotone-simulate-'));
const fs = 48000;

function toneFile(name: string, hz: number, a: number, len = 65536 + 4096): string {
  const i = new Float64Array(len);
  const q = new Float64Array(len);
  for (let n = 0; n < len; n++) {
    i[n] = a * Math.cos((2 * Math.PI * hz * n) / fs);
    q[n] = a * Math.sin((2 * Math.PI * hz * n) / fs);
  }
  const p = join(dir, name);
  writeTestWav(p, [i, q], fs);
  return p;
}

describe('orthotone simulate', () => {
  it('the homebrew bench: measure reads back what the model predicts (about 44 dB sideband, 34 dB carrier)', () => {
    const inp = toneFile('tone1k.wav', 1000, 1 - 2 ** -15);
    const out = join(dir, 'rx.wav');
    const s = cli(['simulate', inp, '--out', out, '--format', 'json']);
    expect(s.status).toBe(0);
    const info = JSON.parse(s.stdout);
    expect(info.model).toEqual(JSON.parse(JSON.stringify(homebrewBenchDevice())));
    const m = JSON.parse(cli(['measure', out, '--tone', '1000', '--iq', '--format', 'json']).stdout);
    const [p] = predictedSuppression(homebrewBenchDevice(), [1000]);
    expect(Math.abs(m.sidebandSuppressionDb - p!.sidebandDb)).toBeLessThan(0.1);
    expect(Math.abs(m.carrierSuppressionDb - p!.carrierDb)).toBeLessThan(0.1);
    expect(m.sidebandSuppressionDb).toBeGreaterThan(43.5);
    expect(m.carrierSuppressionDb).toBeLessThan(34.6);
  });
  it('--preset ideal --offset: receiver audio of an ideal device shows the input imbalance only', () => {
    // Input with a deliberate 0.2 dB gain imbalance on Q, through an ideal exciter, to a receiver
    // whose audio puts the carrier at 1500 Hz.
    const len = 65536 + 4096;
    const i = new Float64Array(len);
    const q = new Float64Array(len);
    const g = 10 ** (0.2 / 20);
    for (let n = 0; n < len; n++) {
      i[n] = 0.5 * Math.cos((2 * Math.PI * 700 * n) / fs);
      q[n] = 0.5 * g * Math.sin((2 * Math.PI * 700 * n) / fs);
    }
    const inp = join(dir, 'imb.wav');
    writeTestWav(inp, [i, q], fs);
    const out = join(dir, 'audio.wav');
    expect(cli(['simulate', inp, '--out', out, '--preset', 'ideal', '--offset', '1500']).status).toBe(0);
    const m = JSON.parse(
      cli(['measure', out, '--tone', '700', '--offset', '1500', '--format', 'json']).stdout,
    );
    expect(m.sidebandSuppressionDb).toBeCloseTo(imageRejectionDb(g, 0), 1);
  });
  it('bad options: unknown preset, mono input, missing --out', () => {
    const inp = toneFile('t.wav', 1000, 0.5, 4096);
    expect(cli(['simulate', inp, '--out', join(dir, 'x.wav'), '--preset', 'nope']).stderr).toMatch(
      /--preset "nope" is not known/,
    );
    expect(cli(['simulate', inp]).stderr).toMatch(/needs --out/);
    const r = cli(['simulate', inp, '--out', join(dir, 'x.wav'), '--floor', '5']);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/--floor 5 dBc\/Hz is out of range/);
  });
});
