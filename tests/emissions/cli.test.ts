// The built CLI as a user runs it: output-filter, emissions (virtual exciter and capture) and verify,
// checked for the interface outside checks rely on (JSON shapes, exit 0 pass / 1 fail / 2 bad input).
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { createProfile } from '../../src/calibrate/profile.js';
import { designNetwork } from '../../src/design/design-network.js';
import { networkToJson } from '../../src/export/network-json.js';
import { profileToJson } from '../../src/export/profile-json.js';
import { cli, writeTestWav } from '../support/cli.js';

const dir = mkdtempSync(join(tmpdir(), 'orthotone-emissions-'));
const net = join(dir, 'net.json');
const prof = join(dir, 'zero.json');
const flt = join(dir, 'filter.json');

beforeAll(() => {
  const network = designNetwork({ sampleRate: 48000, band: [300, 3000], method: 'allpass', targetDb: 60 });
  writeFileSync(net, networkToJson(network));
  writeFileSync(prof, profileToJson(createProfile({ sampleRate: 48000, toneHz: 1000, trims: {} })));
});

describe('orthotone output-filter', () => {
  it('prints the elements in ladder order (kind, value in F/H, g) and --out writes the same document', () => {
    const r = cli([
      'output-filter',
      '--cutoff',
      '16e6',
      '--order',
      '5',
      '--response',
      'chebyshev',
      '--ripple-db',
      '0.1',
      '--carrier-hz',
      '14.2e6',
      '--format',
      'json',
      '--out',
      flt,
    ]);
    expect(r.status).toBe(0);
    const doc = JSON.parse(r.stdout);
    expect(doc.elements.map((e: { kind: string }) => e.kind)).toEqual(['C', 'L', 'C', 'L', 'C']);
    // 0.1 dB, n = 5 (MYJ Table 4.05-2(a)): g1 = 1.1468 → C1 = 1.1468/(2π·16 MHz·50 Ω) = 228.2 pF.
    expect(doc.elements[0].g).toBeCloseTo(1.1468, 4);
    expect(doc.elements[0].value).toBeCloseTo(228.2e-12, 13);
    expect(doc.elements[1].value).toBeCloseTo(682.0e-9, 10);
    expect(JSON.parse(readFileSync(flt, 'utf8'))).toEqual(doc);
    expect(r.stderr).toMatch(/licence/);
  });

  it('bad input exits 2 with one line naming the option', () => {
    const r = cli(['output-filter', '--cutoff', '16e6', '--order', '4', '--response', 'chebyshev']);
    expect(r.status).toBe(2);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(r.stderr).toMatch(/odd order/);
    expect(cli(['output-filter', '--order', '5']).status).toBe(2);
  });
});

describe('orthotone emissions', () => {
  const base = [
    'emissions',
    '--preset',
    'precision',
    '--network',
    net,
    '--profile',
    prof,
    '--carrier-hz',
    '14.2e6',
  ];

  it('without a filter the mixer 3rd response (−9.54 dBc) fails 43 dB: exit 1; with the filter every item passes: exit 0', () => {
    const a = cli([...base, '--format', 'json']);
    expect(a.status).toBe(1);
    const ja = JSON.parse(a.stdout);
    expect(ja.pass).toBe(false);
    for (const i of ja.items) {
      expect(typeof i.name).toBe('string');
      expect(typeof i.frequencyHz).toBe('number');
      expect(typeof i.levelDbc).toBe('number');
      expect(typeof i.limitDbc).toBe('number');
      expect(typeof i.pass).toBe('boolean');
    }
    const h3 = ja.items.find((i: { name: string }) => i.name === 'LO×3 opposite sideband');
    expect(h3.levelDbc).toBeCloseTo(-9.54, 1);
    expect(h3).toMatchObject({ limitDbc: -43, pass: false, domain: 'spurious' });
    expect(a.stderr).toMatch(/dummy load/);

    const b = cli([...base, '--filter', flt, '--format', 'json']);
    expect(b.status).toBe(0);
    const jb = JSON.parse(b.stdout);
    expect(jb.pass).toBe(true);
    const h3f = jb.items.find((i: { name: string }) => i.name === 'LO×3 opposite sideband');
    // The E-series-free 0.1 dB n = 5 filter: 48.7 dB at 42.6 MHz less 0.05 dB at the carrier.
    expect(h3f.levelDbc).toBeCloseTo(-9.54 - 48.6, 0);
  });

  it('a capture: carrier and opposite sideband measured, LO harmonics predicted; --limit-dbc applies to all', () => {
    const fs = 48000;
    const len = 65536;
    const i = new Float64Array(len);
    const q = new Float64Array(len);
    // Invented bench capture: wanted tone 0.5 at +1 kHz, opposite sideband −45 dBc, carrier −50 dBc.
    const o = 0.5 * 10 ** (-45 / 20);
    const c = 0.5 * 10 ** (-50 / 20);
    for (let n = 0; n < len; n++) {
      const w = (2 * Math.PI * 1000 * n) / fs;
      i[n] = 0.5 * Math.cos(w) + o * Math.cos(w) + c;
      q[n] = 0.5 * Math.sin(w) - o * Math.sin(w);
    }
    const wav = join(dir, 'cap.wav');
    writeTestWav(wav, [i, q], fs);
    const r = cli([
      'emissions',
      '--capture',
      wav,
      '--carrier-hz',
      '14.2e6',
      '--filter',
      flt,
      '--format',
      'json',
    ]);
    expect(r.status).toBe(0);
    const j = JSON.parse(r.stdout);
    const get = (name: string) => j.items.find((x: { name: string }) => x.name === name);
    expect(get('carrier').levelDbc).toBeCloseTo(-50, 0);
    expect(get('opposite sideband').levelDbc).toBeCloseTo(-45, 0);
    expect(get('opposite sideband').frequencyHz).toBe(14.2e6 - 1000);
    // The wrong sideband or tone is refused (exit 2) rather than read as a product at the floor.
    const wrong = cli(['emissions', '--capture', wav, '--carrier-hz', '14.2e6', '--sideband', 'lower']);
    expect(wrong.status).toBe(2);
    expect(wrong.stderr).toMatch(/--sideband upper/);
    expect(cli(['emissions', '--capture', wav, '--carrier-hz', '14.2e6', '--tone', '1500']).status).toBe(2);
    const u = cli([
      'emissions',
      '--capture',
      wav,
      '--carrier-hz',
      '14.2e6',
      '--filter',
      flt,
      '--limit-dbc',
      '-47',
      '--format',
      'json',
    ]);
    expect(u.status).toBe(1);
    const ju = JSON.parse(u.stdout);
    expect(ju.items.filter((x: { pass: boolean }) => !x.pass).map((x: { name: string }) => x.name)).toEqual([
      'opposite sideband',
    ]);
  });

  it('a two-tone capture: IMD3 30 dB below each tone is 36.02 dB below PEP and 33.01 dB below the mean power', () => {
    // Two equal tones: each is 6.02 dB below PEP, and the mean power is PEP/2 (Krauss, Bostian & Raab,
    // Solid State Radio Engineering, p. 509; docs/REFERENCES.md §5). Invented capture: tones 0.25 at 700 and
    // 1900 Hz, 3rd-order products at −500 and 3100 Hz, 30 dB below one tone.
    const fs = 48000;
    const len = 65536;
    const i = new Float64Array(len);
    const q = new Float64Array(len);
    const p = 0.25 * 10 ** (-30 / 20);
    for (let n = 0; n < len; n++) {
      for (const [f, a] of [
        [700, 0.25],
        [1900, 0.25],
        [-500, p],
        [3100, p],
      ] as const) {
        const w = (2 * Math.PI * f * n) / fs;
        i[n]! += a * Math.cos(w);
        q[n]! += a * Math.sin(w);
      }
    }
    const wav = join(dir, 'two.wav');
    writeTestWav(wav, [i, q], fs);
    const args = [
      'emissions',
      '--capture',
      wav,
      '--two-tone',
      '700,1900',
      '--carrier-hz',
      '14.2e6',
      '--format',
      'json',
    ];
    const pep = JSON.parse(cli([...args, '--limit-dbc', '-30']).stdout);
    const imd3 = pep.items.filter((x: { name: string }) => x.name.startsWith('IMD3'));
    expect(imd3.map((x: { frequencyHz: number }) => x.frequencyHz).sort()).toEqual([
      14.2e6 - 500,
      14.2e6 + 3100,
    ]);
    for (const x of imd3) expect(x.levelDbc).toBeCloseTo(-36.02, 1);
    const mean = JSON.parse(cli([...args, '--limit-dbc', '-30', '--limit-reference', 'mean']).stdout);
    for (const x of mean.items.filter((y: { name: string }) => y.name.startsWith('IMD3'))) {
      expect(x.levelDbc).toBeCloseTo(-33.01, 1);
    }
  });

  it('bad input exits 2: no carrier, both sources, unknown rule set', () => {
    for (const args of [
      ['emissions', '--preset', 'precision', '--network', net, '--profile', prof],
      [...base, '--capture', 'x.wav'],
      [...base, '--rules', 'nowhere'],
      [...base, '--filter', net],
    ]) {
      const r = cli(args);
      expect(r.status, args.join(' ')).toBe(2);
      expect(r.stderr.trim().split('\n').at(-1)).toMatch(/^orthotone: /);
    }
  });
});

describe('orthotone verify', () => {
  it('the calibrated virtual exciter holds (exit 0); another device at the same trims has drifted (exit 1)', () => {
    const cal = join(dir, 'cal.json');
    expect(cli(['calibrate', '--simulate', '--network', net, '--profile', cal]).status).toBe(0);
    const vr = join(dir, 'verify.html');
    const same = cli(['verify', '--profile', cal, '--simulate', '--format', 'json', '--report', vr]);
    expect(same.status).toBe(0);
    const html = readFileSync(vr, 'utf8');
    expect(html).toContain('Verify run');
    expect(html).toContain('data-plot="convergence"');
    expect(JSON.parse(same.stdout).recalibrate).toBe(false);
    const other = cli(['verify', '--profile', cal, '--simulate', '--device-seed', '712', '--format', 'json']);
    expect(other.status).toBe(1);
    const j = JSON.parse(other.stdout);
    expect(j.recalibrate).toBe(true);
    expect(j.quantities.some((q: { changeDb: number }) => q.changeDb > 3)).toBe(true);
  });
});
